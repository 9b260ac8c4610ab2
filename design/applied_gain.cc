#include "design/applied_gain.h"

#include <cmath>
#include <limits>
#include <vector>

#include "lti/error.h"
#include "lti/simulate.h"

namespace lw {

AppliedGain EstimateAppliedGain(const Controller& controller, std::span<const double> t,
                                std::span<const double> r, std::span<const double> u,
                                std::span<const double> y, size_t first_step) {
  const size_t n = t.size();
  if (r.size() != n || u.size() != n || y.size() != n || first_step == 0 || first_step >= n) {
    throw UsageError("applied gain: r, u and y must have t's length, with a step inside it");
  }
  double u0 = 0.0, e0 = 0.0;
  for (size_t k = 0; k < first_step; ++k) {
    u0 += u[k];
    e0 += r[k] - y[k];
  }
  u0 /= static_cast<double>(first_step);
  e0 /= static_cast<double>(first_step);
  std::vector<double> e(n);
  for (size_t k = 0; k < n; ++k) e[k] = r[k] - y[k] - e0;
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  const std::vector<double> w = Simulate(controller.Shape(), t, e, so);
  double ww = 0.0, wu = 0.0;
  for (size_t k = first_step; k < n; ++k) {
    ww += w[k] * w[k];
    wu += w[k] * (u[k] - u0);
  }
  AppliedGain a;
  if (!(ww > 0.0)) {
    a.gain = std::numeric_limits<double>::quiet_NaN();
    return a;
  }
  a.gain = wu / ww;
  double rss = 0.0, ss = 0.0;
  for (size_t k = first_step; k < n; ++k) {
    const double d = u[k] - u0;
    rss += (d - a.gain * w[k]) * (d - a.gain * w[k]);
    ss += d * d;
  }
  a.fit_percent = ss > 0.0 ? 100.0 * (1.0 - std::sqrt(rss / ss)) : 0.0;
  return a;
}

}  // namespace lw
