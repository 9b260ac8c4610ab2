// The rig profile: what loopwright knows about one rig, kept in a TOML file (rig.toml) at the top
// of a rig workspace (`loopwright init DIR` writes it; README.md, "Rig workspace", shows one).
// Hardware commands read the link, sample period, actuator and trip limits and maximum gain from
// here; the default specs fill in spec options a command was not given.
//
// Keys (TOML 1.0; every table and key is optional except `name`, unknown keys are an error so a
// typo is not silently ignored). Limits not given are unbounded.
//
//   name = "heater zone 2"          # rig name, non-empty
//   [link]
//   kind = "serial"                 # "serial", "tcp" or "none" (offline: no hardware)
//   device = "/dev/ttyUSB0"         # serial: device path (required for serial)
//   baud = 115200                   # serial: bits per second, one of the standard rates
//   address = "192.168.1.20:5020"   # tcp: HOST:PORT (required for tcp), port 1..65535
//   timeout_s = 1.0                 # both: seconds without an answer before the link fails, > 0
//   [sampling]
//   period_s = 0.1                  # sample period in seconds, > 0
//   [actuator]
//   min = 0.0                       # lowest command the rig accepts (actuator units)
//   max = 100.0                     # highest; min < max
//   safe = 0.0                      # value sent on any stop; min <= safe <= max
//   unit = "%"
//   [trip]
//   output_min = -10.0              # the output below which a run stops (output units)
//   output_max = 90.0               # above which a run stops; output_min < output_max
//   unit = "degC"
//   [controller]
//   max_gain = 8.0                  # the largest controller gain ever applied, > 0
//   [specs]                         # defaults for the spec options (same meaning and rules)
//   rise_max_s = 30.0               # > 0
//   overshoot_max_percent = 10.0    # 0 < P < 100
//   zeta_min = 0.5                  # 0 <= Z < 1
//   settle_max_s = 120.0            # > 0
//   settle_band_percent = 2.0       # 1 or 2
//
// Numbers may be written as integers or floats. Units are the rig's own (what the recordings'
// columns hold); loopwright never converts them.
#ifndef LOOPWRIGHT_IO_RIG_PROFILE_H_
#define LOOPWRIGHT_IO_RIG_PROFILE_H_

#include <optional>
#include <string>
#include <string_view>

namespace lw {

enum class LinkKind { kNone, kSerial, kTcp };
// "none", "serial", "tcp".
std::string_view LinkKindName(LinkKind kind);

struct RigLinkSettings {
  LinkKind kind = LinkKind::kNone;
  std::string device;   // serial only, e.g. "/dev/ttyUSB0"
  int baud = 115200;    // serial only
  std::string address;  // tcp only, "HOST:PORT"
  double timeout_s = 1.0;

  // The host and port of a tcp address ("HOST:PORT"; "[v6addr]:PORT" for IPv6). Validate first.
  std::string Host() const;
  int Port() const;
};

struct RigSpecDefaults {
  std::optional<double> rise_max_s;
  std::optional<double> overshoot_max_percent;
  std::optional<double> zeta_min;
  std::optional<double> settle_max_s;
  double settle_band_percent = 2.0;
};

struct RigProfile {
  std::string name;
  RigLinkSettings link;
  double sample_period_s = 0.1;
  std::optional<double> actuator_min, actuator_max;
  double actuator_safe = 0.0;
  std::string actuator_unit;
  std::optional<double> output_min, output_max;  // trip limits
  std::string output_unit;
  std::optional<double> max_gain;
  RigSpecDefaults specs;

  // Throws UsageError naming the field (as its TOML key, e.g. "actuator.max"), its value and
  // the rule it broke.
  void Validate() const;
  // The first rule broken, without throwing: the field's TOML key and Validate()'s sentence.
  struct Problem {
    std::string key, sentence;
  };
  std::optional<Problem> FirstProblem() const;

  // The actuator value v clipped to [actuator_min, actuator_max] (unbounded sides left as they
  // are).
  double ClipActuator(double v) const;
  // Whether an output value y lies inside the trip limits (true when there are none).
  bool OutputInsideTrip(double y) const;
};

// Parses a profile from TOML text; `source` names it in messages. Throws DataError
// "SOURCE:LINE:COLUMN: <what is wrong>" for TOML syntax errors, wrong value types and unknown
// keys (LINE and COLUMN from the offending key or value), and for values breaking a rule
// (Validate()'s sentence, prefixed by the value's position).
RigProfile ParseRigProfile(std::string_view toml_text, const std::string& source);

// Reads and parses the file at `path`. Throws DataError("cannot read 'PATH': <reason>") when it
// cannot be read, and as ParseRigProfile otherwise.
RigProfile ReadRigProfile(const std::string& path);

// The profile as TOML text in the layout above, with comments naming each key's unit and rule;
// ParseRigProfile(RigProfileToml(p)) gives p back (numbers are written with 17 significant
// digits when shorter forms would not read back exactly). Unset optional keys are written as
// comments.
std::string RigProfileToml(const RigProfile& profile);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_PROFILE_H_
