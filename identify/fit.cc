#include "identify/fit.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <memory>
#include <numbers>
#include <optional>
#include <sstream>

#include <ceres/loss_function.h>
#include <boost/math/distributions/normal.hpp>
#include <boost/math/distributions/students_t.hpp>

#include "identify/order_statistic.h"
#include "identify/output_error.h"
#include "identify/starting_values.h"
#include "identify/structure_selection.h"
#include "lti/error.h"

namespace lw {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
// The trust region radius for solves that start from a reduced problem's optimum (see
// SolveOptions::initial_trust_region_radius).
constexpr double kNearRadius = 1e10;

std::string Num(double v, int digits = 4) {
  std::ostringstream o;
  o.precision(digits);
  o << v;
  return o.str();
}

double MedianAbs(const std::vector<double>& r) {
  return MedianOf(r.size(), [&](size_t i) { return std::abs(r[i]); });
}

// Bounds in the full layout (see fit.h for the rules).
void Bounds(Structure s, double h, double d, std::vector<double>& lo, std::vector<double>& hi) {
  const int p = FullParameterCount(s);
  lo.assign(p, -kInf);
  hi.assign(p, kInf);
  const double tau_lo = 1e-3 * h, tau_hi = 1e3 * d;
  auto tau = [&](int i) {
    lo[i] = tau_lo;
    hi[i] = tau_hi;
  };
  switch (s) {
    case Structure::kFopdt:
    case Structure::kIntegrating:
      tau(1);
      break;
    case Structure::kSopdt:
      tau(1);
      tau(2);
      break;
    case Structure::kSopdtZero:
      tau(1);
      tau(2);
      lo[3] = -tau_hi;
      hi[3] = tau_hi;
      break;
    case Structure::kUnderdamped:
      lo[1] = 1e-3;
      hi[1] = 1.0;
      lo[2] = 1e-3 / d;
      hi[2] = std::numbers::pi / h;
      break;
  }
  lo[DeadTimeIndex(s)] = 0.0;
  hi[DeadTimeIndex(s)] = 0.9 * d;
}

// The data of one output-error problem: time and output are the recording's own (no copy) on
// every sample, or a reduced record's (Reduce); the input deviation is always new.
struct Prepared {
  std::vector<double> t_own, v, y_own, w;
  std::span<const double> t, y;
  // The model starts at rest at the baseline: the zero state with zero input deviation before
  // t[0]. (At rest for the first sample's input instead would start a noisy input's model a
  // noise sample off the baseline, a transient the offset and dead time would absorb.)
  OutputErrorProblem problem() const {
    OutputErrorProblem pb;
    pb.t = t;
    pb.v = v;
    pb.y = y;
    pb.weight = w;
    pb.zero_initial = true;
    return pb;
  }
};

// Every sample of the recording.
Prepared Prepare(const StepRecording& rec, double u_base) {
  Prepared p;
  p.v.resize(rec.u.size());
  for (size_t i = 0; i < rec.u.size(); ++i) p.v[i] = rec.u[i] - u_base;
  p.t = rec.t;
  p.y = rec.y;
  return p;
}

// The reduced problem for the multi-start: blocks of `block` samples, the first block starting
// at the first step (so the step is exact), each represented by its first instant with the
// block's mean input held over it and the mean output over a window of the same length centred
// on that instant. The model starts from rest at the baseline (zero state). The samples before
// the first block boundary at or before the first window are left out.
Prepared Reduce(const StepRecording& rec, const RecordingAnalysis& a, size_t block) {
  Prepared p;
  const size_t n = rec.t.size();
  const size_t first = a.steps.front() % block;
  const size_t half = block / 2;
  const size_t kept = (n - first + block - 1) / block;
  p.t_own.reserve(kept);
  p.y_own.reserve(kept);
  p.v.reserve(kept);
  for (size_t g = first; g < n; g += block) {
    const size_t v_end = std::min(n, g + block);
    double vs = 0.0;
    for (size_t i = g; i < v_end; ++i) vs += rec.u[i];
    const size_t y_begin = g >= half ? g - half : 0, y_end = std::min(n, g + block - half);
    double ys = 0.0;
    for (size_t i = y_begin; i < y_end; ++i) ys += rec.y[i];
    p.t_own.push_back(rec.t[g]);
    p.v.push_back(vs / static_cast<double>(v_end - g) - a.input_baseline);
    p.y_own.push_back(ys / static_cast<double>(y_end - y_begin));
  }
  p.t = p.t_own;
  p.y = p.y_own;
  return p;
}

// Iteratively reweighted least squares for the robust losses.
// The residuals yhat - y of the unweighted problem at x.
std::vector<double> Residuals(const OutputErrorProblem& plain, std::span<const double> x) {
  std::vector<double> r = PredictOutput(plain, x);
  for (size_t k = 0; k < r.size(); ++k) r[k] -= plain.y[k];
  return r;
}

// The robust loss for residuals r (fit.h): Huber at 1.345 s or Cauchy at 2.385 s, s the robust
// scale 1.4826 MAD of r.
std::unique_ptr<ceres::LossFunction> RobustLoss(FitOptions::Robust robust,
                                                const std::vector<double>& r) {
  const double scale = std::max(1.4826 * MedianAbs(r), 1e-300);
  if (robust == FitOptions::Robust::kHuber)
    return std::make_unique<ceres::HuberLoss>(1.345 * scale);
  return std::make_unique<ceres::CauchyLoss>(2.385 * scale);
}

SolveReport Reweight(Prepared& data, Structure s, SolveReport report,
                     const std::vector<bool>& fixed, const std::vector<double>& lo,
                     const std::vector<double>& hi, FitOptions::Robust robust,
                     const SolveOptions& so) {
  for (int iter = 0; iter < 15; ++iter) {
    OutputErrorProblem pb = data.problem();
    pb.structure = s;
    pb.weight = {};
    const std::vector<double> r = Residuals(pb, report.x);
    const std::unique_ptr<ceres::LossFunction> loss = RobustLoss(robust, r);
    data.w.resize(r.size());
    for (size_t k = 0; k < r.size(); ++k) {
      double rho[3];
      loss->Evaluate(r[k] * r[k], rho);
      data.w[k] = rho[1];
    }
    pb = data.problem();
    pb.structure = s;
    std::vector<double> before = report.x;
    report = SolveOutputError(pb, report.x, fixed, lo, hi, so);
    double change = 0.0;
    for (size_t i = 0; i < before.size(); ++i) {
      change = std::max(change, std::abs(report.x[i] - before[i]) / (1e-12 + std::abs(before[i])));
    }
    if (change < 1e-7) break;
  }
  return report;
}

// The covariance of a robust (M-estimate) fit: Huber's sandwich estimate
//   K^2 [sum psi(r)^2 / (n - p)] / [sum psi'(r) / n]^2 (J'J)^-1,
//   K = 1 + (p / n) var(psi') / mean(psi')^2
// (Huber, Robust Statistics, 1981, sec. 7.6; from memory), with r the unweighted residuals at
// the solution and J'J unweighted. The final weighted problem's s_w^2 (J'WJ)^-1 counts what the
// loss left of each spike (a Huber weight keeps |r| a of it) as noise, and widened the
// intervals of a spiky record twice over. Replaces report's covariance (rank test included).
void RobustCovariance(const OutputErrorProblem& plain, const std::vector<bool>& fixed,
                      FitOptions::Robust robust, SolveReport& report) {
  const std::vector<double> r = Residuals(plain, report.x);
  const std::unique_ptr<ceres::LossFunction> loss = RobustLoss(robust, r);
  const double n = static_cast<double>(r.size());
  const double p = report.free_parameters;
  if (!(n > p)) return;
  double psi2 = 0.0, d1 = 0.0, d2 = 0.0;
  for (double v : r) {
    // Ceres' cost is rho(v^2)/2: psi = rho'(v^2) v, psi' = rho'(v^2) + 2 v^2 rho''(v^2).
    double rho[3];
    loss->Evaluate(v * v, rho);
    const double psi = rho[1] * v, dpsi = rho[1] + 2.0 * v * v * rho[2];
    psi2 += psi * psi;
    d1 += dpsi;
    d2 += dpsi * dpsi;
  }
  const double mean = d1 / n;
  if (!(mean > 0.0)) return;  // keep the weighted problem's covariance
  const double var = std::max(0.0, d2 / n - mean * mean);
  const double k = 1.0 + (p / n) * var / (mean * mean);
  const double factor = k * k * (psi2 / (n - p)) / (mean * mean);
  // ComputeOutputErrorCovariance scales (J'J)^-1 by rss / (n - p): hand it that product.
  SolveReport plain_report = report;
  plain_report.residuals = r.size();
  plain_report.rss = factor * (n - p);
  ComputeOutputErrorCovariance(plain, fixed, plain_report);
  report.covariance = std::move(plain_report.covariance);
  report.covariance_ok = plain_report.covariance_ok;
  report.rank_deficiency = plain_report.rank_deficiency;
}

// Widens a fit's uncertainty by the variance ratio `ratio` (the covariance by it, standard
// deviations and intervals by its square root, about each value).
void ScaleUncertainty(FitResult& f, double ratio) {
  const double root = std::sqrt(ratio);
  f.covariance *= ratio;
  auto widen = [&](ParameterEstimate& e) {
    if (!std::isfinite(e.sd)) return;
    e.sd *= root;
    e.ci_low = e.value - root * (e.value - e.ci_low);
    e.ci_high = e.value + root * (e.ci_high - e.value);
  };
  for (ParameterEstimate& e : f.parameters) widen(e);
  widen(f.output_offset);
  if (f.output_drift) widen(*f.output_drift);
}

// The block length that reduces n samples to about `points` blocks, and to at least 20 blocks
// per input step (at most 10 `points` in all) so a square wave keeps its shape; odd, so that
// each output window is centred on its instant; 1 keeps every sample.
size_t BlockLength(size_t n, size_t points, const RecordingAnalysis& a) {
  points = std::max(points, std::min(20 * a.steps.size(), 10 * points));
  const size_t block = std::max<size_t>(1, (n + points - 1) / points);
  return block > 1 ? block | 1 : 1;
}

// One output-error problem on the blocks of `block` samples (Reduce), or on every sample.
struct ReducedProblem {
  Prepared data;
  OutputErrorProblem problem;
  ReducedProblem(const StepRecording& rec, const RecordingAnalysis& a, Structure s, size_t block)
      : data(block > 1 ? Reduce(rec, a, block) : Prepare(rec, a.input_baseline)),
        problem(data.problem()) {
    problem.structure = s;
  }
};

// The multi-start on at most options.start_samples block means (no covariance). With `refine`
// and a record much longer than that, the best start is then carried to a finer reduction
// (fit.h), so the polish on every sample starts within a few hundredths
// of a standard deviation of its optimum and needs only two or three iterations.
SolveReport CoarseFit(Structure s, const StepRecording& rec, const RecordingAnalysis& a,
                      const FitOptions& options, const std::vector<double>& seed,
                      const std::vector<bool>& fixed, const std::vector<double>& lo,
                      const std::vector<double>& hi, bool refine) {
  const size_t n = rec.t.size();
  SolveOptions so;
  so.max_iterations = 50;
  so.compute_covariance = false;
  so.compress_above = 0;  // starting points only: the compressed model at every size
  SolveReport best;
  {
    ReducedProblem coarse(rec, a, s, BlockLength(n, options.start_samples, a));
    best = SolveMultiStart(coarse.problem, StartingValues(s, rec, a, seed), fixed, lo, hi, so);
  }
  const size_t finer = std::max<size_t>(
      10 * options.start_samples,
      static_cast<size_t>(std::sqrt(static_cast<double>(n) * options.start_samples)));
  if (refine && n >= 64 * options.start_samples && std::isfinite(best.rss)) {
    ReducedProblem fine(rec, a, s, BlockLength(n, finer, a));
    so.initial_trust_region_radius = kNearRadius;
    SolveReport r = SolveOutputError(fine.problem, best.x, fixed, lo, hi, so);
    if (std::isfinite(r.rss)) best = std::move(r);
  }
  return best;
}

// Starting values for a richer structure from a simpler one fitted on the thinned copy only.
FitResult SeedFit(Structure s, const StepRecording& rec, const RecordingAnalysis& a,
                  const FitOptions& options) {
  std::vector<double> lo, hi;
  Bounds(s, a.sample_period, rec.t.back() - rec.t.front(), lo, hi);
  std::vector<bool> fixed(FullParameterCount(s), false);
  fixed[DriftIndex(s)] = s != Structure::kIntegrating;
  std::vector<double> seed;
  if (s == Structure::kSopdt) seed = SeedFit(Structure::kFopdt, rec, a, options).values;
  SolveReport r = CoarseFit(s, rec, a, options, seed, fixed, lo, hi, false);
  FitResult f;
  f.structure = s;
  f.values.assign(r.x.begin(), r.x.begin() + ParameterCount(s));
  Canonicalize(s, f.values);
  return f;
}

}  // namespace

