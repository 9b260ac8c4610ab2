// Step-response metrics for simulated and measured (noisy) responses.
//
// A step at t_step from y_initial towards y_final:
//   rise time      time from the rise_low to the rise_high fraction of the change (10-90 % by
//                  default), crossings interpolated linearly between samples;
//   peak time      time from the step to the extreme value in the direction of the change;
//   overshoot      100 * (peak - final) / (final - initial), 0 when there is none;
//   undershoot     100 * the largest excursion opposite the change, before the response first
//                  reaches rise_high, / |change|;
//   settling time  time from the step after which y stays within settle_band * |change| of final
//                  (2 % band by default);
//   steady-state error  target - final, when a target (the reference) is given;
//   peak actuator  the largest |u| at or after the step.
// Without noise (the default) initial is the last sample before t_step, final the last sample:
// the record must be long enough for the response to settle. A record whose final value equals
// its initial value has no step: rise and settling time are NaN, settled is false, overshoot and
// undershoot are 0.
// Whether there is a peak (has_peak). The response has a peak when both hold:
//   - it rises above the final value by more than peak_min * |change| (0.1 % by default, below
//     what a summary's overshoot or a rig's sensor shows; in noisy mode also by more than the
//     hysteresis, below which the overshoot is reported as 0), and
//   - the largest value comes before the tail (the last tail_fraction of the record after the
//     step, the same tail `settled` is judged on): a response still creeping up, or a flat noisy
//     plateau, has its largest value there, not a peak it turns back from.
// Otherwise has_peak is false and no_peak says why in one sentence. peak and peak_time are still
// those of the largest value (for a monotone response, near the end of the record), so a reader
// comparing the peak time with a limit sees the same number as before the rule existed; what such
// a limit means without a peak is the reader's to document (design/response_band.h: peak_max).
// For measured data (`noisy`), step_metrics.cc's header comment gives the method in full: the
// noise standard deviation comes from the MAD of second differences; initial and final are 25 %
// trimmed means of the samples before the step and of the settled tail; crossings, the peak and
// the settling band are taken on a local quadratic (Savitzky-Golay) smoothing of the trace with a
// hysteresis of hysteresis_sd smoothed-noise standard deviations, so noise cannot create false
// crossings; overshoot or undershoot smaller than that hysteresis is reported as 0.
#ifndef LOOPWRIGHT_LTI_STEP_METRICS_H_
#define LOOPWRIGHT_LTI_STEP_METRICS_H_

#include <optional>
#include <span>
#include <string>

namespace lw {

struct StepMetricsOptions {
  double rise_low = 0.1;  // fraction of the change, 0 <= rise_low < rise_high <= 1
  double rise_high = 0.9;
  double settle_band = 0.02;  // fraction of |change|, in (0, 1)
  // Treat the data as measured: estimate noise, use robust final value and hysteresis.
  bool noisy = false;
  // Fraction of the samples after the step that form the tail: the final value is their robust
  // average in noisy mode, and `settled` requires the response to stay in the band over it.
  // In (0, 0.5].
  double tail_fraction = 0.2;
  // Noisy mode: hysteresis in standard deviations of the smoothed trace, >= 0.
  double hysteresis_sd = 4.0;
  // Noisy mode: width in seconds of the local quadratic smoothing window; 0 = automatic (a tenth
  // of a rough rise time). >= 0.
  double smooth_time = 0.0;
  // Smallest rise above the final value, as a fraction of |change|, that counts as a peak
  // (has_peak); in [0, 1).
  double peak_min = 0.001;
  // Noise-free mode: refine the peak by the parabola through the largest sample and its two
  // neighbours (a smooth peak between samples). false: the largest sample itself, for a
  // response whose peak is a corner (a sampled loop's, where the held input switches), which
  // the parabola would overstate.
  bool refine_peak = true;
  // Validates the fields; throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

struct StepMetrics {
  double initial = 0.0;
  double final_value = 0.0;
  double rise_time = 0.0;  // s; NaN when the response never reaches rise_high
  double peak_time = 0.0;  // s; that of the largest value also when has_peak is false
  double peak = 0.0;       // extreme output value in the direction of the change
  bool has_peak = false;   // the rule above: a real overshoot, before the tail
  std::string no_peak;     // "no peak: " and why, one sentence; empty when has_peak
  double overshoot_percent = 0.0;
  double undershoot_percent = 0.0;
  double settling_time = 0.0;       // s; NaN when never settled within the record
  double steady_state_error = 0.0;  // target - final (0 without a target)
  double peak_actuator = 0.0;       // largest |u| at or after the step (0 without u)
  double noise_sd = 0.0;            // estimated output noise standard deviation (noisy mode)
  bool settled = false;             // the response stays in the band over the whole tail
                                    // (tail_fraction) of the record
};

// Metrics of y(t) for a step at t_step. initial is taken from samples before t_step (the last one;
// their robust average in noisy mode; y[0], or the smoothed start in noisy mode, when there are
// none). Times t must be strictly increasing and finite, like y and u. target, when given, is the
// level the response should reach (for steady-state error). u, when given, supplies peak_actuator.
// Throws UsageError on size mismatches, non-finite or non-increasing samples, invalid options or
// fewer than 3 samples at or after t_step.
StepMetrics MeasureStep(std::span<const double> t, std::span<const double> y, double t_step,
                        const StepMetricsOptions& options = {},
                        std::optional<double> target = std::nullopt,
                        std::span<const double> u = {});

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_STEP_METRICS_H_
