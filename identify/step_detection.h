// What a step-test recording holds before any model is fitted: where the input steps, the
// pre-step baseline, the noise, and the data-quality problems a fit must warn about or refuse.
//
// Definitions (all model-free):
//   noise sd      robust standard deviation of first differences, 1.4826 MAD(diff) / sqrt(2)
//                 (white noise; a smooth response adds little to the differences)
//   step          a sample i where |u[i] - u[i-1]| >= 25 % of the input's range and >= 5 input
//                 noise sd; neighbouring such samples count as one step at the first of them
//   baseline      means of u and y over the samples before the first step
//   settled       over the last 20 % of the record the fitted straight line moves the output by
//                 less than 2 % of the first step's change plus 3 noise sd (common practice)
//   input away    the input's mean over those last 20 % differs from the baseline by at least a
//                 quarter of the first step (the step threshold): then a settled output rules
//                 out an integrating process, which would still be ramping; an input back at
//                 its baseline (a pulse) leaves an integrator's output settled at a new level
//   clipped       after the step the output sits exactly at its maximum (or minimum) for a run
//                 of samples while the baseline is noisy: the sensor or converter saturated
#ifndef LOOPWRIGHT_IDENTIFY_STEP_DETECTION_H_
#define LOOPWRIGHT_IDENTIFY_STEP_DETECTION_H_

#include <span>
#include <string>
#include <vector>

namespace lw {

struct RecordingAnalysis {
  std::vector<size_t> steps;     // sample indices where the input reaches a new level
  double input_baseline = 0.0;   // input units
  double output_baseline = 0.0;  // output units
  size_t baseline_samples = 0;   // samples before the first step
  double input_change = 0.0;     // first step: mean input after it minus the baseline
  double output_change = 0.0;    // first step: settled output minus the baseline
  double output_final = 0.0;     // mean output over the end of the first step's segment
  double output_noise_sd = 0.0;
  double sample_period = 0.0;  // median interval, s (the mean on a uniform grid: within 1e-6)
  double min_interval = 0.0, max_interval = 0.0;
  bool uniform = true;  // every interval within 1e-6 of the mean
  bool settled = true;
  bool input_away = true;      // see above
  size_t clipped_samples = 0;  // longest flat run at an extreme (0 when none)
  double clipped_level = 0.0;
  double clipped_from = 0.0;  // s
};

// Analyses t (s, strictly increasing), u and y. Throws DataError, naming the sample, for: fewer
// than 10 samples; a non-finite value; time not strictly increasing; a constant input; an input
// that never steps; an output clipped for at least max(5, 1 %) of the samples.
RecordingAnalysis AnalyseRecording(std::span<const double> t, std::span<const double> u,
                                   std::span<const double> y);

// Robust standard deviation of white noise from first differences (see above); 0 for < 3 values.
double DifferenceNoiseSd(std::span<const double> x);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_STEP_DETECTION_H_