double OutlierThreshold(size_t n) {
  if (n == 0) return 5.0;
  // Two-sided: P(|e| > z sd) = 0.01 / n for one Gaussian residual.
  boost::math::normal dist;
  const double z =
      boost::math::quantile(boost::math::complement(dist, 0.005 / static_cast<double>(n)));
  return std::max(5.0, z);
}

double StudentQuantile(double p, double dof) {
  if (!(dof >= 1.0)) return std::numeric_limits<double>::quiet_NaN();
  boost::math::students_t dist(dof);
  return boost::math::quantile(dist, p);
}

void FitOptions::Validate() const {
  CheckStructureChoice(structure);
  if (!(window_start < window_end)) {
    throw UsageError("window " + Num(window_start) + ":" + Num(window_end) +
                     ": the start must be before the end");
  }
  if (decimate_to < 1000) {
    throw UsageError("decimate_to " + std::to_string(decimate_to) + ": must be at least 1000");
  }
  if (decimate_above < decimate_to) {
    throw UsageError("decimate_above " + std::to_string(decimate_above) +
                     ": must be at least decimate_to (" + std::to_string(decimate_to) + ")");
  }
  if (start_samples < 100) {
    throw UsageError("start_samples " + std::to_string(start_samples) + ": must be at least 100");
  }
  if (max_iterations < 1) {
    throw UsageError("max_iterations " + std::to_string(max_iterations) + ": must be >= 1");
  }
  selection.Validate();
}

