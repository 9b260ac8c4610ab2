#include "identify/output_error.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
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

// Calls row(index, residual, jacobian_row_or_null) for every fitted sample of structure S. The
// Jacobian row has the full layout (FullParameterCount entries).
template <Structure S, typename Sink>
[[gnu::flatten]] void ForEachRowOf(const OutputErrorProblem& pb, const SampleGrid& grid,
                                   std::span<const double> x, bool with_jacobian, Sink& row) {
  constexpr int D = DynamicCount(S);
  constexpr bool kZero = S == Structure::kSopdtZero;
  // y = K x1 (fopdt, underdamped) or K x2 (sopdt, integrating); sopdt-zero weights both.
  constexpr bool kFirstState = S == Structure::kFopdt || S == Structure::kUnderdamped;
  const int ps = ParameterCount(S);
  const double k_gain = x[0];
  const double y0 = x[ps];
  const double drift = x[ps + 1];
  const double t0 = pb.t.empty() ? 0.0 : pb.t[0];
  const double tau2 = kZero ? x[2] : 1.0;
  const double tauz = kZero ? x[3] : 0.0;
  const size_t first = pb.first_residual;
  const bool weighted = !pb.weight.empty();
  auto sqrt_weight = [&](size_t k) { return weighted ? std::sqrt(pb.weight[k]) : 1.0; };
  int dyn_index[D];
  for (int i = 0; i < D; ++i) dyn_index[i] = FullIndexOfDynamic(S, i);
  if (!with_jacobian) {
    double dyn[D];
    for (int i = 0; i < D; ++i) dyn[i] = x[dyn_index[i]];
    double w0 = 0.0, w1 = 0.0;
    OutputWeights(S, tau2, tauz, w0, w1);
    kernel::Run<S>(dyn, grid, pb.v, pb.zero_initial, [&](size_t k, double x1, double x2) {
      if (k < first) return;
      const double shape = kZero ? w0 * x1 + w1 * x2 : (kFirstState ? x1 : x2);
      const double yhat = y0 + drift * (pb.t[k] - t0) + k_gain * shape;
      row(k - first, sqrt_weight(k) * (yhat - pb.y[k]), static_cast<const double*>(nullptr));
    });
    return;
  }
  using J = ceres::Jet<double, D>;
  J dyn[D];
  for (int i = 0; i < D; ++i) dyn[i] = J(x[dyn_index[i]], i);
  J w0, w1;
  OutputWeights(S, kZero ? dyn[1] : J(1.0), J(tauz), w0, w1);
  double jrow[kMaxFullParameters] = {};
  kernel::Run<S>(dyn, grid, pb.v, pb.zero_initial, [&](size_t k, const J& x1, const J& x2) {
    if (k < first) return;
    const double sw = sqrt_weight(k);
    auto emit = [&](const J& shape) {
      const double yhat = y0 + drift * (pb.t[k] - t0) + k_gain * shape.a;
      jrow[0] = sw * shape.a;
      for (int i = 0; i < D; ++i) jrow[dyn_index[i]] = sw * k_gain * shape.v[i];
      if constexpr (kZero) jrow[3] = sw * k_gain * (x1.a - x2.a) / tau2;
      jrow[ps] = sw;
      jrow[ps + 1] = sw * (pb.t[k] - t0);
      row(k - first, sw * (yhat - pb.y[k]), static_cast<const double*>(jrow));
    };
    if constexpr (kZero) {
      emit(w0 * x1 + w1 * x2);
    } else {
      emit(kFirstState ? x1 : x2);
    }
  });
}

