// Step-response metrics (see step_metrics.h for the definitions).
//
// Method. Everything is computed on the normalised response z = (y - initial) / (final - initial),
// which goes from 0 towards 1 whatever the sign of the step.
//
// Noise-free mode (options.noisy == false): initial is the last sample before t_step (y[0] when
// there is none), final is the last sample. Level crossings (rise_low, rise_high) are the first
// samples at or beyond the level, interpolated linearly with the sample before. The peak is the
// largest sample, refined by the parabola through it and its two neighbours (unless
// refine_peak is false). Settling time is
// where z last enters the band |z - 1| <= settle_band, interpolated at the band edge.
//
// Noisy mode (options.noisy == true), for measured data:
//   1. Noise standard deviation: sd = 1.4826 * MAD(second differences of y) / sqrt(6). A second
//      difference of white noise of standard deviation sd has standard deviation sqrt(6) sd, and
//      it cancels offsets and ramps of the signal itself; 1.4826 * MAD is the usual robust
//      estimate of a Gaussian standard deviation. (Assumes the signal is sampled finely enough
//      that its own curvature per sample is small against the noise.)
//   2. Levels: initial is the 25 % trimmed mean of the samples before t_step; final is the 25 %
//      trimmed mean of the last tail_fraction of the samples after t_step (the settled tail).
//      Without samples before the step, initial is the smoothed trace (step 3) at the first
//      sample.
//   3. Smoothing: a local quadratic least-squares fit (Savitzky-Golay, degree 2) over a window of
//      smooth_time seconds around every sample; it preserves peaks far better than a moving
//      average. smooth_time = 0 picks a tenth of a first rough 10-90 % rise time (found on a
//      moving average over 1 % of the record), at least 5 samples.
//   4. Hysteresis: h = hysteresis_sd * (standard deviation of the smoothed trace), the latter
//      from sd and the fit window's noise gain. A level crossing on the smoothed trace counts
//      only once the trace goes on to level + h before falling back below level - h; a sample
//      leaves the settling band only when |z - 1| > settle_band + h. Noise therefore cannot
//      create crossings; the price is that a true excursion smaller than h beyond the band is
//      not seen.
//   5. The peak is the vertex of a least-squares parabola fitted to the raw samples within a
//      third of the rough rise time around the smoothed trace's maximum. Overshoot (and
//      undershoot) smaller than h is reported as 0: it cannot be told from noise.
#include "lti/step_metrics.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <string>
#include <vector>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

std::string Num(double v) { return SignificantText(v, 6); }

// Mean of the middle half of the values (25 % trimmed each side); the median for fewer than 4.
double TrimmedMean(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  const size_t n = v.size();
  if (n < 4) return v[n / 2];
  const size_t cut = n / 4;
  double sum = 0.0;
  for (size_t i = cut; i < n - cut; ++i) sum += v[i];
  return sum / static_cast<double>(n - 2 * cut);
}

double Median(std::vector<double> v) {
  const size_t mid = v.size() / 2;
  std::nth_element(v.begin(), v.begin() + mid, v.end());
  return v[mid];
}

// 1.4826 * MAD of the second differences / sqrt(6): see the header comment.
double NoiseSd(std::span<const double> y) {
  if (y.size() < 3) return 0.0;
  std::vector<double> d2(y.size() - 2);
  for (size_t i = 1; i + 1 < y.size(); ++i) d2[i - 1] = y[i + 1] - 2.0 * y[i] + y[i - 1];
  const double med = Median(d2);
  for (double& d : d2) d = std::abs(d - med);
  return 1.4826 * Median(d2) / std::sqrt(6.0);
}

// Noise gain (standard deviation ratio) of the centre value of a degree-2 least-squares fit over
// m equally spaced points: sqrt(3 (3 m^2 - 7) / (4 m (m^2 - 4))).
double QuadraticFitGain(size_t m) {
  const double x = static_cast<double>(m);
  return m < 3 ? 1.0 : std::sqrt(3.0 * (3.0 * x * x - 7.0) / (4.0 * x * (x * x - 4.0)));
}