// Why the data do not determine a fit's parameters (structure_selection.h), or empty.
std::string Undetermined(const FitResult& f) {
  if (!f.covariance_ok || !f.rank_deficiency.empty()) return "its covariance is rank-deficient";
  for (const ParameterEstimate& p : f.parameters) {
    if (p.name == "dead_time" || p.name == "zero_time_constant") continue;  // may be 0
    if (!(p.ci_low > 0.0 || p.ci_high < 0.0)) {
      return "the 95 % interval of " + p.name + " contains 0";
    }
  }
  return "";
}

namespace {

// Why an auto candidate whose solve stopped short is not a candidate, and what its last
// iterate shows.
std::string NotConvergedNote(const FitResult& f, const FitOptions& options) {
  std::string note =
      f.termination.rfind("NO_CONVERGENCE", 0) == 0
          ? "stopped at the iteration limit (" + std::to_string(options.max_iterations) + ")"
          : "did not converge (Ceres: " + f.termination + ")";
  const std::string why = Undetermined(f);
  if (!why.empty()) note += "; the data do not determine it (" + why + ")";
  return note + "; not a candidate";
}

}  // namespace

int ChooseCandidate(std::vector<Candidate>& candidates, const SelectionOptions& options,
                    std::string& note) {
  std::vector<double> crit;
  std::vector<int> k;
  std::vector<bool> usable, determined;
  for (const auto& c : candidates) {
    crit.push_back(c.usable ? c.aicc : kInf);
    k.push_back(c.free_parameters);
    usable.push_back(c.usable);
    determined.push_back(c.undetermined.empty());
  }
  const Selection sel = SelectStructure(crit, k, usable, options, determined);
  note.clear();
  for (size_t i = 0; i < candidates.size(); ++i) {
    Candidate& c = candidates[i];
    c.delta_aicc = c.usable && sel.smallest >= 0 ? c.aicc - crit[sel.smallest] : kInf;
    c.smallest = static_cast<int>(i) == sel.smallest;
    c.chosen = static_cast<int>(i) == sel.chosen;
  }
  if (sel.chosen != sel.smallest) {
    const Candidate& a = candidates[static_cast<size_t>(sel.chosen)];
    const Candidate& b = candidates[static_cast<size_t>(sel.smallest)];
    const std::string b_name(StructureName(b.structure));
    note = std::string(StructureName(a.structure)) + " is chosen: within delta AICc " +
           Num(options.support_width) + " of the smallest (" + b_name + ", delta " +
           Num(a.delta_aicc) + ") ";
    if (a.free_parameters == b.free_parameters) {
      note += "with as many parameters, and the data determine its parameters while " + b_name +
              "'s are not (" + b.undetermined + ")";
    } else {
      note += "it has the fewest parameters (" + std::to_string(a.free_parameters) + " against " +
              std::to_string(b.free_parameters) +
              "), and a difference that small is no evidence for the larger structure";
    }
  }
  return sel.chosen;
}

