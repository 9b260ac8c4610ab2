#include "identify/output_error.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <sstream>

#include <ceres/ceres.h>

#include "lti/error.h"

namespace lw {
namespace {

// Full index of dynamic parameter i (see DynamicCount): the ones after the gain, except that the
// dead time is always the structure's last parameter.
int FullIndexOfDynamic(Structure s, int i) {
  return i == DynamicCount(s) - 1 ? DeadTimeIndex(s) : i + 1;
}

// A non-owning callable row(index, residual, jacobian_row_or_null), so the kernels are
// instantiated once rather than once per caller.
class RowSink {
 public:
  template <typename F>
  RowSink(F& f)  // NOLINT: implicit by design
      : obj_(&f), call_([](void* o, size_t i, double r, const double* j) {
          (*static_cast<F*>(o))(i, r, j);
        }) {}
  void operator()(size_t i, double r, const double* j) const { call_(obj_, i, r, j); }

 private:
  void* obj_;
  void (*call_)(void*, size_t, double, const double*);
};

// The kernel for the structures whose dynamic parameter count is D.
template <int D, typename T, typename Emit>
void RunKernelD(Structure s, const T* dyn, const SampleGrid& grid, std::span<const double> v,
                bool zero_initial, Emit&& emit) {
  if constexpr (D == 2) {
    if (s == Structure::kFopdt) {
      kernel::Run<Structure::kFopdt>(dyn, grid, v, zero_initial, emit);
    } else {
      kernel::Run<Structure::kIntegrating>(dyn, grid, v, zero_initial, emit);
    }
  } else {
    if (s == Structure::kSopdt) {
      kernel::Run<Structure::kSopdt>(dyn, grid, v, zero_initial, emit);
    } else if (s == Structure::kSopdtZero) {
      kernel::Run<Structure::kSopdtZero>(dyn, grid, v, zero_initial, emit);
    } else {
      kernel::Run<Structure::kUnderdamped>(dyn, grid, v, zero_initial, emit);
    }
  }
}

// Calls row(index, residual, jacobian_row_or_null) for every fitted sample.
template <int D>
void ForEachRow(const OutputErrorProblem& pb, std::span<const double> x, bool with_jacobian,
                const RowSink& row) {
  const Structure s = pb.structure;
  const int ps = ParameterCount(s);
  const int p = ps + 2;
  const double k_gain = x[0];
  const double y0 = x[ps];
  const double drift = x[ps + 1];
  const double t0 = pb.t.empty() ? 0.0 : pb.t[0];
  const bool has_zero = s == Structure::kSopdtZero;
  const double tau2 = has_zero ? x[2] : 1.0;
  const double tauz = has_zero ? x[3] : 0.0;
  const SampleGrid grid = MakeSampleGrid(pb.t);
  auto sqrt_weight = [&](size_t k) { return pb.weight.empty() ? 1.0 : std::sqrt(pb.weight[k]); };
  int dyn_index[D];
  for (int i = 0; i < D; ++i) dyn_index[i] = FullIndexOfDynamic(s, i);
  if (!with_jacobian) {
    double dyn[D];
    for (int i = 0; i < D; ++i) dyn[i] = x[FullIndexOfDynamic(s, i)];
    double w0 = 0.0, w1 = 0.0;
    OutputWeights(s, tau2, tauz, w0, w1);
    RunKernelD<D>(s, dyn, grid, pb.v, pb.zero_initial, [&](size_t k, double x1, double x2) {
      if (k < pb.first_residual) return;
      double yhat = y0 + drift * (pb.t[k] - t0) + k_gain * (w0 * x1 + w1 * x2);
      row(k - pb.first_residual, sqrt_weight(k) * (yhat - pb.y[k]), nullptr);
    });
    return;
  }
  using J = ceres::Jet<double, D>;
  J dyn[D];
  for (int i = 0; i < D; ++i) dyn[i] = J(x[FullIndexOfDynamic(s, i)], i);
  J w0, w1;
  OutputWeights(s, has_zero ? dyn[1] : J(1.0), J(tauz), w0, w1);
  std::vector<double> jrow(p, 0.0);
  RunKernelD<D>(s, dyn, grid, pb.v, pb.zero_initial, [&](size_t k, const J& x1, const J& x2) {
    if (k < pb.first_residual) return;
    const double sw = sqrt_weight(k);
    J shape = w0 * x1 + w1 * x2;
    double yhat = y0 + drift * (pb.t[k] - t0) + k_gain * shape.a;
    jrow[0] = sw * shape.a;
    for (int i = 0; i < D; ++i) jrow[dyn_index[i]] = sw * k_gain * shape.v[i];
    if (has_zero) jrow[3] = sw * k_gain * (x1.a - x2.a) / tau2;
    jrow[ps] = sw;
    jrow[ps + 1] = sw * (pb.t[k] - t0);
    row(k - pb.first_residual, sw * (yhat - pb.y[k]), jrow.data());
  });
}

void Rows(const OutputErrorProblem& pb, std::span<const double> x, bool with_jacobian,
          const RowSink& row) {
  if (static_cast<int>(x.size()) != FullParameterCount(pb.structure)) {
    throw UsageError("output-error problem: parameter vector has the wrong size");
  }
  if (DynamicCount(pb.structure) == 2) {
    ForEachRow<2>(pb, x, with_jacobian, row);
  } else {
    ForEachRow<3>(pb, x, with_jacobian, row);
  }
}

size_t ResidualCount(const OutputErrorProblem& pb) {
  return pb.t.size() > pb.first_residual ? pb.t.size() - pb.first_residual : 0;
}

// The residual block Ceres sees: only the free parameters form its parameter block (held ones
// are filled in from `base`), so Ceres stores no Jacobian columns for them.
class OutputErrorCost : public ceres::CostFunction {
 public:
  OutputErrorCost(const OutputErrorProblem& pb, std::vector<double> base, std::vector<int> free)
      : pb_(pb), base_(std::move(base)), free_(std::move(free)) {
    for (size_t c = 0; c < free_.size(); ++c) prefix_ = prefix_ && free_[c] == static_cast<int>(c);
    set_num_residuals(static_cast<int>(ResidualCount(pb)));
    mutable_parameter_block_sizes()->push_back(static_cast<int>(free_.size()));
  }
  bool Evaluate(double const* const* params, double* residuals, double** jacobians) const override {
    std::vector<double> x = base_;
    for (size_t c = 0; c < free_.size(); ++c) x[free_[c]] = params[0][c];
    if (!IsPhysical(pb_.structure,
                    std::span<const double>(x).first(ParameterCount(pb_.structure)))) {
      return false;
    }
    double* jac = (jacobians != nullptr) ? jacobians[0] : nullptr;
    bool finite = true;
    const size_t m = free_.size();
    auto sink = [&](size_t i, double r, const double* jrow) {
      residuals[i] = r;
      finite = finite && std::isfinite(r);
      if (jrow && prefix_) {
        std::copy_n(jrow, m, jac + i * m);  // the free parameters lead: one contiguous copy
      } else if (jrow) {
        for (size_t c = 0; c < m; ++c) jac[i * m + c] = jrow[free_[c]];
      }
    };
    Rows(pb_, x, jac != nullptr, sink);
    return finite;
  }

