// Whether a set of closed-loop poles meets a Region (specs.h), and why not.
//
// Test, in this order: every pole strictly in the left half plane (else kUnstable); the dominant
// pole (the largest real part, see specs.h) inside the region (else the first bound it breaks:
// kWn, kZeta, kSigma, kWd); every other pole, i.e. not the dominant pole or its conjugate, with
// -Re(s) >= decay_min (else kDecay).
#ifndef LOOPWRIGHT_DESIGN_POLE_VERDICT_H_
#define LOOPWRIGHT_DESIGN_POLE_VERDICT_H_

#include <complex>
#include <string>
#include <vector>

#include "design/specs.h"

namespace lw {

enum class Failure { kNone, kUnstable, kWn, kZeta, kSigma, kWd, kDecay };
// "unstable", "wn", "zeta", "sigma", "wd", "decay", "none".
const char* FailureName(Failure f);

struct PoleVerdict {
  bool meets = false;
  Failure failure = Failure::kNone;
  std::complex<double> dominant;  // the dominant pole, Im >= 0 (NaN when there are no poles)
  PoleShape shape;                // of the dominant pole
  // Re(dominant) - Re(the next pole that is not the dominant one or its conjugate), >= 0: how
  // far the dominant role is from changing hands; +inf with a single real pole or pair.
  double gap = 0.0;
  // True when the verdict does not depend on which pole is dominant: some pole is unstable, or
  // no pole would pass the dominant-pole bounds, or every pole would (and every pole meets
  // decay_min). Between two boundary crossings each pole keeps its side of every boundary, so
  // then the verdict holds until the next crossing and no dominance switch can change it.
  bool uniform = false;
};

PoleVerdict JudgePoles(const std::vector<std::complex<double>>& poles, const Region& region);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_POLE_VERDICT_H_
