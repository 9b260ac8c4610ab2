// The exact locus band: every controller gain K > 0 for which the closed-loop poles of
// a(s) + K b(s) = 0 (loop_polynomials.h) meet a Region (specs.h, pole_verdict.h).
//
// Method (no sweep over K):
//  1. every gain where some closed-loop pole lies on a region boundary, from
//     boundary_crossings.h (exact roots of one real polynomial per boundary curve), and with a
//     decay floor also every breakaway point of the locus (locus.h): there two real poles turn
//     into a pair or back, which changes the pole exempt from the decay test as the dominant
//     one's conjugate (pole_verdict.h);
//  2. between two consecutive such gains no pole crosses a boundary, so each pole keeps whether
//     it would pass as the dominant one, and the verdict can change only where the dominant
//     role passes between a passing and a failing pole (two poles with equal real parts, e.g.
//     a slow real pole overtaken by a pair). PoleVerdict::lead (pole_verdict.h) measures that:
//     the passing poles' largest real part minus the failing ones', continuous in K there, a
//     dominance switch being a zero of it. Each interval is marched through in log K, at most
//     a factor 2 in K and at least 1e-5 in log K per step: while |lead| grows the step doubles;
//     while it shrinks, the step aims at 1.5 times the way to where the secant of |lead| reaches
//     zero, so one step brackets a switch. If the verdict then holds, the lead turned inside
//     the step and may have touched zero twice, so that step is marched again a third of the
//     secant's way at a time (the lead cannot reach zero and come back between two such judged
//     gains unless it moves faster than its secant says). Where the verdict changes, Brent's
//     method on the lead (signed by the verdict) finds the switch to 1e-10 relative in K: a
//     "dominance switch" edge. An interval whose verdict does not depend on which pole
//     dominates (PoleVerdict::uniform: a pole is unstable, or no pole or every pole passes) is
//     judged once, not marched. FindLocusBand follows the closed-loop poles from one judged gain
//     to the next (lti/root_tracker.h) instead of solving for them afresh, and does not judge an
//     interval that follows an unstable one across a cut where no pole is on the imaginary axis
//     or at infinity (the unstable poles cannot have left the right half plane).
//  3. consecutive meeting intervals are merged into the band: a union of ranges [lo, hi], each
//     edge with its gain, the boundary that made it, the pole on that boundary and the dominant
//     pole there.
// The first interval runs from K = 0 and the last to K = inf (judged at 1e3 times the largest
// crossing gain; beyond it the poles only approach the zeros of b and the asymptotes).
#ifndef LOOPWRIGHT_DESIGN_GAIN_BAND_H_
#define LOOPWRIGHT_DESIGN_GAIN_BAND_H_

#include <complex>
#include <functional>
#include <vector>

#include "design/boundary_crossings.h"
#include "design/gain_intervals.h"
#include "design/loop_polynomials.h"
#include "design/pole_verdict.h"
#include "design/specs.h"

namespace lw {

struct BandEdge {
  double gain = 0.0;  // 0 or inf for the open ends
  Boundary boundary = Boundary::kGainZero;
  std::complex<double> pole;      // the pole on the boundary (NaN for open ends and switches)
  std::complex<double> dominant;  // the dominant pole at this gain, Im >= 0 (NaN at 0 and inf)
};

struct BandInterval {
  BandEdge lo, hi;
};

struct LocusBand {
  Region region;
  int pade_order = 0;  // from the loop: the dead time's approximant order, 0 without dead time
  std::vector<BandInterval> intervals;      // the band, sorted, disjoint
  std::vector<BoundaryCrossing> crossings;  // every cut (step 1 above), sorted
  GainSet gains() const;                    // intervals as [lo, hi] ranges
  bool empty() const { return intervals.empty(); }
};

LocusBand FindLocusBand(const LoopPolynomials& loop, const Region& region);

// Steps 2 and 3 above for any loop: `crossings` are its boundary gains (any order), `judge`
// gives the verdict at a gain, `ref_gain` a gain scale used only when there are no crossings.
// (The discrete band, discrete_band.h, uses it with poles mapped from z.)
LocusBand BandFromCrossings(std::vector<BoundaryCrossing> crossings,
                            const std::function<PoleVerdict(double)>& judge, double ref_gain,
                            const Region& region, int pade_order);

// JudgePoles(loop.PolesAt(gain), region).
PoleVerdict JudgeGain(const LoopPolynomials& loop, const Region& region, double gain);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_GAIN_BAND_H_
