// Checking a model against a fresh closed-loop recording: does the rig, run at gain K with the
// controller C, still do what the model predicts?
//
// Steps. A reference step is a sample k >= 1 where r[k] differs from r[k - 1] by more than
// 1e-9 * max(1, |r| range); r is held between samples (lti/simulate.h), so the step happens at
// t[k]. Step i's segment runs from the previous step's sample (or 0) to the next step's sample
// (or the end): its samples before the step give the level it starts from, those after it the
// response. Every segment needs min_step_samples samples on each side of its step.
//
// Measured metrics. lti/step_metrics.h in noisy mode on the segment's y (target: the reference
// after the step, so the steady-state error is r - final), the segment's u for the peak actuator,
// plus the time the actuator spends at a limit (below).
//
// Prediction. The loop of lti/simulate.h (SimulateClosedLoop, exact dead time) driven by the
// recorded reference, in deviations from the operating point the recording starts at:
//   y_hat = y0 + dy,  u_hat = u0 + du,  where (du, dy) is the loop's response to r - r[0] from
//   the zero state,
// y0, u0 the 25 % trimmed means of y and u before the first step (u0 = 0 without a u column: the
// predicted u is then a deviation). This assumes the loop is at rest
// before the first step; it makes a plant offset (a fitted model's output at rest) irrelevant.
// Predicted metrics are lti/step_metrics.h in noise-free mode on y_hat, u_hat per segment.
// fit_percent = 100 (1 - |y - y_hat| / |y - mean(y)|) over the samples from the first step on.
//
// Noise. sd_output from the MAD of second differences of the whole y (the estimator of
// step_metrics.cc), sd_actuator the same for u.
//
// Tolerance of each metric: an interval [lo, hi] made of three parts, added up.
//   1. Model uncertainty: the central `coverage` fraction (2.5-97.5 % by default) of the metric
//      over the parameter draws (each simulated as above), widened to include the nominal value.
//      Without draws (a plant typed as a formula has no uncertainty) this part is the nominal
//      value alone.
//   2. Measurement noise: noise_replicates copies of the nominal prediction with white Gaussian
//      noise of sd_output added to y_hat (sd_actuator to u_hat), each measured in noisy mode like
//      the recording; the offsets d_j = noisy metric - noise-free metric give the interval
//      [min(mean - f sd, min d), max(mean + f sd, max d)] with f = noise_sd_factor (3 by default,
//      so that ~7 metrics per step all stay inside in well over 95 % of noise-only reruns), always
//      containing 0. This covers both the scatter and the bias of the noisy-mode method.
//   3. Resolution: one sample interval for the four times; 100 sd_output / |step| percentage
//      points for the overshoot; sd_output for the steady-state error; sd_actuator for the peak
//      actuator. Below that a difference cannot be told from the record's resolution.
// A measured metric is consistent when it lies in [lo, hi]. A metric that is NaN (never rose to
// 90 %, never settled) is consistent when measured and nominal are both NaN, or when at least
// 2.5 % of the draws or noise replicates are NaN too; a finite measurement against predictions
// that are all NaN is not. Without a u column the peak actuator and the actuator limits are not
// judged.
//
// Peak time. It is judged only where the response has a peak: when the nominal prediction's
// overshoot exceeds what noise and resolution allow of it, the overshoot's part 3 plus the depth
// of its part 2,
//   overshoot_predicted > resolution - noise_lo   (both of the overshoot, percentage points),
// i.e. noise-only reruns of the prediction, measured like the recording, would still show an
// overshoot beyond one resolution step. Otherwise (an overdamped or critically damped loop, or
// one whose overshoot is a fraction of the noise) the peak is wherever the noisy plateau happens
// to be highest, and its time says nothing about the loop: the peak time is not judged (judged
// false, not_judged "no peak: ..."), and it is not counted among the judged metrics.
//
// Actuator limits. With `actuator` given, a sample is at a limit when u is within 1e-6 of the
// limits' span of LO or HI. Without it, limits are detected: a sample is at a limit when u is
// within 1e-9 of its span of the recorded minimum or maximum, inside a flat run of at least
// min_limit_samples such samples, while the loop is away from rest: y differs from the level the
// step settles at (the middle mean of the last fifth of its segment), or r - y from the nominal
// prediction's steady-state error, by more than the step's settling band plus 3 sd_output
// (at rest u may be flat too, at a recorded extreme).
// A step is at its limit when its time at a limit is at least min_limit_samples sample intervals
// and at least limit_time_fraction of the time after the step.
//
// A record without a response is refused (DataError), not judged: when after every step the
// output moves by less than max(5 sd_output, settle_band |step|) from the middle mean of the
// step's samples before it (largest |y[k] - level| after the step), while the nominal prediction
// moves by more than twice that. A dead sensor, the wrong output column or a loop that was not
// closed give such a record; tolerances built from it would only be noise.
//
// Verdict: `saturated` when any step is at its limit (a linear prediction does not apply there);
// else `stale` when any judged metric of any step is inconsistent (the rig no longer behaves as
// the model says: refit); else `confirmed`. `reason` says why in one line.
#ifndef LOOPWRIGHT_DESIGN_CLOSED_LOOP_CHECK_H_
#define LOOPWRIGHT_DESIGN_CLOSED_LOOP_CHECK_H_

