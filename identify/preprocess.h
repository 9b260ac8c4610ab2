// Preparing a recording for a fit: the time window, and decimation of very long records.
//
// Decimation by an integer factor M filters input and output with the same linear-phase FIR
// low-pass (a Hann-windowed sinc, cutoff 0.8 of the new Nyquist frequency, 8M + 1 taps, ends
// padded with the end values) and keeps every M-th sample. Filtering both sides with one filter
// keeps the input-output relation of a linear plant; the fitted model then sees the filtered,
// re-held input, an approximation that is only made for records too long to fit whole, and is
// always reported.
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

// A held input for a recorded response to a known step: 0 before t_step, `size` from the first
// sample at or after it.
std::vector<double> KnownStepInput(std::span<const double> t, double t_step, double size);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_PREPROCESS_H_
