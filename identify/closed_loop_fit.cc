#include "identify/closed_loop_fit.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <optional>
#include <span>

#include <ceres/ceres.h>

#include "identify/ceres_solve.h"
#include "identify/structure_selection.h"
#include "lti/error.h"
#include "lti/number_text.h"
#include "lti/simulate.h"

namespace lw {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

std::string Num(double v) { return SignificantText(v, 4); }

// Everything one weighted residual evaluation needs. Parameter vector x = [structure..., y_rest,
// u_rest].
struct LoopProblem {
  Structure structure = Structure::kFopdt;
  const Controller* controller = nullptr;
  double gain = 1.0;
  std::span<const double> t, dr, y, u;
  double sd_y = 1.0, sd_u = 1.0;
  std::vector<double> lower, upper, scale;

  int Dynamic() const { return ParameterCount(structure); }
  int Size() const { return Dynamic() + 2; }
  size_t Residuals() const { return 2 * t.size(); }

  // The deviation loop for x's plant; false when x is not physical or the loop blew up.
  bool Deviation(const double* x, std::vector<double>& dy, std::vector<double>& du) const {
    std::span<const double> p(x, static_cast<size_t>(Dynamic()));
    if (!IsPhysical(structure, p)) return false;
    try {
      SimulateOptions so;
      so.initial = SimulateOptions::Initial::kZero;
      ClosedLoopResponse resp =
          SimulateClosedLoop(StructureTransferFunction(structure, p), *controller, gain, t, dr, so);
      dy = std::move(resp.y);
      du = std::move(resp.u);
    } catch (const Error&) {
      return false;
    }
    for (size_t k = 0; k < dy.size(); ++k) {
      if (!std::isfinite(dy[k]) || !std::isfinite(du[k])) return false;
    }
    return true;
  }

  // Weighted residuals: first the n output rows, then the n actuator rows.
  bool Evaluate(const double* x, double* res) const {
    std::vector<double> dy, du;
    if (!Deviation(x, dy, du)) return false;
    const size_t n = t.size();
    const double y_rest = x[Dynamic()], u_rest = x[Dynamic() + 1];
    for (size_t k = 0; k < n; ++k) {
      res[k] = (y_rest + dy[k] - y[k]) / sd_y;
      res[n + k] = (u_rest + du[k] - u[k]) / sd_u;
    }
    return true;
  }
};

// Central differences for the dynamic parameters (one-sided at a bound), exact columns for the
// two linear ones.
class LoopCost : public ceres::CostFunction {
 public:
  explicit LoopCost(const LoopProblem& pb) : pb_(pb) {
    set_num_residuals(static_cast<int>(pb.Residuals()));
    mutable_parameter_block_sizes()->push_back(pb.Size());
  }

  bool Evaluate(double const* const* params, double* residuals, double** jacobians) const override {
    const double* x = params[0];
    if (!pb_.Evaluate(x, residuals)) return false;
    if (jacobians == nullptr || jacobians[0] == nullptr) return true;
    const int p = pb_.Size(), pd = pb_.Dynamic();
    const size_t m = pb_.Residuals(), n = pb_.t.size();
    double* jac = jacobians[0];
    std::vector<double> xp(x, x + p), plus(m), minus(m);
    for (int j = 0; j < pd; ++j) {
      const double h = 1e-5 * std::max(std::abs(x[j]), pb_.scale[j]);
      double hi = x[j] + h, lo = x[j] - h;
      if (hi > pb_.upper[j]) hi = x[j];
      if (lo < pb_.lower[j]) lo = x[j];
      xp[j] = hi;
      bool ok = hi == x[j] ? (std::copy(residuals, residuals + m, plus.begin()), true)
                           : pb_.Evaluate(xp.data(), plus.data());
      xp[j] = lo;
      ok = ok && (lo == x[j] ? (std::copy(residuals, residuals + m, minus.begin()), true)
                             : pb_.Evaluate(xp.data(), minus.data()));
      xp[j] = x[j];
      if (!ok || hi == lo) return false;
      for (size_t i = 0; i < m; ++i) jac[i * p + j] = (plus[i] - minus[i]) / (hi - lo);
    }
    for (size_t i = 0; i < m; ++i) {
      jac[i * p + pd] = i < n ? 1.0 / pb_.sd_y : 0.0;
      jac[i * p + pd + 1] = i < n ? 0.0 : 1.0 / pb_.sd_u;
    }
    return true;
  }