#include <array>
#include <cstdint>
#include <limits>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "lti/controller.h"
#include "lti/saturated_loop.h"
#include "lti/step_metrics.h"
#include "lti/transfer_function.h"

namespace lw {

// The closed-loop recording, as data: time (s, strictly increasing), reference, actuator (may be
// empty) and output, all the same length.
struct CheckRecord {
  std::span<const double> t, r, u, y;
};

struct ClosedLoopCheckOptions {
  double coverage = 0.95;                  // central fraction of the draws, in (0, 1)
  int noise_replicates = 100;              // >= 20
  double noise_sd_factor = 3.0;            // f above, > 0
  std::optional<ActuatorLimits> actuator;  // given limits; none = detect flat runs
  int min_limit_samples = 3;               // >= 1
  double limit_time_fraction = 0.01;       // in [0, 1)
  int min_step_samples = 10;               // >= 3, samples on each side of a step
  double rise_low = 0.1, rise_high = 0.9;  // as lti/step_metrics.h
  double settle_band = 0.02;               // as lti/step_metrics.h
  uint64_t seed = 1;                       // of the noise replicates
  int threads = 2;                         // >= 1; the result does not depend on it
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

// The judged metrics, in the order of the arrays below; keys as `predict --json` names them.
enum class CheckMetric {
  kRiseTime,
  kOvershoot,
  kPeakTime,
  kSettlingTime,
  kSteadyStateError,
  kPeakActuator,
};
inline constexpr size_t kCheckMetricCount = 6;
// "rise_time", "overshoot_percent", "peak_time", "settling_time", "steady_state_error",
// "peak_actuator".
std::string_view CheckMetricKey(CheckMetric m);
// Names for text: "rise time", "overshoot", "peak time", "settling time", "steady-state error",
// "peak actuator".
std::string_view CheckMetricLabel(CheckMetric m);
// Units for text: "s", "%", "s", "s", "" (output units), "" (actuator units).
std::string_view CheckMetricUnit(CheckMetric m);

struct MetricCheck {
  static constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  double measured = kNaN;
  double predicted = kNaN;                  // nominal model, noise-free
  double draws_lo = kNaN, draws_hi = kNaN;  // part 1 (nominal alone without draws)
  double noise_lo = 0.0, noise_hi = 0.0;    // part 2, offsets (noise_lo <= 0 <= noise_hi)
  double resolution = 0.0;                  // part 3, half-width
  double lo = kNaN, hi = kNaN;              // the tolerance interval
  bool judged = true;  // false: not judged (peak actuator without u; peak time without a peak)
  bool consistent = true;
  // Why it is not judged (empty when judged): a short label, a colon, then one sentence, e.g.
  // "no peak: the predicted overshoot 0.15 % is within the 1.4 % that noise and resolution
  // allow, so the response has no peak to time".
  std::string not_judged;
};

struct StepCheck {
  double at = 0.0;                      // s, the step's time t[k]
  double from = 0.0, to = 0.0;          // reference before and after
  size_t begin = 0, step = 0, end = 0;  // segment samples [begin, end), step index k
  std::array<MetricCheck, kCheckMetricCount> metrics;
  double time_at_limit = 0.0;  // s after the step with u at a limit (0 without u)
  bool at_limit = false;       // saturated for a meaningful time (see the file comment)
  double limit_value = std::numeric_limits<double>::quiet_NaN();  // the limit it sat at longest
  bool consistent = true;                                         // every judged metric consistent
  const MetricCheck& metric(CheckMetric m) const { return metrics[static_cast<size_t>(m)]; }
};

enum class CheckVerdict { kConfirmed, kStale, kSaturated };
// "confirmed", "stale", "saturated".
std::string_view CheckVerdictName(CheckVerdict v);

struct ClosedLoopCheck {
  std::vector<StepCheck> steps;
  std::vector<double> predicted_y, predicted_u;  // nominal prediction on t
  // Pointwise `coverage` envelope of the draws' y and u, widened to include the nominal (the
  // nominal when there are no draws); computed at every ceil(n / 4000)-th sample and linear
  // between.
  std::vector<double> envelope_y_lo, envelope_y_hi, envelope_u_lo, envelope_u_hi;
  double y0 = 0.0, u0 = 0.0;  // the operating point before the first step
  double fit_percent = 0.0;
  double sd_output = 0.0, sd_actuator = 0.0;  // estimated noise
  size_t draws = 0;                           // parameter draws used
  int noise_replicates = 0;
  bool has_u = false;
  CheckVerdict verdict = CheckVerdict::kConfirmed;
  std::string reason;  // one line, no trailing period
  // Sentences about the record worth a warning, e.g. when the output drifts before the first
  // step (the means of the two halves of the samples before it differ by more than 4 of their
  // standard errors plus the settling band of the first step): the prediction assumes rest.
  std::vector<std::string> notes;
  // The gain the recorded actuator follows through the controller's shape and how closely
  // (design/applied_gain.h; NaN without an actuator column or when saturated). When it fits
  // >= 90 % and differs from the gain given by more than 5 %, `notes` says so and a stale
  // verdict's reason names it: the check would be about a loop the rig did not run.
  double applied_gain = std::numeric_limits<double>::quiet_NaN();
  double applied_gain_fit_percent = std::numeric_limits<double>::quiet_NaN();
};

// plant: the model (nominal); draws: plausible plants from its uncertainty (may be empty);
// controller and gain: what the rig ran. Throws UsageError for bad options or a record whose
// sizes disagree or whose times are not strictly increasing, and DataError when the reference has
// no step, when a step has fewer than min_step_samples samples on a side ("reference steps at
// t = 10 s and t = 10.5 s are 5 samples apart; each needs at least 10 on either side"), when
// y or u is not finite, or when the output did not respond (above: "the output moved by at most
// 0.01, less than 0.3 (5 noise sd or 2 % of the step), after the reference stepped by 6 at
// t = 5 s, where the model predicts 5.8: the loop did not respond ..."). SimulateClosedLoop's
// UsageError passes through.
ClosedLoopCheck CheckClosedLoop(const TransferFunction& plant,
                                const std::vector<TransferFunction>& draws,
                                const Controller& controller, double gain,
                                const CheckRecord& record,
                                const ClosedLoopCheckOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_CLOSED_LOOP_CHECK_H_
