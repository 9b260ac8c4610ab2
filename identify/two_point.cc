#include "identify/two_point.h"

#include <algorithm>
#include <cmath>

namespace lw {
namespace {

// First time after t_step at which the normalised response reaches `level`, interpolated.
std::optional<double> Crossing(std::span<const double> t, std::span<const double> y, double t_step,
                               double y0, double dy, double level) {
  double prev_f = 0.0, prev_t = t_step;
  bool have_prev = false;
  for (size_t i = 0; i < t.size(); ++i) {
    if (t[i] < t_step) continue;
    double f = (y[i] - y0) / dy;
    if (f >= level) {
      if (!have_prev || f == prev_f) return t[i] - t_step;
      double a = (level - prev_f) / (f - prev_f);
      return std::max(0.0, prev_t + a * (t[i] - prev_t) - t_step);
    }
    prev_f = f;
    prev_t = t[i];
    have_prev = true;
  }
  return std::nullopt;
}

}  // namespace

std::optional<TwoPointEstimate> SmithTwoPoint(std::span<const double> t, std::span<const double> y,
                                              double t_step, double y_initial, double y_final) {
  const double dy = y_final - y_initial;
  if (!(std::abs(dy) > 0.0) || t.size() != y.size()) return std::nullopt;
  auto t28 = Crossing(t, y, t_step, y_initial, dy, 0.283);
  auto t63 = Crossing(t, y, t_step, y_initial, dy, 0.632);
  if (!t28 || !t63) return std::nullopt;
  TwoPointEstimate e;
  e.t28 = *t28;
  e.t63 = *t63;
  e.time_constant = 1.5 * (e.t63 - e.t28);
  e.dead_time = std::max(0.0, e.t63 - e.time_constant);
  return e;
}

}  // namespace lw
