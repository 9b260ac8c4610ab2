#include "design/gain_intervals.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

#include "lti/error.h"

namespace lw {

GainSet Normalized(GainSet set) {
  set.erase(
      std::remove_if(set.begin(), set.end(), [](const GainRange& r) { return !(r.hi > r.lo); }),
      set.end());
  std::sort(set.begin(), set.end(),
            [](const GainRange& x, const GainRange& y) { return x.lo < y.lo; });
  GainSet out;
  for (const GainRange& r : set) {
    if (!out.empty() && r.lo <= out.back().hi) {
      out.back().hi = std::max(out.back().hi, r.hi);
    } else {
      out.push_back(r);
    }
  }
  return out;
}

GainSet Intersect(const GainSet& x, const GainSet& y) {
  GainSet out;
  for (const GainRange& a : x) {
    for (const GainRange& b : y) {
      GainRange r{std::max(a.lo, b.lo), std::min(a.hi, b.hi)};
      if (r.hi > r.lo) out.push_back(r);
    }
  }
  return Normalized(out);
}

bool Contains(const GainSet& set, double gain) {
  for (const GainRange& r : set) {
    if (gain >= r.lo && gain <= r.hi) return true;
  }
  return false;
}

double DecadeWidth(const GainRange& r) {
  if (std::isinf(r.hi)) return 1.0;
  if (r.lo <= 0.0) return 3.0;
  return std::log10(r.hi / r.lo);
}

double GeometricMiddle(const GainRange& r) {
  if (std::isinf(r.hi)) return r.lo * std::sqrt(10.0);
  if (r.lo <= 0.0) return r.hi / std::sqrt(10.0);
  return std::sqrt(r.lo * r.hi);
}

const GainRange& Widest(const GainSet& set) {
  if (set.empty()) throw UsageError("no gain range to choose from");
  size_t best = 0;
  for (size_t i = 1; i < set.size(); ++i) {
    if (DecadeWidth(set[i]) > DecadeWidth(set[best])) best = i;
  }
  return set[best];
}

std::string ToString(const GainSet& set) {
  if (set.empty()) return "none";
  std::string s;
  for (size_t i = 0; i < set.size(); ++i) {
    char buf[96];
    if (std::isinf(set[i].hi)) {
      std::snprintf(buf, sizeof buf, "[%.4g, inf)", set[i].lo);
    } else {
      std::snprintf(buf, sizeof buf, "[%.4g, %.4g]", set[i].lo, set[i].hi);
    }
    s += (i ? " and " : "") + std::string(buf);
  }
  return s;
}

}  // namespace lw
