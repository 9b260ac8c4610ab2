#include "design/recommendation.h"

#include <cmath>
#include <string>
#include <vector>

namespace lw {

Recommendation Recommend(const GainSet& locus, const GainSet& continuous,
                         const std::optional<GainSet>& robust,
                         const std::optional<GainSet>& sampled) {
  if (sampled && !continuous.empty() && Intersect(continuous, *sampled).empty()) {
    Recommendation rec;
    rec.specs_unmet = true;
    rec.reason =
        "no gain both meets the specs in the simulated step and keeps the sampled loop's "
        "dominant pole in the region (the response band " +
        ToString(continuous) + " misses the sampled band " + ToString(*sampled) +
        "): sample faster, or relax the specs";
    return rec;
  }
  const GainSet response = sampled ? Intersect(continuous, *sampled) : continuous;
  struct Option {
    GainSet set;
    const char* source;
    const char* where;
  };
  std::vector<Option> options;
  if (robust) {
    options.push_back({Intersect(*robust, response), "robust and response",
                       "where the robust and response bands overlap"});
  }
  options.push_back({Intersect(locus, response), "locus and response",
                     robust ? "where the locus and response bands overlap (the robust band "
                              "misses the response band)"
                            : "where the locus and response bands overlap"});
  options.push_back({response, "response",
                     robust ? "of the response band (the locus and robust bands miss it)"
                            : "of the response band (the locus band misses it)"});
  Recommendation rec;
  if (response.empty() && (!locus.empty() || (robust && !robust->empty()))) {
    rec.specs_unmet = true;
    const bool with_robust = robust && !robust->empty();
    const bool both = with_robust && !locus.empty();
    const std::string bands = both          ? "locus and robust bands judge"
                              : with_robust ? "robust band judges"
                                            : "locus band judges";
    rec.reason = "no gain's simulated step meets the specs (the response band is empty); the " +
                 bands +
                 " the dominant pole by the second-order region, which this loop does not "
                 "follow, so " +
                 (both ? "they recommend" : "it recommends") + " nothing";
    return rec;
  }
  for (const Option& o : options) {
    if (o.set.empty()) continue;
    rec.set = o.set;
    rec.set_name = std::string(o.source) + (sampled ? ", sampled" : "");
    rec.range = Widest(o.set);
    if (rec.range.lo <= 0.0 && std::isinf(rec.range.hi)) {
      // Every gain from 0 up: the specs bound nothing, and no middle of [0, inf) is a choice.
      rec.gain = 0.0;
      rec.unbounded = true;
      rec.source.clear();
      rec.reason =
          "the band is [0, inf): every gain from 0 up meets the specs, so they set no "
          "gain to recommend";
      return rec;
    }
    rec.found = true;
    rec.gain = GeometricMiddle(rec.range);
    rec.source = rec.set_name;
    rec.reason = "geometric middle of " + ToString(GainSet{rec.range}) + ", the widest range " +
                 o.where + (sampled ? ", within the sampled band" : "");
    return rec;
  }
  return rec;
}

}  // namespace lw
