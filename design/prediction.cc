#include "design/prediction.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

#include "design/loop_polynomials.h"
#include "design/pole_verdict.h"
#include "lti/error.h"
#include "lti/number_text.h"
#include "lti/simulate.h"

namespace lw {
namespace {

std::string Num(double v) { return SignificantText(v, 4); }

}  // namespace

void PredictionOptions::Validate() const {
  if (!std::isfinite(reference_from) || !std::isfinite(reference_to) ||
      reference_from == reference_to) {
    throw UsageError("prediction reference step " + Num(reference_from) + " -> " +
                     Num(reference_to) + ": the levels must be finite and differ");
  }
  if (!(std::isfinite(step_time) && step_time >= 0.0)) {
    throw UsageError("prediction step_time = " + Num(step_time) + ": it must be a number >= 0");
  }
  if (!(std::isfinite(duration) && duration >= 0.0)) {
    throw UsageError("prediction duration = " + Num(duration) +
                     ": it must be a number > 0 (or 0 for automatic)");
  }
  if (samples < 100) {
    throw UsageError("prediction samples = " + std::to_string(samples) + ": it must be >= 100");
  }
  if (pade_order < 1 || pade_order > 8) {
    throw UsageError("prediction pade_order = " + std::to_string(pade_order) +
                     ": it must be an integer from 1 to 8");
  }
  if (!(settle_band > 0.0 && settle_band < 1.0)) {
    throw UsageError("prediction settle_band = " + Num(settle_band) +
                     ": it must satisfy 0 < band < 1");
  }
  if (actuator_lo && actuator_hi && !(*actuator_lo < *actuator_hi)) {
    throw UsageError("actuator limits " + Num(*actuator_lo) + ":" + Num(*actuator_hi) +
                     ": LO must be below HI");
  }
}

Prediction Predict(const TransferFunction& plant, const Controller& controller, double gain,
                   const PredictionOptions& options) {
  options.Validate();
  if (!(std::isfinite(gain) && gain > 0.0)) {
    throw UsageError("gain " + Num(gain) + ": it must be a number > 0");
  }
  Prediction p;
  p.gain = gain;
  LoopPolynomials loop = LoopPolynomials::ForGain(plant, controller, options.pade_order);
  p.pade_order = loop.pade_order;
  p.poles = loop.PolesAt(gain);
  PoleVerdict v = JudgePoles(p.poles, Region{});
  p.stable = v.meets;
  p.dominant = v.dominant;
  p.dominant_shape = v.shape;
  TransferFunction open = controller.WithGain(gain) * plant;
  p.margins = ComputeMargins(open);
  const double dr = options.reference_to - options.reference_from;
  if (!p.stable) {
    p.steady_state_error = std::numeric_limits<double>::quiet_NaN();
  } else if (std::isinf(open.dc_gain())) {
    p.steady_state_error = 0.0;
  } else {
    p.steady_state_error = dr / (1.0 + open.dc_gain());
  }
  double duration = options.duration;
  if (duration == 0.0) {
    double sigma = -v.dominant.real();
    duration = p.stable ? 12.0 / sigma + 2.0 * plant.delay()
                        : 20.0 / loop.FrequencyScale() + 2.0 * plant.delay();
  }
  const int n = options.samples;
  const double t_end = options.step_time + duration;
  p.t.resize(static_cast<size_t>(n));
  for (int i = 0; i < n; ++i) p.t[static_cast<size_t>(i)] = t_end * i / (n - 1);
  p.r.resize(p.t.size());
  for (size_t i = 0; i < p.t.size(); ++i) {
    p.r[i] = p.t[i] >= options.step_time * (1.0 - 1e-12) && p.t[i] > 0.0 ? options.reference_to
                                                                         : options.reference_from;
  }
  if (options.step_time == 0.0) p.r[0] = options.reference_from;
  ClosedLoopResponse resp = SimulateClosedLoop(plant, controller, gain, p.t, p.r);
  p.u = std::move(resp.u);
  p.y = std::move(resp.y);
  StepMetricsOptions mo;
  mo.settle_band = options.settle_band;
  // The step is applied at the first sample where r changes.
  double t_step = options.step_time;
  for (size_t i = 0; i < p.t.size(); ++i) {
    if (p.r[i] != options.reference_from) {
      t_step = p.t[i];
      break;
    }
  }
  p.metrics = MeasureStep(p.t, p.y, t_step, mo, options.reference_to, p.u);
  if (!p.stable) {
    // A diverging record has no rise, overshoot, peak or settling: what MeasureStep finds in
    // it depends only on where the record stops.
    const double nan = std::numeric_limits<double>::quiet_NaN();
    p.metrics.rise_time = p.metrics.overshoot_percent = p.metrics.settling_time = nan;
    p.metrics.peak_time = nan;
    p.metrics.has_peak = false;
    p.metrics.no_peak =
        "no peak: the closed loop is unstable, so its response has no rise, peak or settling time";
  }
  p.direction_warning = PositiveFeedbackNote(loop, plant);
  auto [mn, mx] = std::minmax_element(p.u.begin(), p.u.end());
  p.actuator_min = *mn;
  p.actuator_max = *mx;
  if (options.actuator_hi && p.actuator_max > *options.actuator_hi) {
    p.actuator_exceeded = true;
    p.actuator_warning = "the actuator would need u = " + Num(p.actuator_max) +
                         ", above its upper limit " + Num(*options.actuator_hi) +
                         "; the real loop would saturate and respond more slowly";
  } else if (options.actuator_lo && p.actuator_min < *options.actuator_lo) {
    p.actuator_exceeded = true;
    p.actuator_warning = "the actuator would need u = " + Num(p.actuator_min) +
                         ", below its lower limit " + Num(*options.actuator_lo) +
                         "; the real loop would saturate and respond more slowly";
  }
  return p;
}

}  // namespace lw
