// Checking a model against a closed-loop recording (method in closed_loop_check.h).
#include "design/closed_loop_check.h"

#include <algorithm>
#include <cmath>
#include <functional>
#include <random>
#include <string>

#include "design/applied_gain.h"
#include "design/parallel_for.h"
#include "lti/error.h"
#include "lti/number_text.h"
#include "lti/simulate.h"

namespace lw {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr size_t kMetrics = kCheckMetricCount;
using MetricValues = std::array<double, kMetrics>;

std::string Num(double v) { return SignificantText(v, 4); }

// Mean of the middle half (25 % trimmed on each side); the median of fewer than 4 values.
double MiddleMean(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  const size_t n = v.size(), cut = n < 4 ? 0 : n / 4;
  if (n < 4) return v[n / 2];
  double s = 0.0;
  for (size_t i = cut; i < n - cut; ++i) s += v[i];
  return s / static_cast<double>(n - 2 * cut);
}

// 1.4826 MAD(second differences) / sqrt(6), as step_metrics.cc estimates output noise.
double DifferenceNoiseSd(std::span<const double> x) {
  if (x.size() < 5) return 0.0;
  std::vector<double> d(x.size() - 2);
  for (size_t i = 1; i + 1 < x.size(); ++i) d[i - 1] = x[i + 1] - 2.0 * x[i] + x[i - 1];
  auto median = [](std::vector<double>& v) {
    std::nth_element(v.begin(), v.begin() + static_cast<long>(v.size() / 2), v.end());
    return v[v.size() / 2];
  };
  const double m = median(d);
  for (double& e : d) e = std::abs(e - m);
  return 1.4826 * median(d) / std::sqrt(6.0);
}

// The p-quantile of sorted values with linear interpolation between order statistics at
// position p (n - 1) (the usual "linear" definition, numpy's default).
double SortedQuantile(const std::vector<double>& sorted, double p) {
  const double pos = p * static_cast<double>(sorted.size() - 1);
  const size_t i = static_cast<size_t>(std::floor(pos));
  if (i + 1 >= sorted.size()) return sorted.back();
  return sorted[i] + (pos - static_cast<double>(i)) * (sorted[i + 1] - sorted[i]);
}

// Standard normal numbers: a 64-bit Mersenne Twister with a Box-Muller transform written here,
// so a seed gives the same numbers on every platform.
class Gauss {
 public:
  explicit Gauss(uint64_t seed) : rng_(seed) {}
  double operator()() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    constexpr double kTwoPi = 6.283185307179586;
    const double a = (static_cast<double>(rng_() >> 11) + 0.5) * 0x1.0p-53;
    const double b = static_cast<double>(rng_() >> 11) * 0x1.0p-53;
    const double rad = std::sqrt(-2.0 * std::log(a));
    spare_ = rad * std::sin(kTwoPi * b);
    has_spare_ = true;
    return rad * std::cos(kTwoPi * b);
  }