// Every fitted row on a grid made once by the caller (the grid scan is O(N)).
template <typename Sink>
void Rows(const OutputErrorProblem& pb, const SampleGrid& grid, std::span<const double> x,
          bool with_jacobian, Sink& row) {
  if (static_cast<int>(x.size()) != FullParameterCount(pb.structure)) {
    throw UsageError("output-error problem: parameter vector has the wrong size");
  }
  switch (pb.structure) {
    case Structure::kFopdt:
      return ForEachRowOf<Structure::kFopdt>(pb, grid, x, with_jacobian, row);
    case Structure::kSopdt:
      return ForEachRowOf<Structure::kSopdt>(pb, grid, x, with_jacobian, row);
    case Structure::kUnderdamped:
      return ForEachRowOf<Structure::kUnderdamped>(pb, grid, x, with_jacobian, row);
    case Structure::kIntegrating:
      return ForEachRowOf<Structure::kIntegrating>(pb, grid, x, with_jacobian, row);
    case Structure::kSopdtZero:
      return ForEachRowOf<Structure::kSopdtZero>(pb, grid, x, with_jacobian, row);
  }
}

// The generic (type-erased) callers share one instantiation.
void Rows(const OutputErrorProblem& pb, std::span<const double> x, bool with_jacobian,
          const RowSink& row) {
  Rows(pb, MakeSampleGrid(pb.t), x, with_jacobian, row);
}

size_t ResidualCount(const OutputErrorProblem& pb) {
  return pb.t.size() > pb.first_residual ? pb.t.size() - pb.first_residual : 0;
}

// Stores residual i at out[i].
struct ResidualWriter {
  double* out;
  void operator()(size_t i, double r, const double*) { out[i] = r; }
};

// The sum of squared residuals, and whether every residual was finite.
struct SquareSum {
  double rss = 0.0;
  bool finite = true;
  void operator()(size_t, double r, const double*) {
    rss += r * r;
    finite = finite && std::isfinite(r);
  }
};

// The augmented normal matrix [J r]'[J r] accumulated row by row over the chosen Jacobian
// columns (full layout) and the residual, stored in column kResidual; other entries stay zero.
// Rows are gathered in blocks so that each entry of the lower triangle is updated by one
// contiguous dot product per block. O(p^2) memory whatever the record length.
class GramSink {
 public:
  static constexpr int kResidual = kMaxFullParameters;
  using Matrix = Eigen::Matrix<double, kResidual + 1, kResidual + 1>;
  explicit GramSink(const std::vector<int>& columns) : count_(static_cast<int>(columns.size())) {
    std::copy(columns.begin(), columns.end(), columns_);
    columns_[count_++] = kResidual;
    gram_.setZero();
    block_.setZero();
  }
  // jrow has kMaxFullParameters entries (the value-only pass never calls this sink).
  void operator()(size_t, double r, const double* jrow) {
    if (jrow) {
      for (int i = 0; i < kResidual; ++i) block_(i, used_) = jrow[i];
    }
    block_(kResidual, used_) = r;
    if (++used_ == kBlock) Flush();
  }
  // The finished matrix, symmetric (call once, after the last row).
  const Matrix& Gram() {
    if (used_ > 0) {
      block_.rightCols(kBlock - used_).setZero();
      Flush();
    }
    for (int a = 0; a < count_; ++a) {
      for (int b = 0; b <= a; ++b) {
        gram_(columns_[a], columns_[b]) = gram_(columns_[b], columns_[a]) = packed_(a, b);
      }
    }
    return gram_;
  }

 private:
  static constexpr int kBlock = 32;
  void Flush() {
    for (int a = 0; a < count_; ++a) {
      for (int b = 0; b <= a; ++b) {
        packed_(a, b) += block_.row(columns_[a]).dot(block_.row(columns_[b]));
      }
    }
    used_ = 0;
  }
  int columns_[kResidual + 1] = {};
  int count_;
  int used_ = 0;
  Matrix gram_;
  Matrix packed_ = Matrix::Zero();  // lower triangle over columns_ order
  Eigen::Matrix<double, kResidual + 1, kBlock, Eigen::RowMajor> block_;
};

std::vector<int> FreeIndices(const std::vector<bool>& fixed) {
  std::vector<int> free;
  for (int i = 0; i < static_cast<int>(fixed.size()); ++i) {
    if (!fixed[i]) free.push_back(i);
  }
  return free;
}

