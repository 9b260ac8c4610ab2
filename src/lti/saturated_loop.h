// The closed loop with a saturating actuator (used by `loopwright simulate --saturate LO:HI`):
//
//   e = r - y,   v = C(s) e,   u = clip(v, LO, HI),   y = G(s) u    (G with its exact dead time)
//
// The loop sees the clipped u, as on a rig whose actuator stops at its limits. The controller is
// a plain one: it keeps integrating while u is clipped (no anti-windup), as the controllers of
// lti/controller.h would on such a rig.
//
// Method: when the unclipped loop (lti/simulate.h SimulateClosedLoop, exact) never leaves
// [LO, HI], that exact result is returned. Otherwise the loop is integrated with the classical
// fourth-order Runge-Kutta method at a fixed internal step that divides each sample interval
// and is no longer than the sample period, the dead time, and a twentieth of the fastest time
// constant of the plant, the controller and the unclipped closed loop. The delayed actuator
// u(t - T) comes from the history of u at the internal steps, interpolated linearly (before t[0]
// it is the initial actuator value). Controller and plant are realised by lti/state_space.h. r is
// held between samples, as in lti/simulate.h.
#ifndef LOOPWRIGHT_LTI_SATURATED_LOOP_H_
#define LOOPWRIGHT_LTI_SATURATED_LOOP_H_

#include <span>
#include <vector>

#include "lti/controller.h"
#include "lti/simulate.h"
#include "lti/transfer_function.h"

namespace lw {

struct ActuatorLimits {
  double low = 0.0;
  double high = 0.0;  // low < high, both finite
};

struct SaturatedLoopResponse {
  ClosedLoopResponse response;  // u is the clipped actuator value at t[k]
  bool limits_reached = false;  // the unclipped loop left [low, high] somewhere
  long internal_steps = 0;      // Runge-Kutta steps taken (0 when the exact result was used)
};

// Throws UsageError when the plant has no dead time and a direct feedthrough (an algebraic loop
// through the clipping has no unique solution), plus the preconditions of SimulateClosedLoop.
SaturatedLoopResponse SimulateSaturatedLoop(const TransferFunction& plant,
                                            const Controller& controller, double gain,
                                            std::span<const double> t, std::span<const double> r,
                                            ActuatorLimits limits,
                                            const SimulateOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_SATURATED_LOOP_H_