 private:
  std::mt19937_64 rng_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

bool AllFinite(std::span<const double> v) {
  return std::all_of(v.begin(), v.end(), [](double x) { return std::isfinite(x); });
}

struct Trace {
  std::vector<double> y, u;
};

// What the check knows about the record, shared by the measured, predicted and noisy runs.
struct Setup {
  CheckRecord rec;
  const Controller* controller = nullptr;
  double gain = 0.0;
  std::vector<StepCheck> steps;
  StepMetricsOptions base;  // rise and settle settings
  double y0 = 0.0, u0 = 0.0;
  std::vector<double> dr;  // r - r[0]
};

Trace PredictTrace(const Setup& s, const TransferFunction& plant) {
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  ClosedLoopResponse resp = SimulateClosedLoop(plant, *s.controller, s.gain, s.rec.t, s.dr, so);
  for (double& v : resp.y) v += s.y0;
  for (double& v : resp.u) v += s.u0;
  return {std::move(resp.y), std::move(resp.u)};
}

MetricValues NaNValues() {
  MetricValues v;
  v.fill(kNaN);
  return v;
}

// The metrics of one step of a trace; all NaN when the trace is not finite there.
MetricValues StepValues(const Setup& s, const StepCheck& st, std::span<const double> y,
                        std::span<const double> u, bool noisy) {
  const size_t b = st.begin, n = st.end - st.begin;
  std::span<const double> ys = y.subspan(b, n);
  std::span<const double> us = u.empty() ? std::span<const double>() : u.subspan(b, n);
  if (!AllFinite(ys) || !AllFinite(us)) return NaNValues();
  StepMetricsOptions o = s.base;
  o.noisy = noisy;
  StepMetrics m = MeasureStep(s.rec.t.subspan(b, n), ys, st.at, o, st.to, us);
  return {m.rise_time,     m.overshoot_percent,  m.peak_time,
          m.settling_time, m.steady_state_error, us.empty() ? kNaN : m.peak_actuator};
}

std::vector<MetricValues> AllStepValues(const Setup& s, std::span<const double> y,
                                        std::span<const double> u, bool noisy) {
  std::vector<MetricValues> out;
  for (const StepCheck& st : s.steps) out.push_back(StepValues(s, st, y, u, noisy));
  return out;
}

std::vector<StepCheck> FindSteps(const CheckRecord& rec, int min_samples) {
  const auto [lo, hi] = std::minmax_element(rec.r.begin(), rec.r.end());
  const double tol = 1e-9 * std::max(1.0, *hi - *lo);
  std::vector<size_t> at;
  for (size_t k = 1; k < rec.r.size(); ++k) {
    if (std::abs(rec.r[k] - rec.r[k - 1]) > tol) at.push_back(k);
  }
  if (at.empty()) {
    throw DataError("the reference never steps (it stays at " + Num(rec.r[0]) +
                    "): a check needs at least one reference step in the recording");
  }
  const size_t need = static_cast<size_t>(min_samples);
  auto gap_error = [&](double a, double b, size_t gap, const std::string& what) {
    return DataError("reference " + what + " t = " + Num(a) + " s and t = " + Num(b) + " s are " +
                     std::to_string(gap) + " samples apart; each step needs at least " +
                     std::to_string(need) + " samples on either side");
  };
  if (at[0] < need) throw gap_error(rec.t[0], rec.t[at[0]], at[0], "start and step at");
  for (size_t i = 0; i < at.size(); ++i) {
    const size_t next = i + 1 < at.size() ? at[i + 1] : rec.r.size();
    if (next - at[i] < need) {
      throw gap_error(rec.t[at[i]], rec.t[next - (i + 1 < at.size() ? 0 : 1)], next - at[i],
                      i + 1 < at.size() ? "steps at" : "step at and end at");
    }
  }
  std::vector<StepCheck> steps;
  for (size_t i = 0; i < at.size(); ++i) {
    StepCheck st;
    st.begin = i == 0 ? 0 : at[i - 1];
    st.step = at[i];
    st.end = i + 1 < at.size() ? at[i + 1] : rec.r.size();
    st.at = rec.t[at[i]];
    st.from = rec.r[at[i] - 1];
    st.to = rec.r[at[i]];
    steps.push_back(st);
  }
  return steps;
}

// Part 1 of the tolerance: [lo, hi] of the nominal and the draws' central fraction, and the
// fraction of the values that are NaN.
struct Spread {
  double lo = kNaN, hi = kNaN, nan_fraction = 0.0;
};
Spread SpreadOf(double nominal, const std::vector<double>& values, double coverage) {
  std::vector<double> finite;
  for (double v : values) {
    if (std::isfinite(v)) finite.push_back(v);
  }
  Spread s;
  if (!values.empty()) {
    s.nan_fraction = 1.0 - static_cast<double>(finite.size()) / static_cast<double>(values.size());
  }
  if (!finite.empty()) {
    std::sort(finite.begin(), finite.end());
    s.lo = SortedQuantile(finite, 0.5 * (1.0 - coverage));
    s.hi = SortedQuantile(finite, 0.5 * (1.0 + coverage));
  }
  if (std::isfinite(nominal)) {
    s.lo = std::isfinite(s.lo) ? std::min(s.lo, nominal) : nominal;
    s.hi = std::isfinite(s.hi) ? std::max(s.hi, nominal) : nominal;
  }
  return s;
}

// Part 2: the offsets' interval [min(mean - f sd, min), max(mean + f sd, max)], containing 0.
std::pair<double, double> NoiseOffsets(const std::vector<double>& offsets, double factor) {
  std::vector<double> d;
  for (double v : offsets) {
    if (std::isfinite(v)) d.push_back(v);
  }
  if (d.empty()) return {0.0, 0.0};
  double mean = 0.0;
  for (double v : d) mean += v;
  mean /= static_cast<double>(d.size());
  double ss = 0.0;
  for (double v : d) ss += (v - mean) * (v - mean);
  const double sd = d.size() > 1 ? std::sqrt(ss / static_cast<double>(d.size() - 1)) : 0.0;
  const auto [mn, mx] = std::minmax_element(d.begin(), d.end());
  return {std::min({mean - factor * sd, *mn, 0.0}), std::max({mean + factor * sd, *mx, 0.0})};
}

double MedianInterval(std::span<const double> t) {
  std::vector<double> dt(t.size() - 1);
  for (size_t i = 0; i + 1 < t.size(); ++i) dt[i] = t[i + 1] - t[i];
  std::nth_element(dt.begin(), dt.begin() + static_cast<long>(dt.size() / 2), dt.end());
  return dt[dt.size() / 2];
}

// Marks the samples where u is at an actuator limit (file comment of the header); value[k] is the
// limit it sits at.
std::vector<double> LimitSamples(const Setup& s, const ClosedLoopCheckOptions& o, double sd_y,
                                 const std::vector<double>& expected_error) {
  const CheckRecord& rec = s.rec;
  const size_t n = rec.t.size();
  std::vector<double> value(n, kNaN);
  if (rec.u.empty()) return value;
  if (o.actuator) {
    const double lo = o.actuator->low, hi = o.actuator->high, tol = 1e-6 * (hi - lo);
    for (size_t k = 0; k < n; ++k) {
      if (rec.u[k] <= lo + tol) value[k] = lo;
      if (rec.u[k] >= hi - tol) value[k] = hi;
    }
    return value;
  }
  const auto [mn, mx] = std::minmax_element(rec.u.begin(), rec.u.end());
  const double tol = 1e-9 * std::max({*mx - *mn, std::abs(*mx), std::abs(*mn), 1e-300});
  // Away: y differs from the level the step settles at (the middle mean of its last fifth), or
  // r - y from the predicted steady-state error, by more than the settling band and 3 noise sd.
  // The samples before the first step are at rest.
  std::vector<bool> away(n, false);
  for (size_t i = 0; i < s.steps.size(); ++i) {
    const StepCheck& st = s.steps[i];
    const double e_ss = std::isfinite(expected_error[i]) ? expected_error[i] : 0.0;
    const long tail = static_cast<long>(std::max<size_t>(1, (st.end - st.step) / 5));
    const double final_level = MiddleMean({rec.y.begin() + static_cast<long>(st.end) - tail,
                                           rec.y.begin() + static_cast<long>(st.end)});
    const double band = s.base.settle_band * std::abs(st.to - st.from) + 3.0 * sd_y;
    for (size_t k = st.step; k < st.end; ++k) {
      away[k] =
          std::abs(rec.y[k] - final_level) > band || std::abs(rec.r[k] - rec.y[k] - e_ss) > band;
    }
  }
  std::vector<double> candidate(n, kNaN);
  for (size_t k = 0; k < n; ++k) {
    if (!away[k]) continue;
    if (std::abs(rec.u[k] - *mx) <= tol)
      candidate[k] = *mx;
    else if (std::abs(rec.u[k] - *mn) <= tol)
      candidate[k] = *mn;
  }
  for (size_t k = 0; k < n;) {
    size_t e = k;
    while (e < n && std::isfinite(candidate[k]) && candidate[e] == candidate[k]) ++e;
    if (e == k) {
      ++k;
      continue;
    }
    if (e - k >= static_cast<size_t>(o.min_limit_samples)) {
      for (size_t j = k; j < e; ++j) value[j] = candidate[j];
    }
    k = e;
  }
  return value;
}

void JudgeLimits(Setup& s, const ClosedLoopCheckOptions& o, double sd_y,
                 const std::vector<double>& expected_error) {
  const std::vector<double> value = LimitSamples(s, o, sd_y, expected_error);
  const std::span<const double> t = s.rec.t;
  const double dt = MedianInterval(t);
  for (StepCheck& st : s.steps) {
    std::vector<std::pair<double, double>> time_at;  // (limit, seconds), at most two limits
    for (size_t k = st.step; k < st.end; ++k) {
      if (!std::isfinite(value[k])) continue;
      const double w = k + 1 < t.size() ? t[k + 1] - t[k] : t[k] - t[k - 1];
      auto it = std::find_if(time_at.begin(), time_at.end(),
                             [&](const auto& e) { return e.first == value[k]; });
      if (it == time_at.end())
        time_at.push_back({value[k], w});
      else
        it->second += w;
    }
    st.time_at_limit = 0.0;
    double longest = 0.0;
    for (const auto& [limit, seconds] : time_at) {
      st.time_at_limit += seconds;
      if (seconds > longest) {
        longest = seconds;
        st.limit_value = limit;
      }
    }
    const double after = t[st.end - 1] - t[st.step];
    st.at_limit = st.time_at_limit > 0.0 &&
                  st.time_at_limit >= static_cast<double>(o.min_limit_samples) * dt * (1 - 1e-9) &&
                  st.time_at_limit >= o.limit_time_fraction * after;
  }
}

void JudgeMetric(MetricCheck& m, const Spread& sp, std::pair<double, double> noise,
                 double nan_replicates) {
  m.draws_lo = sp.lo;
  m.draws_hi = sp.hi;
  m.noise_lo = noise.first;
  m.noise_hi = noise.second;
  if (std::isfinite(sp.lo)) {
    m.lo = sp.lo + m.noise_lo - m.resolution;
    m.hi = sp.hi + m.noise_hi + m.resolution;
  }
  if (!m.judged) return;
  if (std::isnan(m.measured)) {
    m.consistent = std::isnan(m.predicted) || sp.nan_fraction >= 0.025 || nan_replicates >= 0.025;
  } else {
    m.consistent = std::isfinite(m.lo) && m.measured >= m.lo && m.measured <= m.hi;
  }
}

// Empty when the nominal prediction overshoots by more than noise and resolution can hide (the
// rule of the file comment); else why the peak time is not judged.
std::string NoPeakReason(const MetricCheck& overshoot) {
  const double allowance = overshoot.resolution - overshoot.noise_lo;
  if (overshoot.predicted > allowance) return {};
  return "no peak: the predicted overshoot " + Num(overshoot.predicted) + " % is within the " +
         Num(allowance) + " % that noise and resolution allow, so the response has no peak to time";
}

void Conclude(ClosedLoopCheck& c) {
  for (const StepCheck& st : c.steps) {
    if (!st.at_limit) continue;
    c.verdict = CheckVerdict::kSaturated;
    c.reason = "the actuator sat at its limit " + Num(st.limit_value) + " for " +
               Num(st.time_at_limit) + " s after the reference step at t = " + Num(st.at) +
               " s, so a linear prediction does not apply there";
    return;
  }
  size_t judged = 0, failed = 0;
  std::string first;
  for (const StepCheck& st : c.steps) {
    for (size_t i = 0; i < kMetrics; ++i) {
      const MetricCheck& m = st.metrics[i];
      if (!m.judged) continue;
      ++judged;
      if (m.consistent) continue;
      if (failed++ == 0) {
        const std::string unit(CheckMetricUnit(static_cast<CheckMetric>(i)));
        const std::string u = unit.empty() ? "" : " " + unit;
        first = std::string(CheckMetricLabel(static_cast<CheckMetric>(i))) + " " + Num(m.measured) +
                u + " measured, " +
                (std::isfinite(m.lo) ? Num(m.lo) + " to " + Num(m.hi) + u : std::string("n/a")) +
                " expected (step at t = " + Num(st.at) + " s)";
      }
    }
  }
  if (failed > 0) {
    c.verdict = CheckVerdict::kStale;
    c.reason = first +
               (failed > 1 ? "; " + std::to_string(failed - 1) + " more of " +
                                 std::to_string(judged) + " metrics outside"
                           : std::string()) +
               ": the rig no longer behaves as the model says, refit";
    return;
  }
  c.verdict = CheckVerdict::kConfirmed;
  c.reason = "all " + std::to_string(judged) + " metrics of " + std::to_string(c.steps.size()) +
             (c.steps.size() == 1 ? " step" : " steps") + " within their tolerances (fit " +
             SignificantText(c.fit_percent, 3) + " %)";
}

void ValidateRecord(const CheckRecord& rec) {
  const size_t n = rec.t.size();
  if (rec.r.size() != n || rec.y.size() != n || (!rec.u.empty() && rec.u.size() != n)) {
    throw UsageError("closed-loop check: t, r, u and y must have the same length (t " +
                     std::to_string(n) + ", r " + std::to_string(rec.r.size()) + ", u " +
                     std::to_string(rec.u.size()) + ", y " + std::to_string(rec.y.size()) + ")");
  }
  if (n < 3) throw UsageError("closed-loop check: needs at least 3 samples");
  for (size_t k = 0; k < n; ++k) {
    if (!std::isfinite(rec.t[k]) || (k > 0 && !(rec.t[k] > rec.t[k - 1]))) {
      throw UsageError("closed-loop check: time must be finite and strictly increasing (sample " +
                       std::to_string(k + 1) + ")");
    }
  }
  auto finite = [&](std::span<const double> v, const char* name) {
    for (size_t k = 0; k < v.size(); ++k) {
      if (!std::isfinite(v[k])) {
        throw DataError(std::string("closed-loop check: ") + name +
                        " is not finite at t = " + Num(rec.t[k]) + " s");
      }
    }
  };
  finite(rec.r, "the reference");
  finite(rec.u, "the actuator");
  finite(rec.y, "the output");
}

// Pointwise central-`coverage` envelope of the traces (every stride-th sample, linear in the
// sample index between), widened to include the nominal.
void Envelope(const std::vector<std::vector<double>>& traces, const std::vector<double>& nominal,
              size_t stride, double coverage, std::vector<double>& lo, std::vector<double>& hi) {
  const size_t n = nominal.size();
  lo = nominal;
  hi = nominal;
  if (traces.empty() || n == 0) return;
  std::vector<size_t> at;
  for (size_t k = 0; k < n; k += stride) at.push_back(k);
  if (at.back() != n - 1) at.push_back(n - 1);
  std::vector<double> qlo(at.size()), qhi(at.size()), col;
  for (size_t j = 0; j < at.size(); ++j) {
    col.clear();
    for (const auto& tr : traces) {
      const double v = tr[j];
      if (std::isfinite(v)) col.push_back(v);
    }
    if (col.empty()) {
      qlo[j] = qhi[j] = nominal[at[j]];
      continue;
    }
    std::sort(col.begin(), col.end());
    qlo[j] = SortedQuantile(col, 0.5 * (1.0 - coverage));
    qhi[j] = SortedQuantile(col, 0.5 * (1.0 + coverage));
  }
  for (size_t j = 0; j + 1 < at.size(); ++j) {
    for (size_t k = at[j]; k <= at[j + 1]; ++k) {
      const double w = static_cast<double>(k - at[j]) / static_cast<double>(at[j + 1] - at[j]);
      lo[k] = std::min(nominal[k], qlo[j] + w * (qlo[j + 1] - qlo[j]));
      hi[k] = std::max(nominal[k], qhi[j] + w * (qhi[j + 1] - qhi[j]));
    }
  }
}

// Throws DataError when the output responded to no reference step while the model says it
// should have (the file comment of the header, "A record without a response").
void RefuseWithoutResponse(const Setup& s, std::span<const double> predicted_y, double sd_y) {
  std::span<const double> y = s.rec.y;
  auto moved = [](std::span<const double> v, const StepCheck& st) {
    const double before = MiddleMean(
        {v.begin() + static_cast<long>(st.begin), v.begin() + static_cast<long>(st.step)});
    double most = 0.0;
    for (size_t k = st.step; k < st.end; ++k) most = std::max(most, std::abs(v[k] - before));
    return most;
  };
  double largest = 0.0, expected = 0.0, threshold = 0.0;
  for (const StepCheck& st : s.steps) {
    const double limit = std::max(5.0 * sd_y, s.base.settle_band * std::abs(st.to - st.from));
    const double seen = moved(y, st), wanted = moved(predicted_y, st);
    if (seen >= limit || !(wanted > 2.0 * limit)) return;  // a response, or none expected
    if (&st == &s.steps.front()) {
      threshold = limit;
      expected = wanted;
    }
    largest = std::max(largest, seen);
  }
  const StepCheck& first = s.steps.front();
  const std::string steps =
      s.steps.size() == 1
          ? "the reference stepped by " + Num(first.to - first.from) + " at t = " + Num(first.at) +
                " s"
          : "each of the " + std::to_string(s.steps.size()) + " reference steps (the first by " +
                Num(first.to - first.from) + " at t = " + Num(first.at) + " s)";
  throw DataError("the output moved by at most " + Num(largest) + ", less than " + Num(threshold) +
                  " (5 noise sd or " + Num(100.0 * s.base.settle_band) + " % of the step), after " +
                  steps + ", where the model predicts " + Num(expected) +
                  ": the loop did not respond (a dead sensor, the wrong output column or the "
                  "loop not closed?), so there is nothing to check");
}

}  // namespace

