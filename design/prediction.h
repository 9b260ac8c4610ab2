// What one gain will do: the closed loop of C(s) = K shape(s) around the plant in unity
// negative feedback.
//
//   closed-loop poles  roots of a + K b (loop_polynomials.h) with the dead time through its Padé
//                      approximant of order pade_order (said in `pade_order`; the loop with the
//                      exact dead time has infinitely many poles, these approximate the slow ones)
//   dominant           the pole with the largest real part and its zeta, wn (specs.h)
//   margins            with the exact dead time (margins.h), at this gain
//   steady-state error to the reference step of size dr, exact from the loop's dc gain:
//                      dr / (1 + K L0(0)) for a loop without integrator, 0 with one (L0 =
//                      shape G); NaN when the loop is unstable
//   step response      simulated with the exact dead time (lti/simulate.h), the loop at rest at
//                      the reference's initial level; metrics by lti/step_metrics.h, whose
//                      has_peak / no_peak say whether the response has a peak to time; for an
//                      unstable loop rise time, overshoot, peak and settling time are NaN (a
//                      diverging record has none; what it would show depends on its length)
//   peak actuator      largest |u| after the step; a warning when u leaves [actuator_lo,
//                      actuator_hi]
#ifndef LOOPWRIGHT_DESIGN_PREDICTION_H_
#define LOOPWRIGHT_DESIGN_PREDICTION_H_

#include <complex>
#include <optional>
#include <string>
#include <vector>

#include "design/margins.h"
#include "design/specs.h"
#include "lti/controller.h"
#include "lti/step_metrics.h"
#include "lti/transfer_function.h"

namespace lw {

struct PredictionOptions {
  double reference_from = 0.0;  // reference level before the step
  double reference_to = 1.0;    // after it; must differ from reference_from
  double step_time = 0.0;       // s, >= 0
  double duration = 0.0;        // s after the step; 0 = automatic: 12 / sigma + 2 T where sigma
                                // is the slowest Padé closed-loop pole's decay rate (20 / the
                                // loop's frequency scale when unstable)
  int samples = 2000;           // >= 100
  int pade_order = 3;           // 1..8
  double settle_band = 0.02;    // for the settling time, 0 < band < 1
  std::optional<double> actuator_lo, actuator_hi;
  void Validate() const;  // throws UsageError naming the field
};

struct Prediction {
  double gain = 0.0;
  std::vector<std::complex<double>> poles;  // Padé closed-loop poles
  int pade_order = 0;                       // 0 when the plant has no dead time
  bool stable = false;                      // every pole above in the open left half plane
  std::complex<double> dominant;            // Im >= 0
  PoleShape dominant_shape;
  Margins margins;
  double steady_state_error = 0.0;  // exact, see above
  std::vector<double> t, r, u, y;   // the simulated record
  StepMetrics metrics;
  bool actuator_exceeded = false;
  double actuator_min = 0.0, actuator_max = 0.0;  // over the record
  std::string actuator_warning;                   // one sentence when exceeded
  // PositiveFeedbackNote (loop_polynomials.h): one sentence when K > 0 is positive feedback.
  std::string direction_warning;
};

Prediction Predict(const TransferFunction& plant, const Controller& controller, double gain,
                   const PredictionOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_PREDICTION_H_
