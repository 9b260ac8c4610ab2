// Model-free first-order-plus-dead-time estimates from a step response by the two-point
// method of C. L. Smith (Digital Computer Process Control, Intext, 1972; constants from
// memory): with t28 and t63 the times (after the step) at which the response reaches 28.3 %
// and 63.2 % of its change,
//   tau = 1.5 (t63 - t28),   T = t63 - tau.
// On exact first-order data the two points are T + tau/3 and T + tau (1 - e^{-1/3} = 0.2835,
// 1 - e^{-1} = 0.6321), so the rounded constants recover tau to 0.05 % and T to 0.001 tau.
// These are starting values for the output-error fit, never its answer.
#ifndef LOOPWRIGHT_IDENTIFY_TWO_POINT_H_
#define LOOPWRIGHT_IDENTIFY_TWO_POINT_H_

#include <optional>
#include <span>

namespace lw {

struct TwoPointEstimate {
  double t28 = 0.0;            // s after the step
  double t63 = 0.0;            // s after the step
  double time_constant = 0.0;  // s, 1.5 (t63 - t28)
  double dead_time = 0.0;      // s, t63 - tau, clamped at 0
};

// y is the response (any offset) to a step at t_step; y_initial and y_final are its levels
// before and long after the step (y_final != y_initial). Crossings are interpolated linearly
// between samples, on y as given (smooth noisy data first). nullopt when the response never
// reaches 63.2 % of the change within the record.
std::optional<TwoPointEstimate> SmithTwoPoint(std::span<const double> t, std::span<const double> y,
                                              double t_step, double y_initial, double y_final);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_TWO_POINT_H_