void ClosedLoopCheckOptions::Validate() const {
  auto fail = [](const std::string& field, double v, const std::string& rule) {
    throw UsageError("closed-loop check " + field + " = " + Num(v) + ": " + rule);
  };
  if (!(coverage > 0.0 && coverage < 1.0)) fail("coverage", coverage, "it must be in (0, 1)");
  if (noise_replicates < 20) fail("noise_replicates", noise_replicates, "it must be >= 20");
  if (!(noise_sd_factor > 0.0) || !std::isfinite(noise_sd_factor)) {
    fail("noise_sd_factor", noise_sd_factor, "it must be a number > 0");
  }
  if (actuator && !(actuator->low < actuator->high && std::isfinite(actuator->low) &&
                    std::isfinite(actuator->high))) {
    fail("actuator.low", actuator->low, "the limits must be finite with low < high");
  }
  if (min_limit_samples < 1) fail("min_limit_samples", min_limit_samples, "it must be >= 1");
  if (!(limit_time_fraction >= 0.0 && limit_time_fraction < 1.0)) {
    fail("limit_time_fraction", limit_time_fraction, "it must be in [0, 1)");
  }
  if (min_step_samples < 3) fail("min_step_samples", min_step_samples, "it must be >= 3");
  if (threads < 1) fail("threads", threads, "it must be >= 1");
  StepMetricsOptions m;
  m.rise_low = rise_low;
  m.rise_high = rise_high;
  m.settle_band = settle_band;
  m.Validate();
}

