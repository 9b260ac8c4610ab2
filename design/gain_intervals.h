// Sets of controller gains as sorted unions of disjoint intervals [lo, hi], 0 <= lo < hi <= inf.
// Edges are closed or open only up to a set of measure zero; nothing in design/ depends on it.
#ifndef LOOPWRIGHT_DESIGN_GAIN_INTERVALS_H_
#define LOOPWRIGHT_DESIGN_GAIN_INTERVALS_H_

#include <string>
#include <vector>

namespace lw {

struct GainRange {
  double lo = 0.0;
  double hi = 0.0;  // may be +inf
};

using GainSet = std::vector<GainRange>;

// Sorted, merged (touching or overlapping ranges joined), empty ranges dropped.
GainSet Normalized(GainSet set);
GainSet Intersect(const GainSet& x, const GainSet& y);
bool Contains(const GainSet& set, double gain);
// The width of a range in decades, log10(hi/lo); a range from 0 counts as 3 decades below hi and
// one without an upper end as 1 decade above lo (so open ends neither win nor vanish).
double DecadeWidth(const GainRange& r);
// The gain the band commands recommend inside a range: its geometric middle sqrt(lo hi); for a
// range starting at 0, hi / sqrt(10); for one without upper end, lo * sqrt(10).
double GeometricMiddle(const GainRange& r);
// The range of `set` with the largest DecadeWidth (the first on ties); set must not be empty.
const GainRange& Widest(const GainSet& set);
// "[0.2, 1.04]", "[0.2, 1.04] and [3, inf)", or "none".
std::string ToString(const GainSet& set);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_GAIN_INTERVALS_H_
