#include "design/sampled_step.h"

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "lti/error.h"
#include "lti/number_text.h"
#include "lti/state_space.h"
#include "lti/zoh.h"

namespace lw {

ClosedLoopResponse SimulateSampledStep(const TransferFunction& plant, const Controller& controller,
                                       double gain, double period, std::span<const double> t) {
  if (!(std::isfinite(gain) && gain > 0.0)) {
    throw UsageError("sampled step: gain " + ShortestText(gain) + ": it must be a number > 0");
  }
  if (!(std::isfinite(period) && period > 0.0)) {
    throw UsageError("sampled step: period " + ShortestText(period) +
                     " s: it must be a number > 0");
  }
  for (size_t i = 0; i < t.size(); ++i) {
    if (!std::isfinite(t[i]) || (i == 0 && t[i] < 0.0) || (i > 0 && !(t[i] > t[i - 1]))) {
      throw UsageError("sampled step: the times must be finite, from t >= 0, strictly increasing");
    }
  }
  ClosedLoopResponse out;
  if (t.empty()) return out;
  constexpr double kMaxPeriods = 1e7;
  if (t.back() / period > kMaxPeriods) {
    throw UsageError("sampled step: a record of " + ShortestText(t.back()) + " s at a period of " +
                     ShortestText(period) + " s needs more than 1e7 periods");
  }
  const size_t periods = static_cast<size_t>(std::floor(t.back() / period)) + 1;

  // The error sequence e[0 .. periods - 1], one period at a time.
  const TransferFunction open = controller.Shape() * plant.Rational();
  const SampledStateSpace sd = SampleZoh(Realize(open), period, plant.delay());
  const int lag = sd.output_lag();
  const int m = sd.whole_delay;
  std::vector<double> e(periods, 0.0);
  auto past = [&](size_t k, int back) {
    return static_cast<long long>(k) - back >= 0 ? e[k - static_cast<size_t>(back)] : 0.0;
  };
  Eigen::VectorXd x = Eigen::VectorXd::Zero(sd.phi.rows());
  for (size_t k = 0; k < periods; ++k) {
    const double cx = sd.phi.rows() ? sd.c.dot(x) : 0.0;
    if (lag == 0) {
      e[k] = (1.0 - cx) / (1.0 + gain * sd.d);
    } else {
      e[k] = 1.0 - (cx + sd.d * gain * past(k, lag));
    }
    if (sd.phi.rows()) {
      Eigen::VectorXd next = sd.phi * x + gain * past(k, m) * sd.gamma_late;
      if (sd.fraction > 0.0) next += gain * past(k, m + 1) * sd.gamma_early;
      x = next;
    }
  }

  // The held error on the union of the sample instants and the requested times, through the
  // exact open-loop simulation from rest.
  std::vector<double> grid, held;
  std::vector<size_t> pick;
  grid.reserve(periods + t.size());
  size_t i = 0;
  const double tol = 1e-9 * period;
  for (size_t k = 0; k < periods; ++k) {
    const double tk = static_cast<double>(k) * period;
    while (i < t.size() && t[i] < tk - tol) {
      pick.push_back(grid.size());
      grid.push_back(t[i]);
      held.push_back(k > 0 ? e[k - 1] : 0.0);
      ++i;
    }
    if (i < t.size() && std::abs(t[i] - tk) <= tol) {
      pick.push_back(grid.size());
      ++i;
    }
    grid.push_back(tk);
    held.push_back(e[k]);
  }
  while (i < t.size()) {
    pick.push_back(grid.size());
    grid.push_back(t[i]);
    held.push_back(e[periods - 1]);
    ++i;
  }
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  const std::vector<double> y = Simulate((open * gain).WithDelay(plant.delay()), grid, held, so);
  const std::vector<double> u = Simulate(controller.WithGain(gain), grid, held, so);
  out.y.reserve(t.size());
  out.u.reserve(t.size());
  for (size_t j : pick) {
    out.y.push_back(y[j]);
    out.u.push_back(u[j]);
  }
  return out;
}

}  // namespace lw