// Least-squares parabola a + b d + c d^2 in d = t - t0 over the samples [lo, hi]. Returns false
// when the normal equations are singular (fewer than 3 distinct times).
bool FitParabola(std::span<const double> t, std::span<const double> z, size_t lo, size_t hi,
                 double t0, double coef[3]) {
  double s[5] = {0, 0, 0, 0, 0}, r[3] = {0, 0, 0};
  for (size_t j = lo; j <= hi; ++j) {
    const double d = t[j] - t0;
    double p = 1.0;
    for (int k = 0; k < 5; ++k) {
      s[k] += p;
      if (k < 3) r[k] += p * z[j];
      p *= d;
    }
  }
  // Solve [[s0 s1 s2][s1 s2 s3][s2 s3 s4]] x = r by Cramer's rule (3 x 3, well scaled by t0).
  const double m[3][3] = {{s[0], s[1], s[2]}, {s[1], s[2], s[3]}, {s[2], s[3], s[4]}};
  auto det3 = [](const double a[3][3]) {
    return a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1]) -
           a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0]) +
           a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]);
  };
  const double det = det3(m);
  const double scale = s[0] * s[2] * s[4];
  if (!(std::abs(det) > 1e-12 * scale)) return false;
  for (int c = 0; c < 3; ++c) {
    double mc[3][3];
    for (int i = 0; i < 3; ++i)
      for (int j = 0; j < 3; ++j) mc[i][j] = j == c ? r[i] : m[i][j];
    coef[c] = det3(mc) / det;
  }
  return true;
}

// Local quadratic fit of z over +-half seconds around each sample (at least 2 samples each side
// where available).
std::vector<double> SmoothQuadratic(std::span<const double> t, std::span<const double> z,
                                    double half) {
  const size_t n = z.size();
  std::vector<double> out(n);
  size_t lo = 0, hi = 0;
  for (size_t i = 0; i < n; ++i) {
    while (lo < i && t[i] - t[lo] > half) ++lo;
    while (hi + 1 < n && t[hi + 1] - t[i] <= half) ++hi;
    size_t a = lo, b = std::max(hi, i);
    a = std::min(a, i >= 2 ? i - 2 : 0);
    b = std::max(b, std::min(n - 1, i + 2));
    double coef[3];
    out[i] = FitParabola(t, z, a, b, t[i], coef) ? coef[0] : z[i];
  }
  return out;
}

// Centered moving average over `width` samples (clipped at the ends).
std::vector<double> MovingAverage(std::span<const double> z, size_t width) {
  const size_t n = z.size(), half = width / 2;
  std::vector<double> prefix(n + 1, 0.0), out(n);
  for (size_t i = 0; i < n; ++i) prefix[i + 1] = prefix[i] + z[i];
  for (size_t i = 0; i < n; ++i) {
    const size_t a = i >= half ? i - half : 0, b = std::min(n, i + half + 1);
    out[i] = (prefix[b] - prefix[a]) / static_cast<double>(b - a);
  }
  return out;
}

// Time where s rises through `level` between samples i-1 and i (not before t[begin]).
double Interpolate(std::span<const double> t, const std::vector<double>& s, size_t i, size_t begin,
                   double level) {
  if (i == 0 || !(s[i - 1] < level) || s[i] == s[i - 1]) return t[i];
  const double x = t[i - 1] + (level - s[i - 1]) / (s[i] - s[i - 1]) * (t[i] - t[i - 1]);
  return std::max(x, t[begin]);
}

// First confirmed upward crossing of `level` by s at or after index `from` (see the header
// comment, step 4); NaN when there is none. *index gets the sample where it happened.
double FirstCrossing(std::span<const double> t, const std::vector<double>& s, double level,
                     double h, size_t from, size_t begin, size_t* index) {
  double candidate = kNaN;
  for (size_t i = from; i < s.size(); ++i) {
    if (std::isnan(candidate)) {
      if (s[i] >= level) {
        candidate = Interpolate(t, s, i, begin, level);
        *index = i;
      }
    } else if (s[i] < level - h) {
      candidate = kNaN;
    }
    if (!std::isnan(candidate) && s[i] >= level + h) return candidate;
  }
  return candidate;
}

// Time of the last entry into |s - 1| <= band after the last exit beyond band + h; NaN when the
// record ends outside; t[begin] when it never leaves.
double SettlingInstant(std::span<const double> t, const std::vector<double>& s, double band,
                       double h, size_t begin) {
  bool outside = std::abs(s[begin] - 1.0) > band;
  double entry = t[begin];
  for (size_t i = begin + 1; i < s.size(); ++i) {
    const double d = std::abs(s[i] - 1.0);
    if (outside && d <= band) {
      outside = false;
      const double edge = s[i - 1] > 1.0 ? 1.0 + band : 1.0 - band;
      const double frac = s[i] == s[i - 1] ? 1.0 : (edge - s[i - 1]) / (s[i] - s[i - 1]);
      entry = t[i - 1] + std::clamp(frac, 0.0, 1.0) * (t[i] - t[i - 1]);
    } else if (!outside && d > band + h) {
      outside = true;
    }
  }
  return outside ? kNaN : entry;
}