 private:
  const LoopProblem& pb_;
};

// The bounds of identify/fit.h (h the median sample period, D the record length) and a scale
// for each difference step.
void SetBounds(LoopProblem& pb) {
  const size_t n = pb.t.size();
  std::vector<double> dt(n - 1);
  for (size_t k = 1; k < n; ++k) dt[k - 1] = pb.t[k] - pb.t[k - 1];
  std::nth_element(dt.begin(), dt.begin() + dt.size() / 2, dt.end());
  const double h = dt[dt.size() / 2];
  const double d = pb.t.back() - pb.t.front();
  const int p = pb.Size();
  pb.lower.assign(p, -kInf);
  pb.upper.assign(p, kInf);
  pb.scale.assign(p, 1.0);
  std::vector<std::string> names = ParameterNames(pb.structure);
  for (int i = 0; i < pb.Dynamic(); ++i) {
    const std::string& name = names[i];
    if (name == "dead_time") {
      pb.lower[i] = 0.0;
      pb.upper[i] = 0.9 * d;
      pb.scale[i] = h;
    } else if (name == "damping_ratio") {
      pb.lower[i] = 0.001;
      pb.upper[i] = 1.0;
      pb.scale[i] = 0.01;
    } else if (name == "natural_frequency") {
      pb.lower[i] = 0.001 / d;
      pb.upper[i] = M_PI / h;
      pb.scale[i] = 1.0 / d;
    } else if (name == "zero_time_constant") {
      pb.lower[i] = -1000.0 * d;
      pb.upper[i] = 1000.0 * d;
      pb.scale[i] = h;
    } else if (name != "gain") {
      pb.lower[i] = h / 1000.0;
      pb.upper[i] = 1000.0 * d;
      pb.scale[i] = h;
    } else {
      pb.scale[i] = 1e-6;
    }
  }
}

double Rms(const std::vector<double>& r, size_t from, size_t count) {
  double s = 0.0;
  for (size_t k = from; k < from + count; ++k) s += r[k] * r[k];
  return std::sqrt(s / static_cast<double>(count));
}

// 100 (1 - |v - vhat| / |v - mean(v)|) from the residuals v - vhat.
double FitPercent(std::span<const double> v, const std::vector<double>& res, size_t from,
                  double sd) {
  double mean = 0.0;
  for (double x : v) mean += x;
  mean /= static_cast<double>(v.size());
  double ss = 0.0, rss = 0.0;
  for (size_t k = 0; k < v.size(); ++k) {
    ss += (v[k] - mean) * (v[k] - mean);
    rss += res[from + k] * res[from + k] * sd * sd;
  }
  return ss > 0.0 ? 100.0 * (1.0 - std::sqrt(rss / ss)) : 0.0;
}

// A warning when u sits at its extreme value for 10 or more samples in a row (a limit?).
void WarnAboutFlatActuator(const std::vector<double>& u, std::vector<std::string>& warnings) {
  auto [lo, hi] = std::minmax_element(u.begin(), u.end());
  if (!(*hi > *lo)) return;
  for (double level : {*lo, *hi}) {
    size_t run = 0, longest = 0;
    for (double v : u) {
      run = v == level ? run + 1 : 0;
      longest = std::max(longest, run);
    }
    if (longest >= 10) {
      warnings.push_back("the actuator stays at " + Num(level) + " for " + std::to_string(longest) +
                         " samples in a row: if that is a limit, the loop was not linear there "
                         "and the closed-loop fit does not model it");
    }
  }
}

}  // namespace