std::vector<int> AllIndices(int p) {
  std::vector<int> all(p);
  for (int i = 0; i < p; ++i) all[i] = i;
  return all;
}

void CovarianceFromNormal(const OutputErrorProblem& problem, const std::vector<bool>& fixed,
                          const Eigen::MatrixXd& jtj, SolveReport& report);

// One Jacobian evaluation of a compressed cost.
struct Linearisation {
  bool valid = false;
  std::vector<double> x;  // full layout
  GramSink::Matrix gram;  // over the free columns and the residual
  std::vector<double> residuals, jacobian;
  // The decrease of the cost the Gauss-Newton step from x predicts, as a fraction of the cost:
  // c'c / r'r (the Newton decrement over the cost; +inf when the cost is 0).
  double predicted_decrease = std::numeric_limits<double>::infinity();
};

// The last two Jacobian evaluations of a compressed cost, kept outside it (Ceres owns and
// deletes the cost): Ceres' bounded line search asks for the Jacobian at a candidate and asks
// again once it accepts it, and the covariance wants J'J at the solution, which is the
// candidate before a final one Ceres declined (function tolerance reached).
class RecentLinearisations {
 public:
  const Linearisation* Find(const std::vector<double>& x) const {
    for (const Linearisation& l : slots_) {
      if (l.valid && l.x == x) return &l;
    }
    return nullptr;
  }
  Linearisation& Next() {
    newest_ ^= 1;
    return slots_[newest_];
  }

 private:
  Linearisation slots_[2];
  int newest_ = 0;
};

// The residual block Ceres sees: only the free parameters form its parameter block (held ones
// are filled in from `base`), so Ceres stores no Jacobian columns for them.
class OutputErrorCost : public ceres::CostFunction {
 public:
  OutputErrorCost(const OutputErrorProblem& pb, std::vector<double> base, std::vector<int> free)
      : pb_(pb), grid_(MakeSampleGrid(pb.t)), base_(std::move(base)), free_(std::move(free)) {
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
    RowSink rows(sink);
    Rows(pb_, grid_, x, jac != nullptr, rows);
    return finite;
  }

 private:
  const OutputErrorProblem& pb_;
  SampleGrid grid_;
  std::vector<double> base_;
  std::vector<int> free_;
  bool prefix_ = true;  // free_ is 0, 1, ..., m - 1
};

