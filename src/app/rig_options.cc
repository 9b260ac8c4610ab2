#include "app/rig_options.h"

#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>

#include "app/output.h"
#include "app/workspace.h"
#include "io/rig_profile.h"
#include "lti/error.h"

namespace lw::app {
namespace {

constexpr const char* kCautionsMarker = "cautions-shown";

const char* const kCautions[] = {
    "keep the emergency stop within reach and check that it works before you start;",
    "verify the actuator and process limits (and the rig's own trips) before the first run;",
    "start at a low gain, well inside the predicted band, and raise it in small steps;",
    "a qualified person for that machine decides whether a test runs and whether a gain is "
    "kept;",
    "local codes and the site's procedures come first; this tool does not replace them.",
};

void RequirePositive(const std::optional<double>& v, const char* option) {
  if (v && !(std::isfinite(*v) && *v > 0.0)) {
    throw UsageError(std::string(option) + " " + FormatNumber(*v, 6) + ": it must be a number > 0");
  }
}

}  // namespace

void RigOptions::Add(CLI::App& sub, bool drives) {
  drives_ = drives;
  sub.add_option("--port", port_,
                 "Rig link: a serial device (/dev/ttyUSB0) or tcp:HOST:PORT (default: the rig "
                 "profile's link)");
  sub.add_option("--baud", baud_, "Serial bits per second (default: the profile's, else 115200)");
  sub.add_option("--flow", flow_, "Serial flow control: none or hardware (default none)");
  sub.add_option("--actuator", actuator_,
                 "Actuator limits LO:HI (the tightest of these, the profile's and the rig's)");
  sub.add_option("--trip", trip_, "Output trip limits LO:HI: outside them the rig is stopped");
  sub.add_option("--max-gain", max_gain_, "Largest controller gain that may be sent");
  sub.add_option("--max-step", max_step_, "Largest single open-loop actuator change");
  sub.add_option("--max-slew", max_slew_,
                 "Largest actuator change per second since the last change");
  sub.add_option("--heartbeat", heartbeat_ms_,
                 "Heartbeat interval in ms (default: a quarter of the rig's watchdog time)");
  if (drives) {
    sub.add_flag("--yes", yes_, "Confirm driving the actuator without a question");
    sub.add_flag("--dry-run", dry_run_, "Open nothing; print every line that would be sent");
  }
}

ResolvedRig RigOptions::Resolve(const Context& ctx) const {
  ResolvedRig r;
  r.yes = yes_;
  r.dry_run = dry_run_;
  if (heartbeat_ms_ < 0) {
    throw UsageError("--heartbeat " + std::to_string(heartbeat_ms_) + ": it must be >= 0 ms");
  }
  r.heartbeat_ms = heartbeat_ms_;
  r.workspace = FindWorkspace(ctx);
  std::optional<RigProfile> profile = LoadRigProfile(ctx);
  if (profile) {
    r.rig_name = profile->name;
    r.limits = LimitsFromProfile(*profile);
    if (profile->link.kind == LinkKind::kSerial) {
      r.port = profile->link.device;
      r.baud = static_cast<unsigned>(profile->link.baud);
    } else if (profile->link.kind == LinkKind::kTcp) {
      r.port = "tcp:" + profile->link.address;
    }
    r.specs.rise_max = profile->specs.rise_max_s;
    r.specs.overshoot_max = profile->specs.overshoot_max_percent;
    r.specs.zeta_min = profile->specs.zeta_min;
    r.specs.settle_max = profile->specs.settle_max_s;
    r.specs.settle_band_percent = profile->specs.settle_band_percent;
  }
  if (!port_.empty()) r.port = port_;
  if (baud_) r.baud = *baud_;
  if (!flow_.empty()) {
    if (flow_ != "none" && flow_ != "hardware") {
      throw UsageError("--flow '" + flow_ + "': expected none or hardware");
    }
    r.flow = flow_;
  }
  if (r.port.empty() && !r.dry_run) {
    throw UsageError(
        "no rig port: pass --port DEVICE or --port tcp:HOST:PORT, or run inside a rig workspace "
        "whose profile names the link");
  }
  RequirePositive(max_gain_, "--max-gain");
  RequirePositive(max_step_, "--max-step");
  RequirePositive(max_slew_, "--max-slew");
  RigLimits o;
  if (!actuator_.empty())
    std::tie(o.actuator_lo, o.actuator_hi) = ParseRange(actuator_, "--actuator");
  if (!trip_.empty()) std::tie(o.output_lo, o.output_hi) = ParseRange(trip_, "--trip");
  if (max_gain_) o.max_gain = *max_gain_;
  if (max_step_) o.max_step = *max_step_;
  if (max_slew_) o.max_slew = *max_slew_;
  RigLimits merged = r.limits.Merge(o);
  if (!(merged.actuator_lo < merged.actuator_hi)) {
    throw UsageError("--actuator '" + actuator_ +
                     "' does not overlap the profile's actuator range");
  }
  if (!(merged.output_lo < merged.output_hi)) {
    throw UsageError("--trip '" + trip_ + "' does not overlap the profile's trip limits");
  }
  merged.Validate();
  r.limits = merged;
  return r;
}

bool PrintCautions(Context& ctx, const ResolvedRig& rig) {
  if (rig.workspace) {
    std::error_code ec;
    if (std::filesystem::exists(std::filesystem::path(*rig.workspace) / kCautionsMarker, ec)) {
      return false;
    }
  }
  ctx.err << "caution: this command moves a real actuator. Before it does:\n";
  for (const char* line : kCautions) ctx.err << "  - " << line << "\n";
  if (rig.workspace) {
    ctx.err << (rig.dry_run ? "  (shown again on the first run that drives this rig)\n"
                            : "  (shown until a command has driven this rig)\n");
  }
  ctx.err.flush();
  return true;
}

void RememberCautions(Context& ctx, const ResolvedRig& rig) {
  if (!rig.workspace || rig.dry_run) return;
  std::ofstream mark(std::filesystem::path(*rig.workspace) / kCautionsMarker);
  mark << "the cautions were shown for " << ctx.command_line << "\n";
}

void ConfirmDriving(Context& ctx, const ResolvedRig& rig, const std::string& what) {
  if (rig.dry_run || rig.yes) return;
  bool terminal = isatty(STDIN_FILENO) == 1 && isatty(STDERR_FILENO) == 1;
  if (!terminal) {
    throw UsageError(what +
                     ": pass --yes to confirm when not on a terminal, or --dry-run to see the "
                     "lines it would send");
  }
  ctx.err << what << ": proceed? [y/N] " << std::flush;
  std::string answer;
  std::getline(std::cin, answer);
  if (answer != "y" && answer != "Y" && answer != "yes") {
    throw JobFailed("not confirmed; nothing was sent to the rig");
  }
}

void LogRigResult(const Context& ctx, std::string_view kind, std::string_view outcome,
                  const nlohmann::json& summary, const std::vector<std::string>& recordings) {
  LogResult(ctx, kind, outcome, summary, recordings);
}

}  // namespace lw::app
