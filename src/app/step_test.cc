// `loopwright step-test [--port P] --from U0 --to U1 [--settle auto|S] [--max-wait S]
//                       -o REC.csv [--yes] [--dry-run] [rig options]`
//
// The open-loop step test (app/rig_phases.h): hold the actuator at U0 until the output is at
// rest, record a baseline, step to U1, record until at rest, return to U0. Both values are
// checked against the limits (range, maximum step, maximum slew) before anything is sent. The
// actuator stays at U0 afterwards; the rig's watchdog takes it to its safe value once loopwright
// has gone. Ctrl-C / SIGTERM: safe stop, then the recording is closed (exit 5).
#include <cmath>
#include <memory>
#include <string>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/output.h"
#include "app/rig_connect.h"
#include "app/rig_options.h"
#include "app/rig_phases.h"
#include "app/stop_signal.h"
#include "lti/error.h"

namespace lw::app {
namespace {

class StepTestCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    rig_.Add(sub, /*drives=*/true);
    sub.add_option("--from", from_, "Actuator value held before the step (U0)")->required();
    sub.add_option("--to", to_, "Actuator value stepped to (U1)")->required();
    sub.add_option("--settle", settle_,
                   "auto (wait until the output is at rest) or seconds per phase")
        ->capture_default_str();
    sub.add_option("--max-wait", max_wait_, "Longest wait for rest per phase, rig seconds")
        ->capture_default_str();
    sub.add_option("-o,--out", out_path_, "The recording to write (CSV; must not exist)")
        ->required();
  }

  int Run(Context& ctx) override {
    PhaseTiming timing;
    timing.settle_s = ParseSettle(settle_);
    if (!(std::isfinite(max_wait_) && max_wait_ > 0.0)) {
      throw UsageError("--max-wait " + FormatNumber(max_wait_) + ": it must be a number > 0 (s)");
    }
    timing.max_wait_s = max_wait_;
    if (from_ == to_) throw UsageError("--from and --to are equal: there is no step");
    ResolvedRig rig = rig_.Resolve(ctx);
    // Refuse before connecting what the host's own limits already forbid.
    rig.limits.RequireActuatorMove(from_, to_, RigLimits::kInf);
    StopSignalGuard guard;
    auto session = ConnectRig(ctx, rig, guard, /*drives=*/true);
    const RigCaps caps = session->caps();
    session->limits().RequireActuatorMove(from_, to_, RigLimits::kInf);
    ConfirmDriving(ctx, rig,
                   "step-test moves the actuator of '" + caps.name + "' on " + session->port() +
                       " from " + FormatNumber(from_, 6) + " to " + FormatNumber(to_, 6));
    std::string provenance = std::string("loopwright ") + LOOPWRIGHT_VERSION + " step-test on " +
                             caps.name + " (" + session->port() + "): " + ctx.command_line;
    StepOutcome o = RunOpenLoopStep(ctx, *session, from_, to_, timing, out_path_, provenance);
    session->Release();
    if (session->dry_run()) return 0;
    nlohmann::json summary = RecordingSummary(ctx, *session, o.path, o.samples);
    ctx.out << "  step at t = " << FormatNumber(o.step_time_s, 6) << " s: output "
            << FormatNumber(o.level_before, 6) << " -> " << FormatNumber(o.level_after, 6)
            << " after " << FormatNumber(o.duration_s, 4) << " s; actuator back at "
            << FormatNumber(from_, 6) << "\n";
    summary["from"] = from_;
    summary["to"] = to_;
    summary["step_time"] = o.step_time_s;
    LogRigResult(ctx, "step", "ok", summary, {o.path});
    return 0;
  }

 private:
  RigOptions rig_;
  double from_ = 0.0, to_ = 0.0;
  std::string settle_ = "auto";
  double max_wait_ = 3600.0;
  std::string out_path_;
};

}  // namespace

std::unique_ptr<Command> MakeStepTestCommand() { return std::make_unique<StepTestCommand>(); }

}  // namespace lw::app