std::string_view CheckMetricKey(CheckMetric m) {
  switch (m) {
    case CheckMetric::kRiseTime:
      return "rise_time";
    case CheckMetric::kOvershoot:
      return "overshoot_percent";
    case CheckMetric::kPeakTime:
      return "peak_time";
    case CheckMetric::kSettlingTime:
      return "settling_time";
    case CheckMetric::kSteadyStateError:
      return "steady_state_error";
    case CheckMetric::kPeakActuator:
      return "peak_actuator";
  }
  return "?";
}

std::string_view CheckMetricLabel(CheckMetric m) {
  switch (m) {
    case CheckMetric::kRiseTime:
      return "rise time";
    case CheckMetric::kOvershoot:
      return "overshoot";
    case CheckMetric::kPeakTime:
      return "peak time";
    case CheckMetric::kSettlingTime:
      return "settling time";
    case CheckMetric::kSteadyStateError:
      return "steady-state error";
    case CheckMetric::kPeakActuator:
      return "peak actuator";
  }
  return "?";
}

std::string_view CheckMetricUnit(CheckMetric m) {
  switch (m) {
    case CheckMetric::kRiseTime:
    case CheckMetric::kPeakTime:
    case CheckMetric::kSettlingTime:
      return "s";
    case CheckMetric::kOvershoot:
      return "%";
    default:
      return "";
  }
}