 private:
  const OutputErrorProblem& pb_;
  std::vector<double> base_;
  std::vector<int> free_;
  bool prefix_ = true;  // free_ is 0, 1, ..., m - 1
};

// r = R dx with a constant Jacobian R (R'R = J'J): the fit's linearisation compressed to
// p rows, so Ceres' covariance of it is (J'J)^-1 without an N x p matrix.
class CompressedCost : public ceres::CostFunction {
 public:
  explicit CompressedCost(Eigen::MatrixXd r) : r_(std::move(r)) {
    set_num_residuals(static_cast<int>(r_.rows()));
    mutable_parameter_block_sizes()->push_back(static_cast<int>(r_.cols()));
  }
  bool Evaluate(double const* const* params, double* residuals, double** jacobians) const override {
    const Eigen::Index m = r_.cols();
    Eigen::Map<const Eigen::VectorXd> x(params[0], m);
    Eigen::Map<Eigen::VectorXd>(residuals, r_.rows()) = r_ * x;
    if (jacobians && jacobians[0]) {
      Eigen::Map<Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>>(
          jacobians[0], r_.rows(), m) = r_;
    }
    return true;
  }

 private:
  Eigen::MatrixXd r_;
};

std::vector<int> FreeIndices(const std::vector<bool>& fixed) {
  std::vector<int> free;
  for (int i = 0; i < static_cast<int>(fixed.size()); ++i) {
    if (!fixed[i]) free.push_back(i);
  }
  return free;
}

}  // namespace

std::vector<std::string> FullParameterNames(Structure s) {
  std::vector<std::string> names = ParameterNames(s);
  names.push_back("output_offset");
  names.push_back("output_drift");
  return names;
}

void EvaluateOutputError(const OutputErrorProblem& problem, std::span<const double> x,
                         double* residuals, double* jacobian) {
  const int p = FullParameterCount(problem.structure);
  auto sink = [&](size_t i, double r, const double* jrow) {
    residuals[i] = r;
    if (jrow) std::copy(jrow, jrow + p, jacobian + i * static_cast<size_t>(p));
  };
  Rows(problem, x, jacobian != nullptr, sink);
}

std::vector<double> PredictOutput(const OutputErrorProblem& problem, std::span<const double> x) {
  OutputErrorProblem pb = problem;
  std::vector<double> zeros(problem.t.size(), 0.0);
  pb.y = zeros;
  pb.weight = {};
  pb.first_residual = 0;
  std::vector<double> yhat(problem.t.size());
  auto sink = [&](size_t i, double r, const double*) { yhat[i] = r; };
  Rows(pb, x, false, sink);
  return yhat;
}

Eigen::MatrixXd NormalMatrix(const OutputErrorProblem& problem, std::span<const double> x) {
  const int p = FullParameterCount(problem.structure);
  Eigen::MatrixXd jtj = Eigen::MatrixXd::Zero(p, p);
  auto sink = [&](size_t, double, const double* jrow) {
    Eigen::Map<const Eigen::VectorXd> row(jrow, p);
    jtj.selfadjointView<Eigen::Lower>().rankUpdate(row);
  };
  Rows(problem, x, true, sink);
  return jtj.selfadjointView<Eigen::Lower>();
}

SolveReport SolveOutputError(const OutputErrorProblem& problem, std::vector<double> start,
                             const std::vector<bool>& fixed, const std::vector<double>& lower,
                             const std::vector<double>& upper, const SolveOptions& options) {
  const int p = FullParameterCount(problem.structure);
  if (static_cast<int>(start.size()) != p || static_cast<int>(fixed.size()) != p ||
      static_cast<int>(lower.size()) != p || static_cast<int>(upper.size()) != p) {
    throw UsageError("output-error solve: start, fixed and bounds must have " + std::to_string(p) +
                     " entries");
  }
  if (problem.y.size() != problem.t.size() || problem.v.size() != problem.t.size() ||
      (!problem.weight.empty() && problem.weight.size() != problem.t.size())) {
    throw UsageError("output-error solve: t, v, y (and weight) must have the same length");
  }
  auto begin = std::chrono::steady_clock::now();
  SolveReport report;
  report.x = std::move(start);
  report.residuals = ResidualCount(problem);
  report.free_parameters = static_cast<int>(std::count(fixed.begin(), fixed.end(), false));

  const std::vector<int> free = FreeIndices(fixed);
  if (free.empty()) throw UsageError("output-error solve: every parameter is fixed");
  std::vector<double> xf, lf, uf;
  for (int i : free) {
    xf.push_back(report.x[i]);
    lf.push_back(lower[i]);
    uf.push_back(upper[i]);
  }
  CeresRun run = RunCeres(new OutputErrorCost(problem, report.x, free), xf,
                          std::vector<bool>(free.size(), false), lf, uf, options, report.residuals);
  for (size_t c = 0; c < free.size(); ++c) report.x[free[c]] = xf[c];
  report.rss = run.rss;
  report.iterations = run.iterations;
  report.converged = run.converged;
  report.termination = run.termination;
  if (options.compute_covariance && run.usable) {
    ComputeOutputErrorCovariance(problem, fixed, report);
  }
  report.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - begin).count();
  return report;
}

