// The unit step of the sampled loop, the loop discrete_band.h designs: the error e = r - y is
// sampled every T seconds, held (zero-order hold), and drives K C(s)/K G(s) exp(-tau s), the
// controller's shape lumped with the plant after the hold (exact for P control, an
// approximation of a digital PI, lead or PID; the dead time tau exact, a fraction of a period
// kept).
//
// Method: the sampled state space of shape(s) G(s) with the dead time (lti/zoh.h SampleZoh)
// runs the loop from rest, one period at a time,
//   x[k+1] = Phi x[k] + K (Gamma_late e[k-m] + Gamma_early e[k-m-1]),
//   y[k]   = c x[k] + d K e[k - lag],   e[k] = r - y[k]
// (with lag 0 and d != 0 the sample is solved for: e[k] = (r - c x[k]) / (1 + K d)); then the
// held error sequence is run through the exact open-loop simulation (lti/simulate.h) on the
// requested times, so that what happens between samples (an overshoot the samples miss) is seen.
// The actuator u is K shape(s) applied to the held error, simulated the same way.
#ifndef LOOPWRIGHT_DESIGN_SAMPLED_STEP_H_
#define LOOPWRIGHT_DESIGN_SAMPLED_STEP_H_

#include <span>

#include "lti/controller.h"
#include "lti/simulate.h"
#include "lti/transfer_function.h"

namespace lw {

// y(t[i]) and u(t[i]) for a unit reference step at t = 0, the loop at rest before it, the
// controller sampling at t = 0, T, 2T, ...  t strictly increasing, t[0] >= 0; gain K > 0 and period
// T > 0 finite; the plant proper. Throws UsageError otherwise (or when the record needs more than
// 1e7 periods).
ClosedLoopResponse SimulateSampledStep(const TransferFunction& plant, const Controller& controller,
                                       double gain, double period, std::span<const double> t);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_SAMPLED_STEP_H_
