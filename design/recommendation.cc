#include "design/recommendation.h"

#include <cmath>
#include <string>
#include <vector>

namespace lw {

Recommendation Recommend(const GainSet& locus, const GainSet& continuous,
                         const std::optional<GainSet>& robust,
                         const std::optional<GainSet>& sampled) {
  if (sampled && sampled->empty() && !continuous.empty()) {
    Recommendation rec;
    rec.specs_unmet = true;
    rec.reason =
        "no gain's sampled step meets the specs, although the continuous loop's does for " +
        ToString(continuous);
    return rec;
  }
  // With a sample time the sampled loop is the one the rig runs: its response band takes the
  // continuous one's place.
  const GainSet& response = sampled ? *sampled : continuous;
  const std::string resp = sampled ? "sampled response" : "response";
  struct Option {
    GainSet set;
    std::string source;
    std::string where;
  };
  std::vector<Option> options;
  if (robust) {
    options.push_back({Intersect(*robust, response), "robust and " + resp,
                       "where the robust and " + resp + " bands overlap"});
  }
  options.push_back({Intersect(locus, response), "locus and " + resp,
                     "where the locus and " + resp + " bands overlap" +
                         (robust ? " (the robust band misses the " + resp + " band)" : "")});
  options.push_back(
      {response, resp,
       "of the " + resp + " band" +
           (robust ? " (the locus and robust bands miss it)" : " (the locus band misses it)")});
  Recommendation rec;
  if (response.empty() && (!locus.empty() || (robust && !robust->empty()))) {
    rec.specs_unmet = true;
    const bool with_robust = robust && !robust->empty();
    const bool both = with_robust && !locus.empty();
    const std::string bands = both          ? "locus and robust bands judge"
                              : with_robust ? "robust band judges"
                                            : "locus band judges";
    rec.reason = "no gain's " + std::string(sampled ? "sampled" : "simulated") +
                 " step meets the specs (the " + resp + " band is empty); the " + bands +
                 " the dominant pole by the second-order region, which this loop does not "
                 "follow, so " +
                 (both ? "they recommend" : "it recommends") + " nothing";
    return rec;
  }
  for (const Option& o : options) {
    if (o.set.empty()) continue;
    rec.set = o.set;
    rec.set_name = o.source;
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
    rec.reason =
        "geometric middle of " + ToString(GainSet{rec.range}) + ", the widest range " + o.where;
    return rec;
  }
  return rec;
}

}  // namespace lw