// Rough 10-90 % rise time of s (for window sizes); NaN when it is not reached.
double RoughRise(std::span<const double> t, const std::vector<double>& s, size_t begin) {
  size_t i10 = begin, i90 = begin;
  const double a = FirstCrossing(t, s, 0.1, 0.0, begin, begin, &i10);
  if (std::isnan(a)) return kNaN;
  const double b = FirstCrossing(t, s, 0.9, 0.0, i10, begin, &i90);
  return b - a;
}

}  // namespace

void StepMetricsOptions::Validate() const {
  auto fail = [](const char* field, double value, const char* rule) {
    throw UsageError(std::string("step metrics option ") + field + " = " + Num(value) + ": " +
                     rule);
  };
  if (!(rise_low >= 0.0 && rise_low < 1.0)) fail("rise_low", rise_low, "must be in [0, 1)");
  if (!(rise_high > rise_low && rise_high <= 1.0))
    fail("rise_high", rise_high, "must be in (rise_low, 1]");
  if (!(settle_band > 0.0 && settle_band < 1.0))
    fail("settle_band", settle_band, "must be in (0, 1)");
  if (!(tail_fraction > 0.0 && tail_fraction <= 0.5))
    fail("tail_fraction", tail_fraction, "must be in (0, 0.5]");
  if (!(hysteresis_sd >= 0.0 && std::isfinite(hysteresis_sd)))
    fail("hysteresis_sd", hysteresis_sd, "must be finite and >= 0");
  if (!(smooth_time >= 0.0 && std::isfinite(smooth_time)))
    fail("smooth_time", smooth_time, "must be finite and >= 0 (0 = automatic)");
  if (!(peak_min >= 0.0 && peak_min < 1.0)) fail("peak_min", peak_min, "must be in [0, 1)");
}

