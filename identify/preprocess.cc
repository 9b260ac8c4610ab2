#include "identify/preprocess.h"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "lti/error.h"

namespace lw {
namespace {

std::vector<double> FirLowPass(std::span<const double> x, const std::vector<double>& taps) {
  const long n = static_cast<long>(x.size());
  const long half = static_cast<long>(taps.size() / 2);
  std::vector<double> out(x.size());
  for (long i = 0; i < n; ++i) {
    double acc = 0.0;
    for (long k = -half; k <= half; ++k) {
      long j = std::clamp(i + k, 0L, n - 1);
      acc += taps[static_cast<size_t>(k + half)] * x[static_cast<size_t>(j)];
    }
    out[static_cast<size_t>(i)] = acc;
  }
  return out;
}

}  // namespace

StepRecording SelectWindow(const StepRecording& rec, double t0, double t1) {
  StepRecording out;
  for (size_t i = 0; i < rec.t.size(); ++i) {
    if (rec.t[i] >= t0 && rec.t[i] <= t1) {
      out.t.push_back(rec.t[i]);
      out.u.push_back(rec.u[i]);
      out.y.push_back(rec.y[i]);
    }
  }
  return out;
}

namespace {

// The anti-alias filter's taps for decimation by `factor` (see preprocess.h), unit DC gain.
std::vector<double> AntiAliasTaps(int factor) {
  if (factor < 2)
    throw UsageError("decimation factor " + std::to_string(factor) + ": must be >= 2");
  const int half = 4 * factor;
  const double cutoff = 0.8 / (2.0 * factor);  // cycles per sample
  std::vector<double> taps(2 * half + 1);
  double sum = 0.0;
  for (int k = -half; k <= half; ++k) {
    double sinc = k == 0 ? 2.0 * cutoff
                         : std::sin(2.0 * std::numbers::pi * cutoff * k) / (std::numbers::pi * k);
    double hann = 0.5 * (1.0 + std::cos(std::numbers::pi * k / (half + 1)));
    taps[k + half] = sinc * hann;
    sum += taps[k + half];
  }
  for (double& w : taps) w /= sum;  // unit DC gain
  return taps;
}

}  // namespace

double DecimatedNoiseRatio(int factor) {
  double sum2 = 0.0;
  for (double w : AntiAliasTaps(factor)) sum2 += w * w;
  return 1.0 / (factor * sum2);
}

StepRecording Decimate(const StepRecording& rec, int factor) {
  const std::vector<double> taps = AntiAliasTaps(factor);
  std::vector<double> uf = FirLowPass(rec.u, taps), yf = FirLowPass(rec.y, taps);
  // The fit holds each kept input value over the next interval [t_i, t_i + M h). Held from
  // t_i, the value at t_i would lag the smooth filtered input by half an interval (the dead
  // time came out M h / 2 short, its interval excluding the truth); the value at the interval's
  // middle, i + M/2, holds it without lag (error second order in M h).
  const size_t m = static_cast<size_t>(factor), n = rec.t.size();
  StepRecording out;
  for (size_t i = 0; i < n; i += m) {
    out.t.push_back(rec.t[i]);
    out.u.push_back(uf[std::min(n - 1, i + m / 2)]);
    out.y.push_back(yf[i]);
  }
  return out;
}

std::vector<double> KnownStepInput(std::span<const double> t, double t_step, double size) {
  std::vector<double> u(t.size());
  for (size_t i = 0; i < t.size(); ++i) u[i] = t[i] >= t_step ? size : 0.0;
  return u;
}

}  // namespace lw
