// The gain the band command recommends, by one documented rule:
//   take the first non-empty set of
//     1. robust band AND response band,   2. robust band,
//     3. locus band AND response band,    4. response band,   5. locus band,
//   then its widest range in decades (gain_intervals.h DecadeWidth) and that range's geometric
//   middle sqrt(lo hi) (GeometricMiddle: a range from 0 gives hi / sqrt(10), an open-ended one
//   lo sqrt(10)).
// A widest range of [0, inf) (every gain from 0 up, e.g. a stable first-order plant with no
// spec beyond stability) recommends nothing: found is false and reason says why.
// The geometric middle is as far (as a ratio) from either edge, so a gain error by the same factor
// either way stays inside; the robust band comes first because it already holds for 95 % of the
// plausible plants, the response band next because it uses the exact dead time and the real
// metrics.
#ifndef LOOPWRIGHT_DESIGN_RECOMMENDATION_H_
#define LOOPWRIGHT_DESIGN_RECOMMENDATION_H_

#include <optional>
#include <string>

#include "design/gain_intervals.h"

namespace lw {

struct Recommendation {
  bool found = false;  // false: no set has a range, or the chosen range is [0, inf)
  double gain = 0.0;
  GainRange range;     // the range it is the middle of
  std::string source;  // "robust and response", "robust", "locus and response", "response", "locus"
  std::string reason;  // one line, e.g. "geometric middle of [0.31, 0.82], where the robust and
                       // response bands overlap"
};

Recommendation Recommend(const GainSet& locus, const GainSet& response,
                         const std::optional<GainSet>& robust);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_RECOMMENDATION_H_
