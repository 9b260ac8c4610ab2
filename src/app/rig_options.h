// The options every hardware command shares (record, step-test, apply, verify, tune), what they
// resolve to with the rig workspace's profile (app/workspace.h, io/rig_profile.h), and the
// safety rituals around driving a rig: the cautions, the confirmation, --dry-run.
//
//   --port P          serial device (/dev/ttyUSB0) or tcp:HOST:PORT; default: the profile's link
//   --baud N          serial bits per second (default: the profile's, else 115200)
//   --flow none|hardware
//   --actuator LO:HI  actuator limits (tightest of these, the profile's and the rig's own apply)
//   --trip LO:HI      output trip limits: a sample outside stops the rig at once (exit 5)
//   --max-gain K      largest controller gain the command may send
//   --max-step DU     largest single open-loop actuator change
//   --max-slew R      largest actuator change per second since the last change
//   --heartbeat MS    heartbeat interval (default: a quarter of the rig's watchdog time)
// and, for commands that move the actuator:
//   --yes             confirm without a question (needed when stdin or stderr is no terminal)
//   --dry-run         open nothing; print every line the command would send
//
// This header includes neither io/rig_link.h nor io/rig_profile.h; rig_options.cc is the only
// app file that reads the profile.
#ifndef LOOPWRIGHT_APP_RIG_OPTIONS_H_
#define LOOPWRIGHT_APP_RIG_OPTIONS_H_

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "app/command.h"
#include "io/rig_limits.h"

namespace lw::app {

// Spec defaults from the profile's [specs] table (unset: not given there).
struct RigSpecs {
  std::optional<double> rise_max, overshoot_max, zeta_min, settle_max;
  double settle_band_percent = 2.0;
};

struct ResolvedRig {
  std::string port;  // --port text (or the profile's link as such a text)
  unsigned baud = 115200;
  std::string flow = "none";
  RigLimits limits;                      // options merged with the profile
  std::optional<std::string> workspace;  // the workspace folder, if any
  std::string rig_name;                  // the profile's name, else empty
  RigSpecs specs;
  int heartbeat_ms = 0;
  bool yes = false;
  bool dry_run = false;
};

class RigOptions {
 public:
  // drives: the command moves the actuator (adds --yes and --dry-run).
  void Add(CLI::App& sub, bool drives);
  // Reads the workspace profile (if any) and merges; UsageError for bad option values and when
  // no port is known.
  ResolvedRig Resolve(const Context& ctx) const;

 private:
  bool drives_ = false;
  std::string port_, flow_, actuator_, trip_;
  std::optional<unsigned> baud_;
  std::optional<double> max_gain_, max_step_, max_slew_;
  int heartbeat_ms_ = 0;
  bool yes_ = false, dry_run_ = false;
};

// The safety cautions (README.md, "Safety"), printed on ctx.err before a command first drives a
// rig; true when printed. Inside a workspace "first" is remembered there (a file
// `cautions-shown`, written by RememberCautions once the rig has answered, so a dry run or a
// port that would not open does not use them up); outside one they are printed every time.
bool PrintCautions(Context& ctx, const ResolvedRig& rig);
// Records in the workspace that the cautions were shown before a command drove the rig (not for
// a dry run, nor outside a workspace).
void RememberCautions(Context& ctx, const ResolvedRig& rig);

// Before the first line that moves the actuator: with --dry-run nothing is asked; on a terminal
// (stdin and stderr) the question "<what>: proceed? [y/N]" must be answered y or yes (else
// JobFailed, nothing sent); otherwise --yes is required (else UsageError saying so).
void ConfirmDriving(Context& ctx, const ResolvedRig& rig, const std::string& what);

// LogResult of app/workspace.h, for files that cannot include it next to io/rig_link.h.
void LogRigResult(const Context& ctx, std::string_view kind, std::string_view outcome,
                  const nlohmann::json& summary, const std::vector<std::string>& recordings);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_RIG_OPTIONS_H_