FitResult FitStructure(Structure s, const StepRecording& rec, const RecordingAnalysis& a,
                       const FitOptions& options, const FitResult* seed) {
  auto begin = std::chrono::steady_clock::now();
  const size_t n = rec.t.size();
  const double h = a.sample_period;
  const double d = rec.t.back() - rec.t.front();
  std::vector<double> lo, hi;
  Bounds(s, h, d, lo, hi);
  std::vector<bool> fixed(FullParameterCount(s), false);
  fixed[DriftIndex(s)] = s != Structure::kIntegrating;

  // Multi-start on a thinned copy, then the polish on every sample.
  SolveReport best = CoarseFit(s, rec, a, options, seed ? seed->values : std::vector<double>{},
                               fixed, lo, hi, true);
  SolveOptions so;
  so.max_iterations = options.max_iterations;
  so.compute_covariance = true;
  so.initial_trust_region_radius = kNearRadius;
  Prepared full = Prepare(rec, a.input_baseline);
  OutputErrorProblem fpb = full.problem();
  fpb.structure = s;
  SolveReport report = SolveOutputError(fpb, best.x, fixed, lo, hi, so);
  if (options.robust != FitOptions::Robust::kNone) {
    report = Reweight(full, s, report, fixed, lo, hi, options.robust, so);
    fpb = full.problem();
    fpb.structure = s;
    if (report.covariance_ok) {
      OutputErrorProblem plain = fpb;
      plain.weight = {};
      RobustCovariance(plain, fixed, options.robust, report);
    }
  }

  FitResult fit;
  fit.structure = s;
  fit.samples = n;
  fit.free_parameters = report.free_parameters;
  fit.iterations = report.iterations;
  fit.converged = report.converged;
  fit.termination = report.termination;
  fit.input_baseline = a.input_baseline;
  fit.rank_deficiency = report.rank_deficiency;
  fit.covariance_ok = report.covariance_ok;

  // Canonical order (tau1 >= tau2) for values and covariance.
  const int ps = ParameterCount(s);
  std::vector<double> x = report.x;
  std::vector<int> perm = Canonicalize(s, std::span<double>(x.data(), static_cast<size_t>(ps)));
  fit.values.assign(x.begin(), x.begin() + ps);
  const int pf = FullParameterCount(s);
  Eigen::MatrixXd cov_full =
      report.covariance.size() ? report.covariance : Eigen::MatrixXd::Zero(pf, pf);
  std::vector<int> full_perm(pf);
  for (int i = 0; i < pf; ++i) full_perm[i] = i < ps ? perm[i] : i;
  Eigen::MatrixXd cov(pf, pf);
  for (int i = 0; i < pf; ++i) {
    for (int j = 0; j < pf; ++j) cov(i, j) = cov_full(full_perm[i], full_perm[j]);
  }
  fit.covariance = cov.topLeftCorner(ps, ps);

  const double dof = static_cast<double>(n) - report.free_parameters;
  const double tq = StudentQuantile(0.975, dof);
  auto estimate = [&](const std::string& name, const std::string& unit, int i) {
    ParameterEstimate e;
    e.name = name;
    e.unit = unit;
    e.value = x[i];
    if (fit.covariance_ok && cov(i, i) >= 0.0) {
      e.sd = std::sqrt(cov(i, i));
      e.ci_low = e.value - tq * e.sd;
      e.ci_high = e.value + tq * e.sd;
    }
    return e;
  };
  std::vector<ParameterInfo> infos = ParameterInfos(s, options.input_unit, options.output_unit);
  for (int i = 0; i < ps; ++i) fit.parameters.push_back(estimate(infos[i].name, infos[i].unit, i));
  const std::string yu = options.output_unit.empty() ? "output" : options.output_unit;
  fit.output_offset = estimate("output_offset", yu, OffsetIndex(s));
  if (!fixed[DriftIndex(s)]) fit.output_drift = estimate("output_drift", yu + "/s", DriftIndex(s));
  fit.tf = StructureTransferFunction(s, fit.values);

  // Quality of the fit on every sample, unweighted (r = yhat - y; only |r| is used below).
  OutputErrorProblem plain = fpb;
  plain.weight = {};
  plain.first_residual = 0;
  std::vector<double> r(n);
  EvaluateOutputError(plain, report.x, r.data(), nullptr);
  full = Prepared{};  // the input deviations are no longer needed
  double rss = 0.0, ss = 0.0, ymean = 0.0;
  for (double v : rec.y) ymean += v;
  ymean /= static_cast<double>(n);
  for (size_t k = 0; k < n; ++k) {
    rss += r[k] * r[k];
    ss += (rec.y[k] - ymean) * (rec.y[k] - ymean);
  }
  fit.residual_rms = std::sqrt(rss / static_cast<double>(n));
  fit.fit_percent = ss > 0.0 ? 100.0 * (1.0 - std::sqrt(rss / ss)) : 0.0;
  fit.aicc = Aicc(rss, n, report.free_parameters);
  fit.bic = Bic(rss, n, report.free_parameters);

  // Warnings about this model.
  const double dead = fit.values.back();
  if (dead < h && dead > 0.0) {
    fit.warnings.push_back("the dead time (" + Num(dead) + " s) is below one sample period (" +
                           Num(h) + " s): it rests on interpolation between samples");
  }
  if (!fit.rank_deficiency.empty()) {
    fit.warnings.push_back("no confidence intervals: " + fit.rank_deficiency);
  }
  for (int i = 1; i < ps - 1; ++i) {
    const double v = fit.values[i];
    if (s == Structure::kUnderdamped && i == 1 && v >= 0.999) {
      fit.warnings.push_back("the damping ratio reached 1 (the response is not underdamped)");
    } else if ((s != Structure::kUnderdamped) && std::isfinite(lo[i]) && v <= lo[i] * 1.0001 &&
               lo[i] > 0) {
      fit.warnings.push_back(fit.parameters[i].name + " reached its lower bound (" + Num(lo[i]) +
                             " s): the data show no such lag");
    }
  }
  if (options.robust == FitOptions::Robust::kNone) {
    const double sd = 1.4826 * MedianAbs(r);
    const double z = OutlierThreshold(n);
    size_t outliers = 0;
    double first_t = 0.0;
    for (size_t k = 0; k < n; ++k) {
      if (sd > 0.0 && std::abs(r[k]) > z * sd) {
        if (!outliers) first_t = rec.t[k];
        ++outliers;
      }
    }
    if (outliers) {
      const bool one = outliers == 1;
      fit.warnings.push_back(std::to_string(outliers) +
                             (one ? " outlier (residual" : " outliers (residuals") + " beyond " +
                             Num(z) + " robust sd)" + (one ? " at" : ", the first at") +
                             " t = " + Num(first_t) + " s; consider --robust");
    }
  }
  fit.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - begin).count();
  return fit;
}

