// Preparing a recording for a fit: the time window, and decimation of very long records.
//
// Decimation by an integer factor M filters input and output with the same linear-phase FIR
// low-pass (a Hann-windowed sinc, cutoff 0.8 of the new Nyquist frequency, 8M + 1 taps, ends
// padded with the end values) and keeps every M-th sample, the input's value from the middle
// of each kept interval (the fit holds it over that interval: the value at its start would lag
// the filtered input by half of it). Filtering both sides with one filter keeps the
// input-output relation of a linear plant; the fitted model then sees the filtered, re-held
// input, an approximation that is only made for records too long to fit whole, and is always
// reported.
#ifndef LOOPWRIGHT_IDENTIFY_PREPROCESS_H_
#define LOOPWRIGHT_IDENTIFY_PREPROCESS_H_

#include <optional>
#include <span>
#include <vector>

namespace lw {

// A recording's three columns (t in s).
struct StepRecording {
  std::vector<double> t, u, y;
};

// The samples with t0 <= t <= t1.
StepRecording SelectWindow(const StepRecording& rec, double t0, double t1);

// Decimates by `factor` (>= 2) as described above. Throws UsageError on factor < 2.
StepRecording Decimate(const StepRecording& rec, int factor);

// White noise of variance s^2 leaves the filter with variance s^2 sum(w^2) per kept sample, but
// its low-frequency density, which sets the uncertainty of gains, time constants and offsets,
// is that of s^2 / M per kept sample (the filter passes DC with gain 1 and averages M samples'
// worth). A fit of the decimated record that takes its residuals for white noise therefore
// understates its variances by this ratio, 1 / (M sum(w^2)) (about 1.42 for this filter: its
// cutoff is 0.8 of the new Nyquist frequency and the Hann window's transition band narrows the
// noise band further). Throws UsageError on factor < 2.
double DecimatedNoiseRatio(int factor);

// A held input for a recorded response to a known step: 0 before t_step, `size` from the first
// sample at or after it.
std::vector<double> KnownStepInput(std::span<const double> t, double t_step, double size);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_PREPROCESS_H_
