// The safety limits a host applies before it sends anything that moves a rig's actuator, and to
// every sample it receives. They come from the rig's own capabilities line (actuator range and
// safe value), the rig profile (io/rig_profile.h) and command options; when several give the
// same limit the tightest wins (Merge). A limit that nobody gave is unbounded.
//
//   actuator range   ACT_LO <= u <= ACT_HI for every open-loop value sent
//   maximum step     |u_new - u_now| <= max_step for one open-loop change (actuator units)
//   maximum slew     |u_new - u_now| / dt <= max_slew, dt the seconds since the actuator value
//                    was last changed (actuator units per second); a change is never split into a
//                    ramp behind the user's back: it is refused with the reason
//   maximum gain     K <= max_gain for a closed-loop command
//   trip limits      output_lo <= y <= output_hi for every received sample; a sample outside
//                    means a safe stop at once (the session does it) and exit status 5
//
// Every check returns the refusal as one sentence (empty when allowed), so a command can say why
// before anything is sent; RequireActuatorMove/RequireGain throw UsageError (exit 2: what was
// asked for is not allowed, nothing was sent) with that sentence.
#ifndef LOOPWRIGHT_IO_RIG_LIMITS_H_
#define LOOPWRIGHT_IO_RIG_LIMITS_H_

#include <limits>
#include <string>
#include <utility>

namespace lw {

struct RigProfile;  // io/rig_profile.h

struct RigLimits {
  static constexpr double kInf = std::numeric_limits<double>::infinity();
  double actuator_lo = -kInf;
  double actuator_hi = kInf;
  double output_lo = -kInf;  // trip limits on the output
  double output_hi = kInf;
  double max_gain = kInf;
  double max_step = kInf;  // actuator units, > 0
  double max_slew = kInf;  // actuator units per second, > 0
  std::string actuator_unit;
  std::string output_unit;

  // Throws UsageError naming the field, its value and the rule it broke: NaN anywhere, lo >= hi,
  // max_gain, max_step or max_slew not > 0.
  void Validate() const;

  // The tightest of this and other, limit by limit (the units of whichever names one).
  RigLimits Merge(const RigLimits& other) const;

  // Empty when the open-loop value `to` may be sent with the actuator now at `from` and the last
  // change `seconds_since_change` ago (infinity when there was none), else why not, e.g.
  // "actuator 120 % is above the actuator range's top 100 %".
  std::string CheckActuatorMove(double from, double to, double seconds_since_change) const;
  // Empty when the value lies inside the actuator range, else why not.
  std::string CheckActuatorValue(double u) const;
  // Empty when the gain is allowed, else why not.
  std::string CheckGain(double gain) const;
  // Empty when the output lies inside the trip limits, else the trip's sentence,
  // "output 212 degC is above the trip limit 200 degC".
  std::string CheckOutput(double y) const;

  // The checks above as throws of UsageError.
  void RequireActuatorMove(double from, double to, double seconds_since_change) const;
  void RequireGain(double gain) const;
};

// The limits a rig profile sets (actuator range, trip limits, maximum gain and the units).
RigLimits LimitsFromProfile(const RigProfile& profile);

// "LO:HI" with two finite numbers, LO < HI; throws UsageError naming `option` otherwise.
std::pair<double, double> ParseRange(const std::string& text, const std::string& option);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_LIMITS_H_
