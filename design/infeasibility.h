// Why no gain meets a region, in one sentence a user can act on.
//
// The requirements (wn, zeta, sigma, wd floors and the decay floor of the other poles) are tried
// alone with stability, then in pairs, each with the exact band of gain_band.h:
//  - stability alone impossible: "no gain K > 0 gives a stable loop; the dominant pole comes
//    closest to the left half plane at Re s = 0.21 1/s, K = 3.2";
//  - one requirement alone impossible: "no gain gives zeta >= 0.8 with a stable loop; the best
//    zeta is 0.62, at K = 1.4";
//  - a pair impossible: "no gain gives zeta >= 0.8 with wn >= 3 rad/s; the best zeta with
//    wn >= 3 rad/s is 0.62, at K = 4.1";
//  - otherwise the whole set conflicts and the sentence says so with the best of the last one.
// "Best" maximises that requirement's quantity of the dominant pole (zeta, wn, sigma, wd; for
// decay the slowest other pole's decay rate) over the gains meeting the other one, on 64
// log-spaced gains per range refined by golden-section search to 1e-6 relative.
#ifndef LOOPWRIGHT_DESIGN_INFEASIBILITY_H_
#define LOOPWRIGHT_DESIGN_INFEASIBILITY_H_

#include <string>

#include "design/loop_polynomials.h"
#include "design/specs.h"

namespace lw {

struct Infeasibility {
  std::string sentence;
  std::string requirement;  // the one that cannot be met: "stability", "zeta", "wn", ...
  std::string with;         // the one it conflicts with (empty when alone)
  double best = 0.0;        // the best value of `requirement`'s quantity found
  double best_gain = 0.0;   // where (0 for "as K -> 0": no stable loop, and no gain comes
                            // closer to one than the open loop's own poles)
};

// Precondition: FindLocusBand(loop, region) is empty.
Infeasibility DiagnoseInfeasible(const LoopPolynomials& loop, const Region& region);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_INFEASIBILITY_H_
