// The gain a closed-loop recording shows its controller ran: the least-squares K in
//   u[k] - u0 = K w[k],   w = Shape(s) applied to e - e0, e = r - y,
// over the samples from the first reference step on, where Shape = C(s)/K is the controller's
// shape (lti/controller.h), simulated from the zero state on the recorded instants with the
// error held between them, and u0, e0 are the means before that step (the loop at rest).
// A record that follows one gain through its controller's shape is fitted closely (fit near
// 100 %); when its K differs from the one a check was given, the check's verdict is about the
// wrong loop, and the check says so instead of calling the model stale.
//
// Preconditions: t strictly increasing, r, u, y of t's length, first_step in [1, t.size()).
// The actuator must not have sat at a limit (a clipped u does not follow the shape).
#ifndef LOOPWRIGHT_DESIGN_APPLIED_GAIN_H_
#define LOOPWRIGHT_DESIGN_APPLIED_GAIN_H_

#include <cstddef>
#include <span>

#include "lti/controller.h"

namespace lw {

struct AppliedGain {
  double gain = 0.0;         // least-squares K (NaN when w is zero throughout)
  double fit_percent = 0.0;  // 100 (1 - |u - u0 - K w| / |u - u0|) over the fitted samples
};

AppliedGain EstimateAppliedGain(const Controller& controller, std::span<const double> t,
                                std::span<const double> r, std::span<const double> u,
                                std::span<const double> y, size_t first_step);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_APPLIED_GAIN_H_
