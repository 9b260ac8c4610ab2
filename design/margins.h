// Gain and phase margins of an open loop L(s) = N(s)/D(s) exp(-T s) (gain included), with the
// exact dead time in the phase.
//
//   gain crossover  w_gc: |L(j w_gc)| = 1. Exact: the positive roots of
//                   |N(jw)|^2 - |D(jw)|^2, a real polynomial in w^2 (the dead time has modulus 1).
//   phase margin    PM = 180 + arg L(j w_gc) in degrees, wrapped to (-180, 180].
//   phase crossover w_pc: arg L(j w_pc) = -180 (mod 360). Without dead time exact: the positive
//                   roots of Im(N(jw) conj(D(jw))) with Re L < 0. With dead time the phase
//                   arg(rational part, unwrapped from the poles and zeros) - w T is bracketed on
//                   4000 log-spaced frequencies and each crossing refined by bisection to 1e-12.
//   gain margin     GM = 1 / |L(j w_pc)| (the factor the gain may be multiplied by before the
//                   loop reaches the stability limit); also in dB.
//   delay margin    PM (rad) / w_gc: extra dead time the loop tolerates at that crossover.
// With several crossovers, the ones reported are those with the smallest |log GM| and the
// smallest |PM|. The margins mean "distance to instability" only when the loop is stable at the
// given gain; for an open-loop unstable plant read them with the closed-loop poles.
#ifndef LOOPWRIGHT_DESIGN_MARGINS_H_
#define LOOPWRIGHT_DESIGN_MARGINS_H_

#include <vector>

#include "lti/transfer_function.h"

namespace lw {

struct Margins {
  double gain_margin;                    // ratio; +inf when there is no phase crossover
  double gain_margin_db;                 // 20 log10(gain_margin)
  double phase_crossover;                // rad/s; NaN when none
  double phase_margin_deg;               // degrees; +inf when there is no gain crossover
  double gain_crossover;                 // rad/s; NaN when none
  double delay_margin;                   // s; +inf when there is no gain crossover
  std::vector<double> gain_crossovers;   // every one found, rad/s, ascending
  std::vector<double> phase_crossovers;  // every one found in the frequency range, ascending
};

// The open loop must be proper with a nonzero numerator.
Margins ComputeMargins(const TransferFunction& open_loop);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_MARGINS_H_