void SolveLinearParameters(const OutputErrorProblem& problem, const std::vector<bool>& fixed,
                           std::vector<double>& x) {
  const Structure s = problem.structure;
  const int lin[3] = {0, OffsetIndex(s), DriftIndex(s)};
  std::vector<int> free_lin;
  for (int i : lin) {
    if (!fixed[i]) free_lin.push_back(i);
  }
  if (free_lin.empty() || problem.t.size() <= problem.first_residual) return;
  std::vector<double> unit = x;
  unit[0] = 1.0;
  unit[OffsetIndex(s)] = 0.0;
  unit[DriftIndex(s)] = 0.0;
  std::vector<double> shape = PredictOutput(problem, unit);
  const size_t n = problem.t.size() - problem.first_residual;
  const int m = static_cast<int>(free_lin.size());
  Eigen::MatrixXd a(n, m);
  Eigen::VectorXd b(n);
  for (size_t r = 0; r < n; ++r) {
    const size_t k = r + problem.first_residual;
    const double sw = problem.weight.empty() ? 1.0 : std::sqrt(problem.weight[k]);
    double known = 0.0;
    for (int c = 0, col = 0; c < 3; ++c) {
      const int i = lin[c];
      const double basis = c == 0 ? shape[k] : c == 1 ? 1.0 : problem.t[k] - problem.t[0];
      if (fixed[i]) {
        known += x[i] * basis;
      } else {
        a(static_cast<Eigen::Index>(r), col++) = sw * basis;
      }
    }
    b[static_cast<Eigen::Index>(r)] = sw * (problem.y[k] - known);
  }
  Eigen::VectorXd sol = a.colPivHouseholderQr().solve(b);
  for (int c = 0; c < m; ++c) {
    if (std::isfinite(sol[c])) x[free_lin[c]] = sol[c];
  }
}

