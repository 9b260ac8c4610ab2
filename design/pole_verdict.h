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
  // How far the verdict is from changing hands with the dominant role. Call a pole "passing"
  // when the loop would meet the region if it were the dominant one: it lies inside the
  // dominant-pole bounds and every pole but it and its conjugate has -Re(s) >= decay_min. Then
  //   lead = max Re over the passing poles - max Re over the others
  // (+inf when every pole passes, -inf when none does), and for a stable loop meets == (lead > 0)
  // (lead == 0 is a tie, decided as the dominant pole is). Between two boundary crossings each
  // pole keeps its side of every boundary, hence whether it passes (with a decay floor, also
  // between the breakaway points of the locus, where a real pair of poles turns complex or
  // back and so which pole is whose conjugate changes), so lead is continuous in the gain there
  // and a dominance switch that changes the verdict is a zero of it (gain_band.h).
  double lead = 0.0;
  // Re(dominant) - Re(the next pole that is not the dominant one or its conjugate), >= 0: how
  // far the dominant role is from changing hands at all; +inf with a single real pole or pair.
  double gap = 0.0;
  // True when the verdict does not depend on which pole is dominant: some pole is unstable, or
  // no pole lies inside the dominant-pole bounds, or every pole does and every pole meets
  // decay_min. Between two boundary crossings each pole keeps its side of every boundary, so
  // then the verdict holds until the next crossing and no dominance switch can change it. (Not
  // "no pole passes": with a decay floor, whether a pole passes also depends on which pole is
  // its conjugate, and that changes where two real poles meet and leave as a pair.)
  bool uniform = false;
};

PoleVerdict JudgePoles(const std::vector<std::complex<double>>& poles, const Region& region);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_POLE_VERDICT_H_
