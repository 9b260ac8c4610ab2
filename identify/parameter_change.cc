#include "identify/parameter_change.h"

#include <cmath>

namespace lw {

double StandardErrorFromInterval(double ci_low, double ci_high) {
  if (!std::isfinite(ci_low) || !std::isfinite(ci_high) || ci_high < ci_low) {
    return std::numeric_limits<double>::quiet_NaN();
  }
  return (ci_high - ci_low) / (2.0 * kSignificanceZ);
}

ParameterChange CompareEstimate(const EstimateSummary& before, const EstimateSummary& after) {
  ParameterChange c;
  c.name = after.name;
  c.unit = after.unit;
  c.before = before;
  c.after = after;
  c.change = after.value - before.value;
  c.change_percent = before.value != 0.0 ? 100.0 * c.change / std::abs(before.value)
                                         : std::numeric_limits<double>::quiet_NaN();
  if (std::isfinite(before.se) && std::isfinite(after.se)) {
    const double se = std::hypot(before.se, after.se);
    if (se > 0.0) {
      c.z = c.change / se;
      c.significant = std::abs(c.z) > kSignificanceZ;
    } else {
      c.significant = c.change != 0.0;
      c.z = c.change == 0.0 ? 0.0 : std::copysign(INFINITY, c.change);
    }
  }
  return c;
}

std::vector<ParameterChange> CompareEstimates(const std::vector<EstimateSummary>& before,
                                              const std::vector<EstimateSummary>& after,
                                              std::vector<std::string>& only_before,
                                              std::vector<std::string>& only_after) {
  std::vector<ParameterChange> out;
  for (const auto& a : after) {
    const EstimateSummary* match = nullptr;
    for (const auto& b : before) {
      if (b.name == a.name) match = &b;
    }
    if (match) {
      out.push_back(CompareEstimate(*match, a));
    } else {
      only_after.push_back(a.name);
    }
  }
  for (const auto& b : before) {
    bool found = false;
    for (const auto& a : after) found = found || a.name == b.name;
    if (!found) only_before.push_back(b.name);
  }
  return out;
}

}  // namespace lw
