#include "design/recommendation.h"

#include <cmath>
#include <string>
#include <vector>

namespace lw {

Recommendation Recommend(const GainSet& locus, const GainSet& response,
                         const std::optional<GainSet>& robust) {
  struct Option {
    GainSet set;
    const char* source;
    const char* where;
  };
  std::vector<Option> options;
  if (robust) {
    options.push_back({Intersect(*robust, response), "robust and response",
                       "where the robust and response bands overlap"});
    options.push_back({*robust, "robust", "of the robust band (the response band misses it)"});
  }
  options.push_back({Intersect(locus, response), "locus and response",
                     robust ? "where the locus and response bands overlap (no robust band)"
                            : "where the locus and response bands overlap"});
  options.push_back({response, "response", "of the response band (the locus band misses it)"});
  options.push_back({locus, "locus", "of the locus band (no simulated response meets the specs)"});
  Recommendation rec;
  for (const Option& o : options) {
    if (o.set.empty()) continue;
    rec.range = Widest(o.set);
    if (rec.range.lo <= 0.0 && std::isinf(rec.range.hi)) {
      // Every gain from 0 up: the specs bound nothing, and no middle of [0, inf) is a choice.
      rec.gain = 0.0;
      rec.source.clear();
      rec.reason =
          "the band is [0, inf): every gain from 0 up meets the specs, so they set no "
          "gain to recommend";
      return rec;
    }
    rec.found = true;
    rec.gain = GeometricMiddle(rec.range);
    rec.source = o.source;
    rec.reason =
        "geometric middle of " + ToString(GainSet{rec.range}) + ", the widest range " + o.where;
    return rec;
  }
  return rec;
}

}  // namespace lw