// The same least-squares problem compressed to m + 1 residuals (m free parameters), for long
// records. With G = J'J = V L V' (eigen-decomposition), R = L^(1/2) V', c = L^(-1/2) V' J'r
// (pseudo-inverse: directions with L below 1e-14 max(L) get c = 0) and
// rho = sqrt(r'r - c'c), the residuals [c; rho] with the Jacobian [R; 0] have the cost r'r/2,
// the gradient J'r and the Gauss-Newton matrix J'J of the N rows, so Ceres' Levenberg-Marquardt
// takes the same steps. rho's Jacobian is zero to first order (the part of r orthogonal to the
// columns of J does not move along them). One pass per evaluation, no N-row array anywhere.
// Not for concurrent use (it records its Jacobian evaluations in `recent`).
class CompressedOutputErrorCost : public ceres::CostFunction {
 public:
  CompressedOutputErrorCost(const OutputErrorProblem& pb, std::vector<double> base,
                            std::vector<int> free, RecentLinearisations* recent)
      : pb_(pb),
        grid_(MakeSampleGrid(pb.t)),
        base_(std::move(base)),
        free_(std::move(free)),
        recent_(recent) {
    set_num_residuals(static_cast<int>(free_.size()) + 1);
    mutable_parameter_block_sizes()->push_back(static_cast<int>(free_.size()));
  }
  bool Evaluate(double const* const* params, double* residuals, double** jacobians) const override {
    std::vector<double> x = base_;
    const int m = static_cast<int>(free_.size());
    for (int c = 0; c < m; ++c) x[free_[c]] = params[0][c];
    if (!IsPhysical(pb_.structure,
                    std::span<const double>(x).first(ParameterCount(pb_.structure)))) {
      return false;
    }
    const bool with_jacobian = jacobians != nullptr && jacobians[0] != nullptr;
    if (const Linearisation* known = recent_->Find(x)) {
      std::copy(known->residuals.begin(), known->residuals.end(), residuals);
      if (with_jacobian) std::copy(known->jacobian.begin(), known->jacobian.end(), jacobians[0]);
      return true;
    }
    std::fill_n(residuals, m + 1, 0.0);
    if (!with_jacobian) {
      SquareSum sum;
      Rows(pb_, grid_, x, false, sum);
      residuals[m] = std::sqrt(sum.rss);
      return sum.finite && std::isfinite(sum.rss);
    }
    GramSink sink(free_);
    Rows(pb_, grid_, x, true, sink);
    const GramSink::Matrix& g = sink.Gram();
    if (!g.allFinite()) return false;
    const int p = GramSink::kResidual;
    Eigen::MatrixXd gf(m, m);
    Eigen::VectorXd jr(m);
    for (int a = 0; a < m; ++a) {
      jr[a] = g(free_[a], p);
      for (int b = 0; b < m; ++b) gf(a, b) = g(free_[a], free_[b]);
    }
    Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(gf);
    if (eig.info() != Eigen::Success) return false;
    const Eigen::VectorXd& l = eig.eigenvalues();
    const double floor = 1e-14 * std::max(l[m - 1], 0.0);
    const Eigen::VectorXd proj = eig.eigenvectors().transpose() * jr;
    double explained = 0.0;
    Eigen::Map<Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>> jac(
        jacobians[0], m + 1, m);
    jac.setZero();
    for (int a = 0; a < m; ++a) {
      if (!(l[a] > floor) || !(l[a] > 0.0)) continue;
      const double root = std::sqrt(l[a]);
      residuals[a] = proj[a] / root;
      explained += residuals[a] * residuals[a];
      jac.row(a) = root * eig.eigenvectors().col(a).transpose();
    }
    residuals[m] = std::sqrt(std::max(0.0, g(p, p) - explained));
    Linearisation& keep = recent_->Next();
    keep.valid = true;
    keep.x = std::move(x);
    keep.gram = g;
    keep.predicted_decrease =
        g(p, p) > 0.0 ? explained / g(p, p) : std::numeric_limits<double>::infinity();
    keep.residuals.assign(residuals, residuals + m + 1);
    keep.jacobian.assign(jacobians[0], jacobians[0] + (m + 1) * m);
    return true;
  }

 private:
  const OutputErrorProblem& pb_;
  SampleGrid grid_;
  std::vector<double> base_;
  std::vector<int> free_;
  RecentLinearisations* recent_;
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

}  // namespace

std::vector<std::string> FullParameterNames(Structure s) {
  std::vector<std::string> names = ParameterNames(s);
  names.push_back("output_offset");
  names.push_back("output_drift");
  return names;
}

