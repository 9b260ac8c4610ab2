// The gain the band command recommends, by one documented rule:
//   take the first non-empty set of
//     1. robust band AND response band,   2. locus band AND response band,   3. response band,
//   then its widest range in decades (gain_intervals.h DecadeWidth) and that range's geometric
//   middle sqrt(lo hi) (GeometricMiddle: a range from 0 gives hi / sqrt(10), an open-ended one
//   lo sqrt(10)).
// Every set lies inside the response band: a recommended gain's simulated step (exact dead
// time, the real metrics) meets the specs on the nominal model. The locus and robust bands judge
// the dominant pole against the second-order region; where the response band misses them the
// loop does not behave as that region assumes (zeros, a third pole, the dead time), so they
// narrow the choice but never make it alone. No recommendation (found false, reason says why):
//   - the response band is empty, although the locus or robust band is not (specs_unmet);
//   - the widest range is [0, inf): every gain from 0 up meets the specs, e.g. a stable
//     first-order plant with no spec beyond stability (unbounded).
// The geometric middle is as far (as a ratio) from either edge, so a gain error by the same factor
// either way stays inside; the robust band comes first because it already holds for 95 % of the
// plausible plants.
#ifndef LOOPWRIGHT_DESIGN_RECOMMENDATION_H_
#define LOOPWRIGHT_DESIGN_RECOMMENDATION_H_

#include <optional>
#include <string>

#include "design/gain_intervals.h"

namespace lw {

struct Recommendation {
  bool found = false;        // false: no set has a range, or the chosen range is [0, inf)
  bool unbounded = false;    // not found because the chosen range is [0, inf)
  bool specs_unmet = false;  // not found because the response band is empty
  double gain = 0.0;
  GainRange range;     // the range it is the middle of
  std::string source;  // "robust and response", "locus and response" or "response" (with
                       // a sampled band: "robust and sampled response", ...)
  std::string reason;  // one line, e.g. "geometric middle of [0.31, 0.82], where the robust and
                       // response bands overlap"
  // The first non-empty set of the rule and its name, also when it recommends nothing because
  // it is [0, inf); empty and "none" when every set is empty (a gain in use is judged on it).
  GainSet set;
  std::string set_name = "none";
};

// With `sampled` (the response band of the loop a digital controller samples every T s,
// response_band.h with sample_time) that band takes the response band's place in the rule and
// in the names ("locus and sampled response", ...): the rig runs the sampled loop, so its
// simulated step is the one the recommendation promises. When it is empty while the continuous
// response band is not, nothing is recommended (specs_unmet; the reason says so).
Recommendation Recommend(const GainSet& locus, const GainSet& response,
                         const std::optional<GainSet>& robust,
                         const std::optional<GainSet>& sampled = std::nullopt);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_RECOMMENDATION_H_