void ClosedLoopFitOptions::Validate() const {
  if (structure != "auto") ParseStructure(structure);
  if (!(std::isfinite(gain) && gain > 0.0)) {
    throw UsageError("closed-loop fit gain " + Num(gain) +
                     ": the loop's gain K must be a number > 0");
  }
  if (reweight_rounds < 1 || reweight_rounds > 10) {
    throw UsageError("closed-loop fit reweight_rounds " + std::to_string(reweight_rounds) +
                     ": must be 1 to 10");
  }
  if (max_iterations < 1) {
    throw UsageError("closed-loop fit max_iterations " + std::to_string(max_iterations) +
                     ": must be >= 1");
  }
  selection.Validate();
}

ClosedLoopResponse ClosedLoopPrediction(const TransferFunction& plant, const Controller& controller,
                                        double gain, const std::vector<double>& t,
                                        const std::vector<double>& r, double y_rest,
                                        double u_rest) {
  if (r.size() != t.size() || t.empty()) {
    throw UsageError("closed-loop prediction: t and r must be non-empty and the same length");
  }
  std::vector<double> dr(r.size());
  for (size_t k = 0; k < r.size(); ++k) dr[k] = r[k] - r[0];
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  ClosedLoopResponse resp = SimulateClosedLoop(plant, controller, gain, t, dr, so);
  for (double& v : resp.y) v += y_rest;
  for (double& v : resp.u) v += u_rest;
  return resp;
}