void EvaluateOutputError(const OutputErrorProblem& problem, std::span<const double> x,
                         double* residuals, double* jacobian) {
  if (jacobian == nullptr) {
    // Residuals only (the fit's quality on every sample): a direct sink, no call per row.
    ResidualWriter writer{residuals};
    Rows(problem, MakeSampleGrid(problem.t), x, false, writer);
    return;
  }
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
  GramSink sink(AllIndices(p));
  Rows(problem, MakeSampleGrid(problem.t), x, true, sink);
  return sink.Gram().topLeftCorner(p, p);
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
  const bool compress = report.residuals > options.compress_above;
  RecentLinearisations recent;
  ceres::CostFunction* cost = compress
                                  ? static_cast<ceres::CostFunction*>(new CompressedOutputErrorCost(
                                        problem, report.x, free, &recent))
                                  : new OutputErrorCost(problem, report.x, free);
  // A compressed solve knows the Gauss-Newton decrease its last Jacobian evaluation predicts:
  // at most function_tolerance of the cost ends it there, where Ceres would stop one cost
  // evaluation (a pass over every sample) later on finding that decrease (ceres_solve.h).
  ConvergedAt at_optimum;
  if (compress) {
    at_optimum = [&](const std::vector<double>& now, std::string& why) {
      std::vector<double> x = report.x;  // the held parameters' values
      for (size_t c = 0; c < free.size(); ++c) x[free[c]] = now[c];
      const Linearisation* known = recent.Find(x);
      if (known == nullptr || !(known->predicted_decrease <= options.function_tolerance)) {
        return false;
      }
      std::ostringstream o;
      o.precision(3);
      o << "the Gauss-Newton step from the solution would decrease the cost by "
        << known->predicted_decrease << " of it (function tolerance " << options.function_tolerance
        << ")";
      why = o.str();
      return true;
    };
  }
  CeresRun run = RunCeres(cost, xf, std::vector<bool>(free.size(), false), lf, uf, options,
                          compress ? free.size() + 1 : report.residuals, at_optimum);
  for (size_t c = 0; c < free.size(); ++c) report.x[free[c]] = xf[c];
  report.rss = run.rss;
  report.iterations = run.iterations;
  report.converged = run.converged;
  report.termination = run.termination;
  if (options.compute_covariance && run.usable) {
    if (const Linearisation* known = recent.Find(report.x)) {
      const int p = FullParameterCount(problem.structure);
      CovarianceFromNormal(problem, fixed, known->gram.topLeftCorner(p, p), report);
    } else {
      ComputeOutputErrorCovariance(problem, fixed, report);
    }
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
  // Of several starts each only has to show which basin it falls into: screened to 1e-6, the
  // best is then solved on to the given tolerances. A single start is solved to them at once.
  SolveOptions screen = quiet;
  if (starts.size() > 1) {
    screen.function_tolerance = std::max(options.function_tolerance, 1e-6);
    screen.parameter_tolerance = std::max(options.parameter_tolerance, 1e-6);
  }
  SolveReport best;
  bool have = false;
  for (const auto& given : starts) {
    std::vector<double> start = given;
    SolveLinearParameters(problem, fixed, start);
    for (size_t i = 0; i < start.size(); ++i) start[i] = std::clamp(start[i], lower[i], upper[i]);
    SolveReport r = SolveOutputError(problem, start, fixed, lower, upper, screen);
    if (!std::isfinite(r.rss)) continue;
    if (!have || r.rss < best.rss) {
      best = std::move(r);
      have = true;
    }
  }
  if (have && starts.size() > 1) {
    SolveReport r = SolveOutputError(problem, best.x, fixed, lower, upper, quiet);
    if (std::isfinite(r.rss) && r.rss <= best.rss) best = std::move(r);
  }
  if (!have) best = SolveOutputError(problem, starts.front(), fixed, lower, upper, quiet);
  if (options.compute_covariance) ComputeOutputErrorCovariance(problem, fixed, best);
  best.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - begin).count();
  return best;
}

void ComputeOutputErrorCovariance(const OutputErrorProblem& problem, const std::vector<bool>& fixed,
                                  SolveReport& report) {
  CovarianceFromNormal(problem, fixed, NormalMatrix(problem, report.x), report);
}

namespace {

// The covariance fields of report from J'J at report.x (only the free rows and columns of jtj
// are read).
void CovarianceFromNormal(const OutputErrorProblem& problem, const std::vector<bool>& fixed,
                          const Eigen::MatrixXd& jtj, SolveReport& report) {
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
    // Ceres' test is on the unscaled matrix: name its weakest direction all the same.
    report.rank_deficiency = DescribeRankDeficiency(jtj, fixed, FullParameterNames(s),
                                                    std::numeric_limits<double>::infinity()) +
                             "; Ceres' dense SVD finds the covariance rank-deficient";
  }
}

}  // namespace

}  // namespace lw
