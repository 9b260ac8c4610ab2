#include "identify/step_detection.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <sstream>

#include "identify/order_statistic.h"
#include "lti/error.h"

namespace lw {
namespace {

double Mean(std::span<const double> v) {
  return v.empty() ? 0.0 : std::accumulate(v.begin(), v.end(), 0.0) / static_cast<double>(v.size());
}

std::string Num(double v) {
  std::ostringstream o;
  o.precision(6);
  o << v;
  return o.str();
}

void CheckFinite(std::span<const double> x, const char* what) {
  size_t bad = 0, first = x.size();
  for (size_t i = 0; i < x.size(); ++i) {
    if (!std::isfinite(x[i])) {
      if (first == x.size()) first = i;
      ++bad;
    }
  }
  if (bad == x.size()) {
    throw DataError(std::string("the ") + what + " column has no finite values");
  }
  if (bad) {
    throw DataError(std::string("the ") + what + " is not a finite number at sample " +
                    std::to_string(first + 1) + " (" + std::to_string(bad) +
                    " such samples); remove or fill them before fitting");
  }
}

// The longest run of samples exactly at a level: its length and the time it starts.
struct FlatRun {
  size_t samples = 0;
  double from = 0.0;
};

// The longest runs at the extremes `hi` and `lo`, in one pass.
void LongestRunsAt(std::span<const double> y, std::span<const double> t, double hi, double lo,
                   FlatRun& at_hi, FlatRun& at_lo) {
  size_t run_hi = 0, run_lo = 0;
  auto extend = [&](size_t i, bool at, size_t& run, FlatRun& best) {
    run = at ? run + 1 : 0;
    if (run > best.samples) best = {run, t[i + 1 - run]};
  };
  for (size_t i = 0; i < y.size(); ++i) {
    extend(i, y[i] == hi, run_hi, at_hi);
    extend(i, y[i] == lo, run_lo, at_lo);
  }
}

}  // namespace

double DifferenceNoiseSd(std::span<const double> x) {
  if (x.size() < 3) return 0.0;
  // The differences are formed on the fly (no copy of the series). A held input repeats its
  // value: when more than half the differences are exactly zero both medians are zero.
  // That shortcut only saves the work (the medians below are then zero too), so on a long
  // series an evenly spaced sample decides whether the full count is worth a pass.
  const size_t n = x.size() - 1;
  constexpr size_t kProbe = 256;
  bool worth_counting = n <= 4 * kProbe;
  if (!worth_counting) {
    size_t probe_repeats = 0;
    for (size_t j = 0; j < kProbe; ++j) {
      const size_t i = (2 * j + 1) * n / (2 * kProbe);
      probe_repeats += x[i + 1] == x[i];
    }
    worth_counting = probe_repeats > kProbe / 4;
  }
  if (worth_counting) {
    size_t repeats = 0;
    for (size_t i = 0; i < n; ++i) repeats += x[i + 1] == x[i];
    if (repeats > n / 2) return 0.0;
  }
  const double med = MedianOf(n, [&](size_t i) { return x[i + 1] - x[i]; });
  return 1.4826 * MedianOf(n, [&](size_t i) { return std::abs((x[i + 1] - x[i]) - med); }) /
         std::sqrt(2.0);
}

RecordingAnalysis AnalyseRecording(std::span<const double> t, std::span<const double> u,
                                   std::span<const double> y) {
  const size_t n = t.size();
  if (u.size() != n || y.size() != n) {
    throw DataError("time, input and output columns differ in length");
  }
  if (n < 10) {
    throw DataError("only " + std::to_string(n) +
                    " samples: a fit needs at least 10 (a baseline, the response, its end)");
  }
  // One pass over the three columns; only when it finds a bad value do the column checks run,
  // in order, to name the first one.
  bool finite = true;
  for (size_t i = 0; i < n; ++i) {
    finite &= std::isfinite(t[i]) & std::isfinite(u[i]) & std::isfinite(y[i]);
  }
  if (!finite) {
    CheckFinite(t, "time");
    CheckFinite(u, "input");
    CheckFinite(y, "output");
  }
  RecordingAnalysis a;
  a.min_interval = std::numeric_limits<double>::infinity();
  a.max_interval = 0.0;
  for (size_t i = 1; i < n; ++i) {
    const double dt = t[i] - t[i - 1];
    if (!(dt > 0.0)) {
      throw DataError("time does not increase at sample " + std::to_string(i + 1) +
                      " (t = " + Num(t[i]) + " s after " + Num(t[i - 1]) + " s)");
    }
    a.min_interval = std::min(a.min_interval, dt);
    a.max_interval = std::max(a.max_interval, dt);
  }
  const double mean_dt = (t[n - 1] - t[0]) / static_cast<double>(n - 1);
  a.uniform =
      a.max_interval - mean_dt <= 1e-6 * mean_dt && mean_dt - a.min_interval <= 1e-6 * mean_dt;
  // On a uniform grid every interval, the median among them, is within 1e-6 of the mean.
  a.sample_period =
      a.uniform ? mean_dt : MedianOf(n - 1, [&](size_t i) { return t[i + 1] - t[i]; });

  const auto [umin, umax] = std::minmax_element(u.begin(), u.end());
  const double range = *umax - *umin;
  if (!(range > 1e-12 * std::max(1.0, std::abs(*umax)))) {
    throw DataError("the input is constant (" + Num(*umin) +
                    " throughout): a step test needs the input to change");
  }
  const double u_noise = DifferenceNoiseSd(u);
  for (size_t i = 1; i < n; ++i) {
    double jump = std::abs(u[i] - u[i - 1]);
    if (jump >= 0.25 * range && jump >= 5.0 * u_noise) {
      if (a.steps.empty() || a.steps.back() + 1 != i) {
        a.steps.push_back(i);
      } else {
        a.steps.back() = i;  // a step spread over two samples counts once, at its end
      }
    }
  }
  if (a.steps.empty()) {
    throw DataError("no step found in the input: it never jumps by a quarter of its range (" +
                    Num(range) + ") from one sample to the next");
  }
  const size_t first = a.steps.front();
  a.baseline_samples = first;
  a.input_baseline = Mean(u.first(first));
  a.output_baseline = Mean(y.first(first));
  const size_t seg_end = a.steps.size() > 1 ? a.steps[1] : n;
  a.input_change = Mean(u.subspan(first, seg_end - first)) - a.input_baseline;
  const size_t seg = seg_end - first;
  const size_t tail = std::max<size_t>(std::min<size_t>(5, seg), seg / 10);
  a.output_final = Mean(y.subspan(seg_end - tail, tail));
  a.output_change = a.output_final - a.output_baseline;
  a.output_noise_sd = DifferenceNoiseSd(y);

  // Settled: slope of a straight line through the last 20 % of the record.
  const size_t k0 = n - std::max<size_t>(5, n / 5);
  std::span<const double> tt = t.subspan(k0), yy = y.subspan(k0);
  const double tm = Mean(tt), ym = Mean(yy);
  double sxy = 0.0, sxx = 0.0;
  for (size_t i = 0; i < tt.size(); ++i) {
    sxy += (tt[i] - tm) * (yy[i] - ym);
    sxx += (tt[i] - tm) * (tt[i] - tm);
  }
  const double moved = sxx > 0.0 ? std::abs(sxy / sxx) * (tt.back() - tt.front()) : 0.0;
  a.settled = moved <= 0.02 * std::abs(a.output_change) + 3.0 * a.output_noise_sd;
  a.input_away =
      std::abs(Mean(u.subspan(k0)) - a.input_baseline) >= 0.25 * std::abs(a.input_change);

  // Clipping: a flat run at an extreme, after the step, while the baseline is noisy (exact
  // repeats are then no accident; noise-free data are never called clipped).
  const double base_noise = first >= 3 ? DifferenceNoiseSd(y.first(first)) : a.output_noise_sd;
  std::span<const double> ya = y.subspan(first), ta = t.subspan(first);
  const auto [ymin, ymax] = std::minmax_element(ya.begin(), ya.end());
  FlatRun at_hi, at_lo;
  LongestRunsAt(ya, ta, *ymax, *ymin, at_hi, at_lo);
  // With fewer than 3 baseline samples the noise comes from the whole record, and an exact
  // (noise-free) record's dead time is a flat run that continues the baseline from the step
  // on: that is the dead time, not a saturated sensor.
  auto continues_baseline = [&](double level, double from) {
    return first < 3 && from == t[first] && level == y[first - 1];
  };
  if (continues_baseline(*ymax, at_hi.from)) at_hi.samples = 0;
  if (continues_baseline(*ymin, at_lo.from)) at_lo.samples = 0;
  const bool noisy = base_noise > 1e-9 * std::max(1.0, std::abs(*ymax - *ymin));
  if (noisy && std::max(at_hi.samples, at_lo.samples) >= 3) {
    const bool hi = at_hi.samples >= at_lo.samples;
    const FlatRun& run = hi ? at_hi : at_lo;
    a.clipped_samples = run.samples;
    a.clipped_level = hi ? *ymax : *ymin;
    a.clipped_from = run.from;
  }
  if (a.clipped_samples >= std::max<size_t>(5, n / 100)) {
    throw DataError("the output is clipped: it stays exactly at " + Num(a.clipped_level) + " for " +
                    std::to_string(a.clipped_samples) + " samples from t = " + Num(a.clipped_from) +
                    " s while the baseline is noisy (sensor or converter saturated); "
                    "record again within range or fit a --window before it");
  }
  return a;
}

}  // namespace lw