namespace {

// The closed-loop polish of one structure from its open-loop start (see the header).
ClosedLoopFit PolishInLoop(const ClosedLoopRecording& rec, const ClosedLoopFitOptions& options,
                           Identification start, size_t first_move) {
  const size_t n = rec.t.size();
  const auto started = std::chrono::steady_clock::now();
  ClosedLoopFit out;
  out.start = std::move(start);
  const FitResult& s0 = out.start.model;
  LoopProblem pb;
  pb.structure = s0.structure;
  pb.controller = &options.controller;
  pb.gain = options.gain;
  std::vector<double> dr(n);
  for (size_t k = 0; k < n; ++k) dr[k] = rec.r[k] - rec.r[0];
  pb.t = rec.t;
  pb.dr = dr;
  pb.y = rec.y;
  pb.u = rec.u;
  SetBounds(pb);
  const int pd = pb.Dynamic(), p = pb.Size();

  // Operating point: the means before the reference first moves.
  double y_rest = 0.0, u_rest = 0.0;
  for (size_t k = 0; k < first_move; ++k) {
    y_rest += rec.y[k];
    u_rest += rec.u[k];
  }
  y_rest /= static_cast<double>(first_move);
  u_rest /= static_cast<double>(first_move);
  std::vector<double> x(s0.values.begin(), s0.values.end());
  for (int i = 0; i < pd; ++i) x[i] = std::clamp(x[i], pb.lower[i], pb.upper[i]);
  x.push_back(y_rest);
  x.push_back(u_rest);

  // High-frequency controller gain |C(inf)| (0 for a strictly proper controller).
  TransferFunction c = options.controller.WithGain(options.gain);
  const auto& cn = c.num().coefficients();
  const auto& cd = c.den().coefficients();
  const double k_hf = cn.size() == cd.size() ? std::abs(cn.front() / cd.front()) : 0.0;

  std::vector<double> res(pb.Residuals());
  pb.sd_y = pb.sd_u = 1.0;
  if (!pb.Evaluate(x.data(), res.data())) {
    throw JobFailed("the open-loop start (" + std::string(StructureName(pb.structure)) +
                    ") gives an unstable or unusable loop with controller " +
                    options.controller.ToString() + " at K = " + Num(options.gain) +
                    ": check --controller and --gain");
  }
  double u_range = 0.0;
  {
    auto [lo, hi] = std::minmax_element(rec.u.begin(), rec.u.end());
    u_range = *hi - *lo;
  }
  auto update_sd = [&](double ry, double ru) {
    double sy = std::max(ry, 1e-12 * (1.0 + std::abs(y_rest)));
    double floor = std::max(k_hf * sy, 1e-9 * std::max(u_range, 1.0));
    out.input_sd_floored = ru < floor;
    return std::pair<double, double>{sy, std::max(ru, floor)};
  };
  std::tie(pb.sd_y, pb.sd_u) = update_sd(std::max(s0.residual_rms, Rms(res, 0, n)), Rms(res, n, n));

  SolveOptions so;
  so.max_iterations = options.max_iterations;
  so.function_tolerance = 1e-10;
  so.parameter_tolerance = 1e-10;
  std::vector<bool> fixed(p, false);
  CeresRun run;
  for (int round = 0; round < options.reweight_rounds; ++round) {
    run = RunCeres(new LoopCost(pb), x, fixed, pb.lower, pb.upper, so, pb.Residuals());
    ++out.solves;
    if (!run.usable) {
      throw JobFailed("the closed-loop fit found no usable solution (" + run.termination + ")");
    }
    pb.Evaluate(x.data(), res.data());
    auto [sy, su] = update_sd(Rms(res, 0, n) * pb.sd_y, Rms(res, n, n) * pb.sd_u);
    const bool settled = std::abs(sy / pb.sd_y - 1.0) < 0.1 && std::abs(su / pb.sd_u - 1.0) < 0.1;
    pb.sd_y = sy;
    pb.sd_u = su;
    if (settled) break;
  }
  // Residuals, Jacobian and covariance at the final weights.
  LoopCost cost(pb);
  std::vector<double> jac(pb.Residuals() * static_cast<size_t>(p));
  const double* xs[] = {x.data()};
  double* js[] = {jac.data()};
  if (!cost.Evaluate(xs, res.data(), js)) {
    throw JobFailed("the closed-loop fit's solution could not be evaluated again");
  }
  Eigen::Map<const Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>> J(
      jac.data(), static_cast<Eigen::Index>(pb.Residuals()), p);
  Eigen::MatrixXd jtj = J.transpose() * J;
  double rss = 0.0;
  for (double v : res) rss += v * v;
  const size_t m = pb.Residuals();
  const double dof = static_cast<double>(m) - p;

  FitResult& f = out.model;
  f.structure = pb.structure;
  std::vector<std::string> full_names = ParameterNames(pb.structure);
  full_names.push_back("output_offset");
  full_names.push_back("input_baseline");
  f.rank_deficiency = DescribeRankDeficiency(jtj, fixed, full_names);
  Eigen::MatrixXd cov = Eigen::MatrixXd::Zero(p, p);
  if (f.rank_deficiency.empty()) {
    cov = jtj.ldlt().solve(Eigen::MatrixXd::Identity(p, p)) * (rss / dof);
    f.covariance_ok = cov.allFinite();
  }
  std::vector<int> perm = Canonicalize(pb.structure, std::span<double>(x.data(), pd));
  Eigen::MatrixXd cov_c(pd, pd);
  for (int i = 0; i < pd; ++i) {
    for (int j = 0; j < pd; ++j) cov_c(i, j) = cov(perm[i], perm[j]);
  }
  f.values.assign(x.begin(), x.begin() + pd);
  f.covariance = cov_c;
  const double tq = StudentQuantile(0.975, dof);
  auto estimate = [&](const std::string& name, const std::string& unit, double value, double var) {
    ParameterEstimate e;
    e.name = name;
    e.unit = unit;
    e.value = value;
    if (f.covariance_ok && var >= 0.0) {
      e.sd = std::sqrt(var);
      e.ci_low = value - tq * e.sd;
      e.ci_high = value + tq * e.sd;
    }
    return e;
  };
  std::vector<ParameterInfo> infos =
      ParameterInfos(pb.structure, options.input_unit, options.output_unit);
  for (int i = 0; i < pd; ++i) {
    f.parameters.push_back(estimate(infos[i].name, infos[i].unit, x[i], cov_c(i, i)));
  }
  f.output_offset =
      estimate("output_offset", options.output_unit.empty() ? "output" : options.output_unit, x[pd],
               cov(pd, pd));
  f.input_baseline = x[pd + 1];
  f.tf = StructureTransferFunction(pb.structure, f.values);
  f.fit_percent = FitPercent(rec.y, res, 0, pb.sd_y);
  f.residual_rms = Rms(res, 0, n) * pb.sd_y;
  out.input_fit_percent = FitPercent(rec.u, res, n, pb.sd_u);
  out.input_residual_rms = Rms(res, n, n) * pb.sd_u;
  out.output_sd = pb.sd_y;
  out.input_sd = pb.sd_u;
  const double rss_y = f.residual_rms * f.residual_rms * static_cast<double>(n);
  f.aicc = Aicc(rss_y, n, p);
  f.bic = Bic(rss_y, n, p);
  f.samples = n;
  f.free_parameters = p;
  f.iterations = run.iterations;
  f.converged = run.converged;
  f.termination = run.termination;
  f.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();

  if (!run.converged) {
    out.warnings.push_back("the closed-loop solve stopped before converging (" + run.termination +
                           ")");
  }
  if (!f.rank_deficiency.empty()) out.warnings.push_back(f.rank_deficiency);
  for (int i = 0; i < pd; ++i) {
    const bool at_bound = (std::isfinite(pb.lower[i]) && x[i] <= pb.lower[i] && pb.lower[i] != 0) ||
                          (std::isfinite(pb.upper[i]) && x[i] >= pb.upper[i]);
    if (at_bound) {
      out.warnings.push_back(infos[i].name + " ended at its bound (" + Num(x[i]) +
                             "): the loop data may not determine it");
    }
  }
  WarnAboutFlatActuator(rec.u, out.warnings);
  return out;
}

}  // namespace