Identification Identify(const StepRecording& recording, const FitOptions& options) {
  options.Validate();
  if (recording.u.size() != recording.t.size() || recording.y.size() != recording.t.size()) {
    throw DataError("time, input and output columns differ in length");
  }
  Identification id;
  StepRecording own;  // only filled when the window or decimation change the data
  const StepRecording* use = &recording;
  if (std::isfinite(options.window_start) || std::isfinite(options.window_end)) {
    own = SelectWindow(recording, options.window_start, options.window_end);
    use = &own;
    const StepRecording& rec = own;
    if (rec.t.size() < 10) {
      throw UsageError("window " + Num(options.window_start) + ":" + Num(options.window_end) +
                       " keeps " + std::to_string(rec.t.size()) +
                       " samples: a fit needs at least 10");
    }
  }
  id.samples_in = use->t.size();
  std::optional<RecordingAnalysis> raw;  // of the record before decimation
  if (use->t.size() > options.decimate_above) {
    id.decimation =
        static_cast<int>((use->t.size() + options.decimate_to - 1) / options.decimate_to);
    // Refuse bad data before filtering hides it, and keep the baselines: the filter smears a
    // step over the samples before it, which would move the decimated record's baseline means
    // (and so the input deviation the gain is measured against).
    raw = AnalyseRecording(use->t, use->u, use->y);
    own = Decimate(*use, id.decimation);
    use = &own;
    id.warnings.push_back("the record was decimated by " + std::to_string(id.decimation) + " (" +
                          std::to_string(id.samples_in) + " -> " + std::to_string(own.t.size()) +
                          " samples) after an anti-alias low-pass filter");
  }
  const StepRecording& rec = *use;
  RecordingAnalysis a = AnalyseRecording(rec.t, rec.u, rec.y);
  if (raw) {
    a.input_baseline = raw->input_baseline;
    a.output_baseline = raw->output_baseline;
  }
  id.analysis = a;
  // The fit of the record as used: a decimated record's residuals are filtered noise, whose
  // low-frequency density the white-noise covariance understates (preprocess.h).
  auto FitDecimated = [&](Structure s, const FitResult* seed) {
    FitResult f = FitStructure(s, rec, a, options, seed);
    if (id.decimation > 1) ScaleUncertainty(f, DecimatedNoiseRatio(id.decimation));
    return f;
  };
  if (a.steps.size() > 1) {
    id.warnings.push_back(std::to_string(a.steps.size()) +
                          " steps found in the input (all used by the fit)");
  }
  if (!a.settled) {
    id.warnings.push_back("the response has not settled by the end of the record");
  }
  if (std::abs(a.output_change) < 10.0 * a.output_noise_sd) {
    id.warnings.push_back("the step is small for the noise: output change " + Num(a.output_change) +
                          " against noise sd " + Num(a.output_noise_sd) +
                          " (common practice asks for at least 10 times)");
  }
  if (!a.uniform) {
    id.warnings.push_back("irregular sampling (intervals from " + Num(a.min_interval) + " to " +
                          Num(a.max_interval) + " s): the fit uses the recorded instants exactly");
  }
  if (a.clipped_samples >= 3) {
    id.warnings.push_back("the output sits at " + Num(a.clipped_level) + " for " +
                          std::to_string(a.clipped_samples) +
                          " samples from t = " + Num(a.clipped_from) + " s: possible saturation");
  }
  if (a.baseline_samples < 5) {
    id.warnings.push_back("only " + std::to_string(a.baseline_samples) +
                          (a.baseline_samples == 1 ? " sample" : " samples") +
                          " before the first step: the baseline is uncertain");
  }

  if (options.structure != "auto") {
    Structure s = ParseStructure(options.structure);
    FitResult seed;
    const FitResult* seed_ptr = nullptr;
    if (s != Structure::kFopdt) {
      seed = SeedFit(s == Structure::kSopdtZero ? Structure::kSopdt : Structure::kFopdt, rec, a,
                     options);
      seed_ptr = &seed;
    }
    id.model = FitDecimated(s, seed_ptr);
    if (!id.model.converged) {
      throw JobFailed("the " + std::string(StructureName(s)) +
                      " fit did not converge (Ceres: " + id.model.termination + ")");
    }
  } else {
    id.automatic = true;
    id.selection = options.selection;
    std::vector<FitResult> fits;
    std::vector<double> crit;
    std::vector<bool> usable;
    FitResult fopdt, sopdt;
    for (Structure s : AllStructures()) {
      Candidate c;
      c.structure = s;
      if (s == Structure::kIntegrating && a.settled && a.input_away) {
        c.note = "not tried: the response settles";
        id.candidates.push_back(c);
        fits.emplace_back();
        crit.push_back(kInf);
        usable.push_back(false);
        continue;
      }
      const FitResult* seed = s == Structure::kFopdt       ? nullptr
                              : s == Structure::kSopdtZero ? &sopdt
                                                           : &fopdt;
      FitResult f = FitDecimated(s, seed);
      if (s == Structure::kFopdt) fopdt = f;
      if (s == Structure::kSopdt) sopdt = f;
      c.usable = f.converged;
      c.fitted = true;
      if (!f.converged) c.note = NotConvergedNote(f, options);
      c.fit_percent = f.fit_percent;
      c.residual_rms = f.residual_rms;
      c.aicc = f.aicc;
      c.free_parameters = f.free_parameters;
      c.undetermined = Undetermined(f);
      id.candidates.push_back(c);
      crit.push_back(f.aicc);
      usable.push_back(c.usable);
      fits.push_back(std::move(f));
    }
    const int best = ChooseCandidate(id.candidates, options.selection, id.selection_note);
    if (best < 0) throw JobFailed("no structure could be fitted to the recording");
    id.model = fits[static_cast<size_t>(best)];
  }
  for (const auto& w : id.model.warnings) id.warnings.push_back(w);
  return id;
}

}  // namespace lw
