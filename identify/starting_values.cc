#include "identify/starting_values.h"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <numeric>
#include <optional>
#include <span>

#include "identify/two_point.h"

namespace lw {
namespace {

// Centred moving average over w samples (w odd), so crossings are not triggered by noise; the
// window shrinks to the samples that exist at both ends. One running sum, one output buffer.
std::vector<double> Smooth(std::span<const double> y, size_t w) {
  if (w <= 1 || y.empty()) return {y.begin(), y.end()};
  const size_t n = y.size(), half = w / 2;
  std::vector<double> out(n);
  double sum = 0.0;
  size_t hi = 0;  // the window is [lo, hi)
  for (; hi < std::min(n, half); ++hi) sum += y[hi];
  for (size_t i = 0; i < n; ++i) {
    if (hi < n) sum += y[hi++];            // the window now reaches i + half
    if (i > half) sum -= y[i - half - 1];  // and starts at i - half
    const size_t lo = i > half ? i - half : 0;
    out[i] = sum / static_cast<double>(hi - lo);
  }
  return out;
}

struct FirstStep {
  double t_step = 0.0, t_end = 0.0, h = 0.0;
  std::span<const double> t;  // the first step's segment (the recording's own instants)
  std::vector<double> y;      // its smoothed output
};

// The first step's segment; its output smoothed only when `smooth` (the starts that read it).
FirstStep FirstSegment(const StepRecording& rec, const RecordingAnalysis& a, bool smooth) {
  FirstStep f;
  const size_t i0 = a.steps.front();
  const size_t i1 = a.steps.size() > 1 ? a.steps[1] : rec.t.size();
  f.t_step = rec.t[i0];
  f.t_end = rec.t[i1 - 1];
  f.h = a.sample_period;
  f.t = std::span<const double>(rec.t).first(i1);
  if (smooth) {
    const size_t w = std::max<size_t>(1, (i1 - i0) / 100) | 1;
    f.y = Smooth(std::span<const double>(rec.y).first(i1), w);
  }
  return f;
}

std::vector<double> Full(Structure s, std::vector<double> params, double y0) {
  params.push_back(y0);
  params.push_back(0.0);
  (void)s;
  return params;
}

}  // namespace

std::vector<std::vector<double>> StartingValues(Structure s, const StepRecording& rec,
                                                const RecordingAnalysis& a,
                                                const std::vector<double>& seed) {
  // A sopdt start from its fopdt seed reads nothing of the record: the smoothing (a pass and
  // a copy of the first segment) is skipped there.
  const bool from_seed = s == Structure::kSopdt && !seed.empty();
  FirstStep f = FirstSegment(rec, a, !from_seed);
  const double h = f.h;
  const double span = std::max(f.t_end - f.t_step, 10.0 * h);
  const double du = a.input_change != 0.0 ? a.input_change : 1.0;
  const double k0 = a.output_change / du;
  const double y0 = a.output_baseline;
  auto tp = from_seed ? std::nullopt
                      : SmithTwoPoint(f.t, f.y, f.t_step, a.output_baseline, a.output_final);
  double tau0 = tp ? std::max(tp->time_constant, h) : span / 3.0;
  double t0 = tp ? tp->dead_time : 0.0;
  double t63 = tp ? tp->t63 : tau0;
  std::vector<std::vector<double>> starts;
  auto keep_t63 = [&](double dead) { return std::max(t63 - dead, h); };

  switch (s) {
    case Structure::kFopdt: {
      for (double dead : {t0, 0.0, 0.5 * t0, t0 + 0.25 * tau0, std::max(0.0, t0 - 0.25 * tau0)}) {
        starts.push_back(Full(s, {k0, keep_t63(dead), dead}, y0));
      }
      starts.push_back(Full(s, {k0, 0.3 * tau0, t0}, y0));
      starts.push_back(Full(s, {k0, 3.0 * tau0, t0}, y0));
      break;
    }
    case Structure::kSopdt: {
      double k = seed.empty() ? k0 : seed[0], tau = seed.empty() ? tau0 : seed[1],
             dead = seed.empty() ? t0 : seed[2];
      for (double frac : {0.1, 0.3, 0.45}) {
        starts.push_back(
            Full(s, {k, tau * (1 - frac), tau * frac, std::max(0.0, dead - frac * tau)}, y0));
        starts.push_back(Full(s, {k, tau, tau * frac, dead}, y0));
      }
      // The fopdt fit itself, with a second lag well under a sample: sopdt nests fopdt, so the
      // multi-start then never ends worse than the fopdt fit (the fractions above scale with
      // tau and miss it when the fopdt time constant ran to its bound on an integrating rig).
      if (!seed.empty())
        starts.push_back(Full(s, {k, tau, std::clamp(0.01 * tau, 2e-3 * h, 0.5 * h), dead}, y0));
      break;
    }
    case Structure::kUnderdamped: {
      double k = seed.empty() ? k0 : seed[0], tau = seed.empty() ? tau0 : seed[1],
             dead = seed.empty() ? t0 : seed[2];
      // Overshoot of the smoothed first step gives zeta; the peak time gives wn.
      double peak = 0.0, t_peak = 0.0;
      const double dy = a.output_change;
      for (size_t i = 0; i < f.t.size(); ++i) {
        if (f.t[i] < f.t_step || dy == 0.0) continue;
        double r = (f.y[i] - a.output_baseline) / dy;
        if (r > peak) {
          peak = r;
          t_peak = f.t[i] - f.t_step;
        }
      }
      const double os = peak - 1.0;
      if (os > 0.005 && t_peak > dead) {
        double l = std::log(os);
        double zeta =
            std::clamp(-l / std::sqrt(std::numbers::pi * std::numbers::pi + l * l), 0.02, 0.99);
        double wn = std::numbers::pi / ((t_peak - dead) * std::sqrt(1 - zeta * zeta));
        starts.push_back(Full(s, {k, zeta, wn, dead}, y0));
        starts.push_back(Full(s, {k, zeta, wn, 0.5 * dead}, y0));
      }
      for (double zeta : {0.3, 0.6, 0.95}) {
        starts.push_back(Full(s, {k, zeta, 1.5 / tau, dead}, y0));
      }
      starts.push_back(Full(s, {k, 0.95, 2.0 / tau, 0.5 * dead}, y0));
      break;
    }
    case Structure::kIntegrating: {
      // Straight line through the last 30 % of the first step's segment: slope and intercept.
      const size_t n = f.t.size();
      const size_t i0 =
          std::max(a.steps.front(), n - std::max<size_t>(3, (n - a.steps.front()) * 3 / 10));
      double tm = 0, ym = 0;
      for (size_t i = i0; i < n; ++i) {
        tm += f.t[i];
        ym += f.y[i];
      }
      tm /= static_cast<double>(n - i0);
      ym /= static_cast<double>(n - i0);
      double sxy = 0, sxx = 0;
      for (size_t i = i0; i < n; ++i) {
        sxy += (f.t[i] - tm) * (f.y[i] - ym);
        sxx += (f.t[i] - tm) * (f.t[i] - tm);
      }
      double slope = sxx > 0 ? sxy / sxx : 0.0;
      double k = slope / du;
      double lag = span / 4.0;
      if (slope != 0.0) {
        double t_cross = tm - (ym - a.output_baseline) / slope;
        lag = std::clamp(t_cross - f.t_step, h, 0.9 * span);
      }
      if (k == 0.0) k = k0 / span;
      for (double frac : {0.5, 0.2, 0.8}) {
        starts.push_back(Full(s, {k, std::max(frac * lag, h), (1 - frac) * lag}, y0));
      }
      break;
    }
    case Structure::kSopdtZero: {
      std::vector<double> base =
          seed.size() >= 4 ? seed : std::vector<double>{k0, 0.7 * tau0, 0.3 * tau0, t0};
      const double t1 = base[1], t2 = base[2];
      for (double tz : {0.01 * t2, -0.5 * t2, -0.5 * t1, 0.5 * t1, 0.9 * t1}) {
        starts.push_back(Full(s, {base[0], t1, t2, tz, base[3]}, y0));
      }
      starts.push_back(Full(s, {k0, tau0, 0.3 * tau0, -0.5 * tau0, 0.5 * t0}, y0));
      break;
    }
  }
  return starts;
}

}  // namespace lw
