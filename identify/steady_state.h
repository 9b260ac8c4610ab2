// Has a measured response come to rest? The test the hardware commands use to decide when a
// step test or a closed-loop step has been recorded long enough (`--settle auto`).
//
// Data: samples y[begin..end) of one phase that started at sample `begin` (a step, or the start
// of a hold), with `level_before` the output level before that phase began.
// Window: the last w = max(min_samples, ceil(window_fraction * (end - begin))) samples, split into
// two halves A (older) and B (newer) of h = floor(w / 2) samples each.
//   drift  d = |mean(B) - mean(A)|
//   change c = |mean(B) - level_before|       (how far the phase has moved the output)
//   noise  s = 1.4826 MAD(first differences in the window) / sqrt(2), the white-noise sd
//              (a difference of two independent samples has sd sqrt(2) s)
//   allowance a = noise_factor * s * sqrt(2 / h)   (the sd of a difference of two h-means,
//              times the factor)
// The phase is at rest when there are at least 2 min_samples samples, and
//   d <= band * c + a + 1e-12 max(1, |mean(B)|)
// and, with require_change, the output has clearly moved: c > 2 a (so the dead time right after a
// step, when nothing has happened yet, is not mistaken for rest).
// For a first-order response y = c (1 - exp(-t / tau)) without noise and the defaults this
// happens near t = 5.7 tau, after the textbook 2 % settling time of about 4 tau.
#ifndef LOOPWRIGHT_IDENTIFY_STEADY_STATE_H_
#define LOOPWRIGHT_IDENTIFY_STEADY_STATE_H_

#include <cstddef>
#include <span>

namespace lw {

struct SteadyStateOptions {
  std::size_t min_samples = 20;        // >= 4
  double window_fraction = 1.0 / 3.0;  // (0, 1]
  double band = 0.02;                  // allowed drift as a fraction of the change, in [0, 1)
  double noise_factor = 3.0;           // > 0
  bool require_change = false;
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

struct SteadyStateTest {
  bool at_rest = false;
  double drift = 0.0, change = 0.0, noise_sd = 0.0, allowance = 0.0;
  std::size_t window = 0;  // w
};

// The test above on y[begin, y.size()). Needs begin <= y.size().
SteadyStateTest TestSteadyState(std::span<const double> y, std::size_t begin, double level_before,
                                const SteadyStateOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_STEADY_STATE_H_