ClosedLoopFit FitClosedLoop(const ClosedLoopRecording& rec, const ClosedLoopFitOptions& options) {
  options.Validate();
  const size_t n = rec.t.size();
  if (rec.r.size() != n || rec.u.size() != n || rec.y.size() != n) {
    throw UsageError("closed-loop fit: t, r, u and y must have the same length");
  }
  if (n < 20) {
    throw DataError("a closed-loop fit needs at least 20 samples, found " + std::to_string(n));
  }
  size_t first_move = n;
  for (size_t k = 1; k < n; ++k) {
    if (rec.r[k] != rec.r[0]) {
      first_move = k;
      break;
    }
  }
  if (first_move == n) {
    throw DataError("the reference never changes (" + Num(rec.r[0]) +
                    " throughout): a closed-loop fit needs a set-point step");
  }
  FitOptions fo;
  fo.input_unit = options.input_unit;
  fo.output_unit = options.output_unit;
  fo.selection = options.selection;
  fo.structure = options.structure;
  const StepRecording open{rec.t, rec.u, rec.y};
  Identification first = Identify(open, fo);
  if (options.structure != "auto") return PolishInLoop(rec, options, std::move(first), first_move);

  // "auto": every structure the open-loop fit could use, each started from its own open-loop
  // fit and polished in the loop; chosen on the output-channel AICc (structure_selection.h).
  std::vector<Candidate> candidates = first.candidates;
  std::vector<double> criterion(candidates.size(), kInf);
  std::vector<bool> usable(candidates.size(), false);
  std::vector<ClosedLoopFit> fits(candidates.size());
  for (size_t i = 0; i < candidates.size(); ++i) {
    Candidate& c = candidates[i];
    if (!c.usable) continue;
    try {
      fo.structure = std::string(StructureName(c.structure));
      Identification start = c.structure == first.model.structure ? first : Identify(open, fo);
      fits[i] = PolishInLoop(rec, options, std::move(start), first_move);
    } catch (const JobFailed& e) {
      c.usable = false;
      c.note = std::string("not usable in the loop: ") + e.what();
      continue;
    }
    const FitResult& m = fits[i].model;
    c.fit_percent = m.fit_percent;
    c.residual_rms = m.residual_rms;
    c.aicc = m.aicc;
    c.free_parameters = m.free_parameters;
    criterion[i] = m.aicc;
    usable[i] = true;
  }
  for (size_t i = 0; i < candidates.size(); ++i) candidates[i].usable = usable[i];
  std::string note;
  const int chosen = ChooseCandidate(candidates, options.selection, note);
  if (chosen < 0) {
    throw JobFailed("no structure could be fitted inside the loop with controller " +
                    options.controller.ToString() + " at K = " + Num(options.gain) +
                    ": check --controller and --gain");
  }
  ClosedLoopFit out = std::move(fits[chosen]);
  out.automatic = true;
  out.candidates = std::move(candidates);
  out.selection_note = std::move(note);
  return out;
}

}  // namespace lw
