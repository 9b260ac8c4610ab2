#include "io/rig_limits.h"

#include <algorithm>
#include <cmath>
#include <optional>
#include <string_view>

#include "io/rig_profile.h"
#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

std::string WithUnit(double v, const std::string& unit) {
  std::string s = SignificantText(v, 6);
  if (!unit.empty()) s += " " + unit;
  return s;
}

void RequirePositive(double v, const char* field) {
  if (!(v > 0.0)) {
    throw UsageError(std::string("limit ") + field + " = " + ShortestText(v) +
                     ": it must be a number > 0");
  }
}

void RequireOrdered(double lo, double hi, const char* field) {
  if (std::isnan(lo) || std::isnan(hi) || !(lo < hi)) {
    throw UsageError(std::string("limit ") + field + " " + ShortestText(lo) + " to " +
                     ShortestText(hi) + ": the low end must be below the high end");
  }
}

}  // namespace

void RigLimits::Validate() const {
  RequireOrdered(actuator_lo, actuator_hi, "actuator range");
  RequireOrdered(output_lo, output_hi, "output trip");
  RequirePositive(max_gain, "max_gain");
  RequirePositive(max_step, "max_step");
  RequirePositive(max_slew, "max_slew");
}

RigLimits RigLimits::Merge(const RigLimits& o) const {
  RigLimits m;
  m.actuator_lo = std::max(actuator_lo, o.actuator_lo);
  m.actuator_hi = std::min(actuator_hi, o.actuator_hi);
  m.output_lo = std::max(output_lo, o.output_lo);
  m.output_hi = std::min(output_hi, o.output_hi);
  m.max_gain = std::min(max_gain, o.max_gain);
  m.max_step = std::min(max_step, o.max_step);
  m.max_slew = std::min(max_slew, o.max_slew);
  m.actuator_unit = actuator_unit.empty() ? o.actuator_unit : actuator_unit;
  m.output_unit = output_unit.empty() ? o.output_unit : output_unit;
  return m;
}

std::string RigLimits::CheckActuatorValue(double u) const {
  if (!std::isfinite(u)) return "actuator value " + ShortestText(u) + " is not a finite number";
  if (u < actuator_lo) {
    return "actuator " + WithUnit(u, actuator_unit) + " is below the actuator range's bottom " +
           WithUnit(actuator_lo, actuator_unit);
  }
  if (u > actuator_hi) {
    return "actuator " + WithUnit(u, actuator_unit) + " is above the actuator range's top " +
           WithUnit(actuator_hi, actuator_unit);
  }
  return {};
}

std::string RigLimits::CheckActuatorMove(double from, double to,
                                         double seconds_since_change) const {
  std::string why = CheckActuatorValue(to);
  if (!why.empty()) return why;
  double change = std::abs(to - from);
  if (change > max_step) {
    return "the actuator step from " + WithUnit(from, actuator_unit) + " to " +
           WithUnit(to, actuator_unit) + " is " + WithUnit(change, actuator_unit) +
           ", more than the maximum step " + WithUnit(max_step, actuator_unit);
  }
  if (change > 0.0 && std::isfinite(max_slew)) {
    double rate = seconds_since_change > 0.0 ? change / seconds_since_change : RigLimits::kInf;
    if (rate > max_slew) {
      return "the actuator change from " + WithUnit(from, actuator_unit) + " to " +
             WithUnit(to, actuator_unit) + " " + SignificantText(seconds_since_change, 4) +
             " s after the last change is a slew of " + SignificantText(rate, 4) +
             " per second, more than the maximum slew " + SignificantText(max_slew, 6) +
             " per second";
    }
  }
  return {};
}

std::string RigLimits::CheckGain(double gain) const {
  if (!(std::isfinite(gain) && gain > 0.0)) {
    return "gain " + ShortestText(gain) + " is not a number > 0";
  }
  if (gain > max_gain) {
    return "gain " + SignificantText(gain, 6) + " is above the maximum gain " +
           SignificantText(max_gain, 6);
  }
  return {};
}

std::string RigLimits::CheckOutput(double y) const {
  if (std::isnan(y)) return "output is not a number";
  if (y > output_hi) {
    return "output " + WithUnit(y, output_unit) + " is above the trip limit " +
           WithUnit(output_hi, output_unit);
  }
  if (y < output_lo) {
    return "output " + WithUnit(y, output_unit) + " is below the trip limit " +
           WithUnit(output_lo, output_unit);
  }
  return {};
}

void RigLimits::RequireActuatorMove(double from, double to, double seconds_since_change) const {
  std::string why = CheckActuatorMove(from, to, seconds_since_change);
  if (!why.empty()) throw UsageError("refused: " + why + "; nothing was sent");
}

void RigLimits::RequireGain(double gain) const {
  std::string why = CheckGain(gain);
  if (!why.empty()) throw UsageError("refused: " + why + "; nothing was sent");
}

RigLimits LimitsFromProfile(const RigProfile& p) {
  RigLimits l;
  if (p.actuator_min) l.actuator_lo = *p.actuator_min;
  if (p.actuator_max) l.actuator_hi = *p.actuator_max;
  if (p.output_min) l.output_lo = *p.output_min;
  if (p.output_max) l.output_hi = *p.output_max;
  if (p.max_gain) l.max_gain = *p.max_gain;
  l.actuator_unit = p.actuator_unit;
  l.output_unit = p.output_unit;
  return l;
}

std::pair<double, double> ParseRange(const std::string& text, const std::string& option) {
  const std::optional<std::pair<double, double>> pair = ParseNumberPair(text);
  if (!pair || !(pair->first < pair->second)) {
    throw UsageError(option + " '" + text + "': expected LO:HI with two numbers, LO < HI");
  }
  return *pair;
}

}  // namespace lw