StepMetrics MeasureStep(std::span<const double> t, std::span<const double> y, double t_step,
                        const StepMetricsOptions& options, std::optional<double> target,
                        std::span<const double> u) {
  options.Validate();
  const size_t n = t.size();
  if (y.size() != n)
    throw UsageError("step metrics: " + std::to_string(n) + " times but " +
                     std::to_string(y.size()) + " output samples");
  if (!u.empty() && u.size() != n)
    throw UsageError("step metrics: " + std::to_string(n) + " times but " +
                     std::to_string(u.size()) + " actuator samples");
  if (!std::isfinite(t_step)) throw UsageError("step metrics: the step time is not finite");
  for (size_t i = 0; i < n; ++i) {
    if (!std::isfinite(t[i]) || !std::isfinite(y[i]) || (!u.empty() && !std::isfinite(u[i])))
      throw UsageError("step metrics: sample " + std::to_string(i + 1) + " is NaN or infinite");
    if (i > 0 && !(t[i] > t[i - 1]))
      throw UsageError("step metrics: time does not increase at sample " + std::to_string(i + 1));
  }
  const size_t begin =
      static_cast<size_t>(std::lower_bound(t.begin(), t.end(), t_step) - t.begin());
  if (n - begin < 3)
    throw UsageError("step metrics: needs at least 3 samples after the step at t = " + Num(t_step) +
                     ", found " + std::to_string(n - begin));

  StepMetrics m;
  const size_t post = n - begin;
  const size_t tail = std::max<size_t>(1, static_cast<size_t>(options.tail_fraction * post));
  const double t_end = t[n - 1];

  if (!u.empty())
    for (size_t i = begin; i < n; ++i) m.peak_actuator = std::max(m.peak_actuator, std::abs(u[i]));

  // Levels, the smoothed trace ys and the hysteresis h (in units of the normalised change).
  std::vector<double> ys(y.begin(), y.end());
  double h = 0.0;
  double rough_rise = kNaN;
  if (options.noisy) {
    m.noise_sd = NoiseSd(y);
    m.final_value = TrimmedMean(std::vector<double>(y.end() - tail, y.end()));
    const size_t width = std::max<size_t>(5, post / 100) | 1;
    const std::vector<double> average = MovingAverage(y, width);
    m.initial =
        begin > 0 ? TrimmedMean(std::vector<double>(y.begin(), y.begin() + begin)) : average[0];
    if (m.final_value != m.initial) {
      std::vector<double> rough(n);
      for (size_t i = 0; i < n; ++i)
        rough[i] = (average[i] - m.initial) / (m.final_value - m.initial);
      rough_rise = RoughRise(t, rough, begin);
    }
    const double dt = (t_end - t[begin]) / static_cast<double>(post - 1);
    double half = options.smooth_time > 0     ? options.smooth_time / 2
                  : std::isfinite(rough_rise) ? rough_rise / 20
                                              : dt * static_cast<double>(width) / 2;
    half = std::max(half, 2.0 * dt);
    ys = SmoothQuadratic(t, y, half);
    if (begin == 0) m.initial = ys[0];  // no samples before the step
    const size_t points = static_cast<size_t>(2.0 * half / dt) + 1;
    h = options.hysteresis_sd * QuadraticFitGain(points) * m.noise_sd;
  } else {
    m.final_value = y[n - 1];
    m.initial = begin > 0 ? y[begin - 1] : y[0];
  }
  if (target) m.steady_state_error = *target - m.final_value;
  const double delta = m.final_value - m.initial;
  m.peak = m.final_value;
  m.rise_time = kNaN;
  m.settling_time = kNaN;
  if (delta == 0.0) {  // no step to measure
    m.no_peak = "no peak: the final value equals the initial one, so there is no step";
    return m;
  }
  h /= std::abs(delta);
  std::vector<double> z(n), s(n);
  for (size_t i = 0; i < n; ++i) {
    z[i] = (y[i] - m.initial) / delta;
    s[i] = (ys[i] - m.initial) / delta;
  }

  // Rise time.
  size_t i_low = begin, i_high = begin;
  const double t_low = FirstCrossing(t, s, options.rise_low, h, begin, begin, &i_low);
  double t_high = kNaN;
  if (!std::isnan(t_low)) {
    t_high = FirstCrossing(t, s, options.rise_high, h, i_low, begin, &i_high);
    m.rise_time = t_high - t_low;
  }

  // Peak: the extreme of the (smoothed) trace, refined by a parabola on the raw samples.
  const size_t k = static_cast<size_t>(std::max_element(s.begin() + begin, s.end()) - s.begin());
  double z_peak = z[k];
  double t_peak = t[k];
  if (k > begin && k + 1 < n && (options.refine_peak || options.noisy)) {
    size_t lo = k - 1, hi = k + 1;
    if (options.noisy) {
      const double w = std::isfinite(rough_rise) ? rough_rise / 3 : 0.0;
      while (lo > begin && t[k] - t[lo - 1] <= w) --lo;
      while (hi + 1 < n && t[hi + 1] - t[k] <= w) ++hi;
    }
    double c[3];
    if (FitParabola(t, z, lo, hi, t[k], c) && c[2] < 0) {
      const double d = -c[1] / (2 * c[2]);
      if (t[k] + d >= t[lo] && t[k] + d <= t[hi]) {
        t_peak = t[k] + d;
        z_peak = c[0] + c[1] * d + c[2] * d * d;
      } else if (options.noisy) {
        z_peak = s[k];
      }
    } else if (options.noisy) {
      z_peak = s[k];
    }
  }
  m.peak = m.initial + z_peak * delta;
  m.peak_time = t_peak - t_step;
  m.overshoot_percent = z_peak - 1.0 > h ? 100.0 * (z_peak - 1.0) : 0.0;
  // Is there a peak (the rule in the header)?
  const double peak_floor = std::max(h, options.peak_min);
  const double tail_start = t_end - options.tail_fraction * (t_end - t[begin]);
  if (!(z_peak - 1.0 > peak_floor)) {
    m.no_peak = "no peak: the response rises " +
                SignificantText(std::max(0.0, 100.0 * (z_peak - 1.0)), 3) +
                " % of the step above its final value, and a peak needs more than " +
                SignificantText(100.0 * peak_floor, 3) + " %";
  } else if (t_peak >= tail_start) {
    m.no_peak = "no peak: the largest value, " + SignificantText(t_peak - t_step, 4) +
                " s after the step, is in the last " +
                SignificantText(100.0 * options.tail_fraction, 3) +
                " % of the record, where the response has not turned back";
  }
  m.has_peak = m.no_peak.empty();

  // Undershoot: the largest excursion opposite the change before reaching rise_high.
  const size_t stop = std::isnan(t_high) ? n : i_high;
  double z_min = 0.0;
  for (size_t i = begin; i < stop; ++i) z_min = std::min(z_min, s[i]);
  m.undershoot_percent = -z_min > h ? -100.0 * z_min : 0.0;

  // Settling.
  const double settle_at = SettlingInstant(t, s, options.settle_band, h, begin);
  if (!std::isnan(settle_at)) m.settling_time = std::max(0.0, settle_at - t_step);
  m.settled =
      !std::isnan(settle_at) && settle_at <= t_end - options.tail_fraction * (t_end - t[begin]);
  return m;
}

}  // namespace lw