SolveReport SolveMultiStart(const OutputErrorProblem& problem,
                            const std::vector<std::vector<double>>& starts,
                            const std::vector<bool>& fixed, const std::vector<double>& lower,
                            const std::vector<double>& upper, const SolveOptions& options) {
  if (starts.empty()) throw UsageError("multi-start solve: no starting values");
  auto begin = std::chrono::steady_clock::now();
  SolveOptions quiet = options;
  quiet.compute_covariance = false;
  SolveReport best;
  bool have = false;
  for (const auto& given : starts) {
    std::vector<double> start = given;
    SolveLinearParameters(problem, fixed, start);
    for (size_t i = 0; i < start.size(); ++i) start[i] = std::clamp(start[i], lower[i], upper[i]);
    SolveReport r = SolveOutputError(problem, start, fixed, lower, upper, quiet);
    if (!std::isfinite(r.rss)) continue;
    if (!have || r.rss < best.rss) {
      best = std::move(r);
      have = true;
    }
  }
  if (!have) best = SolveOutputError(problem, starts.front(), fixed, lower, upper, quiet);
  if (options.compute_covariance) ComputeOutputErrorCovariance(problem, fixed, best);
  best.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - begin).count();
  return best;
}

void ComputeOutputErrorCovariance(const OutputErrorProblem& problem, const std::vector<bool>& fixed,
                                  SolveReport& report) {
  const Structure s = problem.structure;
  const int p = FullParameterCount(s);
  const int dof = static_cast<int>(report.residuals) - report.free_parameters;
  report.covariance = Eigen::MatrixXd::Zero(p, p);
  report.covariance_ok = false;
  report.rank_deficiency.clear();
  if (dof <= 0) {
    report.rank_deficiency = "there are no more fitted samples (" +
                             std::to_string(report.residuals) + ") than free parameters (" +
                             std::to_string(report.free_parameters) + ")";
    return;
  }
  const double s2 = report.rss / dof;
  const Eigen::MatrixXd jtj = NormalMatrix(problem, report.x);
  report.rank_deficiency = DescribeRankDeficiency(jtj, fixed, FullParameterNames(s));
  if (!report.rank_deficiency.empty()) return;
  // Ceres' covariance of the compressed linearisation R (R'R = J'J of the free parameters,
  // R = Lambda^(1/2) V' from the eigen-decomposition), which equals (J'J)^-1.
  const std::vector<int> free = FreeIndices(fixed);
  const int m = static_cast<int>(free.size());
  Eigen::MatrixXd nf(m, m);
  for (int a = 0; a < m; ++a) {
    for (int b = 0; b < m; ++b) nf(a, b) = jtj(free[a], free[b]);
  }
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(nf);
  Eigen::MatrixXd r =
      eig.eigenvalues().cwiseMax(0.0).cwiseSqrt().asDiagonal() * eig.eigenvectors().transpose();
  Eigen::MatrixXd unscaled;
  std::vector<double> origin(m, 0.0);
  report.covariance_ok =
      CeresCovariance(new CompressedCost(r), origin, std::vector<bool>(m, false), unscaled);
  if (report.covariance_ok) {
    for (int a = 0; a < m; ++a) {
      for (int b = 0; b < m; ++b) report.covariance(free[a], free[b]) = unscaled(a, b) * s2;
    }
  } else {
    report.rank_deficiency = "the covariance is rank-deficient (Ceres dense SVD)";
  }
}

}  // namespace lw