std::string_view CheckVerdictName(CheckVerdict v) {
  switch (v) {
    case CheckVerdict::kConfirmed:
      return "confirmed";
    case CheckVerdict::kStale:
      return "stale";
    case CheckVerdict::kSaturated:
      return "saturated";
  }
  return "?";
}

ClosedLoopCheck CheckClosedLoop(const TransferFunction& plant,
                                const std::vector<TransferFunction>& draws,
                                const Controller& controller, double gain,
                                const CheckRecord& record, const ClosedLoopCheckOptions& options) {
  options.Validate();
  ValidateRecord(record);
  Setup s;
  s.rec = record;
  s.controller = &controller;
  s.gain = gain;
  s.base.rise_low = options.rise_low;
  s.base.rise_high = options.rise_high;
  s.base.settle_band = options.settle_band;
  s.steps = FindSteps(record, options.min_step_samples);
  const size_t n = record.t.size(), k0 = s.steps[0].step;
  const bool has_u = !record.u.empty();
  s.y0 = MiddleMean({record.y.begin(), record.y.begin() + static_cast<long>(k0)});
  s.u0 = has_u ? MiddleMean({record.u.begin(), record.u.begin() + static_cast<long>(k0)}) : 0.0;
  s.dr.resize(n);
  for (size_t k = 0; k < n; ++k) s.dr[k] = record.r[k] - record.r[0];

  ClosedLoopCheck c;
  c.has_u = has_u;
  c.y0 = s.y0;
  c.u0 = s.u0;
  c.sd_output = DifferenceNoiseSd(record.y);
  c.sd_actuator = has_u ? DifferenceNoiseSd(record.u) : 0.0;
  c.draws = draws.size();
  c.noise_replicates = options.noise_replicates;

  if (k0 >= 6) {
    double first = 0.0, second = 0.0;
    const size_t half = k0 / 2;
    for (size_t k = 0; k < half; ++k) first += record.y[k] / static_cast<double>(half);
    for (size_t k = k0 - half; k < k0; ++k) second += record.y[k] / static_cast<double>(half);
    const double se = c.sd_output * std::sqrt(2.0 / static_cast<double>(half));
    const double band = options.settle_band * std::abs(s.steps[0].to - s.steps[0].from);
    if (std::abs(second - first) > 4.0 * se + band) {
      c.notes.push_back("the output moves from about " + Num(first) + " to " + Num(second) +
                        " before the first reference step at t = " + Num(s.steps[0].at) +
                        " s: the loop may not be at rest there, which the prediction assumes");
    }
  }

  // Nominal prediction and fit.
  Trace nominal = PredictTrace(s, plant);
  RefuseWithoutResponse(s, nominal.y, c.sd_output);
  {
    double mean = 0.0;
    for (size_t k = k0; k < n; ++k) mean += record.y[k];
    mean /= static_cast<double>(n - k0);
    double rss = 0.0, ss = 0.0;
    for (size_t k = k0; k < n; ++k) {
      rss += (record.y[k] - nominal.y[k]) * (record.y[k] - nominal.y[k]);
      ss += (record.y[k] - mean) * (record.y[k] - mean);
    }
    c.fit_percent = ss > 0.0 && std::isfinite(rss) ? 100.0 * (1.0 - std::sqrt(rss / ss)) : kNaN;
  }
  const std::span<const double> u_rec = has_u ? record.u : std::span<const double>();
  const std::span<const double> u_nom =
      has_u ? std::span<const double>(nominal.u) : std::span<const double>();
  const std::vector<MetricValues> measured = AllStepValues(s, record.y, u_rec, true);
  const std::vector<MetricValues> predicted = AllStepValues(s, nominal.y, u_nom, false);

  // Draws: metrics and (every stride-th sample) traces for the envelope.
  const size_t stride = std::max<size_t>(1, (n + 3999) / 4000);
  const size_t kept = (n + stride - 1) / stride + ((n - 1) % stride ? 1 : 0);
  std::vector<std::vector<MetricValues>> draw_values(draws.size());
  std::vector<std::vector<double>> draw_y(draws.size()), draw_u(draws.size());
  ParallelFor(draws.size(), options.threads, [&](size_t, size_t i) {
    Trace tr = PredictTrace(s, draws[i]);
    draw_values[i] = AllStepValues(s, tr.y, has_u ? std::span<const double>(tr.u) : u_rec, false);
    draw_y[i].reserve(kept);
    draw_u[i].reserve(kept);
    for (size_t k = 0; k < n; k += stride) {
      draw_y[i].push_back(tr.y[k]);
      draw_u[i].push_back(tr.u[k]);
    }
    if ((n - 1) % stride) {
      draw_y[i].push_back(tr.y[n - 1]);
      draw_u[i].push_back(tr.u[n - 1]);
    }
  });
  Envelope(draw_y, nominal.y, stride, options.coverage, c.envelope_y_lo, c.envelope_y_hi);
  Envelope(draw_u, nominal.u, stride, options.coverage, c.envelope_u_lo, c.envelope_u_hi);

  // Noise replicates of the nominal prediction, each with its own seeded generator.
  const int reps = options.noise_replicates;
  std::vector<std::vector<MetricValues>> rep_values(static_cast<size_t>(reps));
  ParallelFor(rep_values.size(), options.threads, [&](size_t, size_t j) {
    Gauss g(options.seed * 0x9E3779B97F4A7C15ULL + j + 1);
    std::vector<double> y = nominal.y, u = has_u ? nominal.u : std::vector<double>();
    for (double& v : y) v += c.sd_output * g();
    for (double& v : u) v += c.sd_actuator * g();
    rep_values[j] = AllStepValues(s, y, u, true);
  });

  std::vector<double> expected_error;
  for (const MetricValues& p : predicted) {
    expected_error.push_back(p[static_cast<size_t>(CheckMetric::kSteadyStateError)]);
  }
  JudgeLimits(s, options, c.sd_output, expected_error);
  const double dt = MedianInterval(record.t);
  for (size_t i = 0; i < s.steps.size(); ++i) {
    StepCheck& st = s.steps[i];
    const double size = std::abs(st.to - st.from);
    const MetricValues res = {dt, 100.0 * c.sd_output / size, dt, dt, c.sd_output, c.sd_actuator};
    for (size_t m = 0; m < kMetrics; ++m) {
      MetricCheck& mc = st.metrics[m];
      mc.measured = measured[i][m];
      mc.predicted = predicted[i][m];
      mc.resolution = res[m];
      if (m == static_cast<size_t>(CheckMetric::kPeakActuator) && !has_u) {
        mc.judged = false;
        mc.not_judged = "not judged: the recording has no actuator column";
      }
      // The overshoot (index 1) is complete before the peak time (index 2) is judged.
      if (m == static_cast<size_t>(CheckMetric::kPeakTime)) {
        mc.not_judged = NoPeakReason(st.metric(CheckMetric::kOvershoot));
        mc.judged = mc.not_judged.empty();
      }
      std::vector<double> dv;
      for (const auto& d : draw_values) dv.push_back(d[i][m]);
      std::vector<double> offsets;
      double rep_nan = 0.0;
      for (const auto& r : rep_values) {
        if (std::isnan(r[i][m])) rep_nan += 1.0 / static_cast<double>(reps);
        offsets.push_back(r[i][m] - mc.predicted);
      }
      JudgeMetric(mc, SpreadOf(mc.predicted, dv, options.coverage),
                  NoiseOffsets(offsets, options.noise_sd_factor), rep_nan);
      if (mc.judged && !mc.consistent) st.consistent = false;
    }
  }
  c.steps = std::move(s.steps);
  c.predicted_y = std::move(nominal.y);
  c.predicted_u = std::move(nominal.u);
  Conclude(c);
  // A verdict about the wrong loop: the recorded actuator follows another gain through the
  // controller's shape (applied_gain.h). Not for a saturated record, whose u is clipped.
  if (has_u && c.verdict != CheckVerdict::kSaturated) {
    const AppliedGain a =
        EstimateAppliedGain(controller, record.t, record.r, record.u, record.y, k0);
    c.applied_gain = a.gain;
    c.applied_gain_fit_percent = a.fit_percent;
    if (a.fit_percent >= 90.0 && std::isfinite(a.gain) && std::abs(a.gain / gain - 1.0) > 0.05) {
      c.notes.push_back("the recorded actuator follows K = " + Num(a.gain) + " (" +
                        controller.ToString() + ", fit " + Num(a.fit_percent) +
                        " %) on the recorded error, not the K = " + Num(gain) +
                        " given: check the gain and controller the rig ran before you refit");
      if (c.verdict == CheckVerdict::kStale) {
        c.reason += " (unless the gain given is not the one the rig ran: see the warning)";
      }
    }
  }
  return c;
}

}  // namespace lw
