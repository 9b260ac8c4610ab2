// `loopwright apply [--port P] --gain K [--controller C] [--reference R] [--duration S]
//                   [-o REC.csv] [--yes] [--dry-run] [rig options]`
//
// Closes the rig's loop with controller C at gain K (after the maximum-gain check) around the
// reference R (default: the output's present value, so the loop starts where the rig is), and
// holds it, with live progress on a terminal, for --duration seconds of rig time or until
// Ctrl-C / SIGTERM; then it sends the safe stop (a rig whose host is gone would go safe by its
// watchdog anyway). With -o every sample of the hold is recorded. An output trip: safe stop at
// once, exit 5.
#include <cmath>
#include <memory>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/controller_option.h"
#include "app/output.h"
#include "app/rig_connect.h"
#include "app/rig_options.h"
#include "app/rig_phases.h"
#include "app/rig_progress.h"
#include "app/stop_signal.h"
#include "io/recording_sink.h"
#include "lti/error.h"

namespace lw::app {
namespace {

class ApplyCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    rig_.Add(sub, /*drives=*/true);
    controller_.Add(sub, /*gain_required=*/true);
    sub.add_option("--reference", reference_,
                   "Reference to hold (default: the output's present value)");
    sub.add_option("--duration", duration_,
                   "Rig seconds to hold the loop (default: until Ctrl-C or SIGTERM)");
    sub.add_option("-o,--out", out_path_, "Also record the hold (CSV; must not exist)");
  }

  int Run(Context& ctx) override {
    const Controller controller = controller_.Parse();
    const double gain = controller_.gain();
    if (duration_ && !(std::isfinite(*duration_) && *duration_ > 0.0)) {
      throw UsageError("--duration " + FormatNumber(*duration_) + ": it must be a number > 0 (s)");
    }
    ResolvedRig rig = rig_.Resolve(ctx);
    rig.limits.RequireGain(gain);
    StopSignalGuard guard;
    auto session = ConnectRig(ctx, rig, guard, /*drives=*/true);
    const RigCaps caps = session->caps();
    ConfirmDriving(ctx, rig,
                   "apply closes the loop of '" + caps.name + "' on " + session->port() + " with " +
                       controller.ToString() + " at K = " + FormatNumber(gain, 6));
    std::unique_ptr<RecordingSink> sink;
    if (!out_path_.empty() && !session->dry_run()) {
      RecordingSinkOptions so;
      so.provenance = std::string("loopwright ") + LOOPWRIGHT_VERSION + " apply on " + caps.name +
                      " (" + session->port() + "): " + ctx.command_line;
      sink = std::make_unique<RecordingSink>(out_path_, so);
      session->AttachRecording(sink.get());
    }
    session->SetStreaming(true);
    double reference = reference_ ? *reference_ : 0.0;
    if (!reference_ && !session->dry_run()) {
      session->WaitUntil([&] { return !session->samples().empty(); });
      reference = session->samples().back().output;
    }
    session->CloseLoop(controller.ToString(), gain, reference);
    if (session->dry_run()) {
      session->SafeStop("apply ended");
      return 0;
    }
    ctx.out << "applied " << controller.ToString() << " at K = " << FormatNumber(gain, 6)
            << ", reference " << FormatNumber(reference, 6) << " on " << caps.name << "\n"
            << std::flush;
    RigProgress progress(ctx, *session);
    bool stopped = false;
    try {
      if (duration_) {
        session->WaitRigSeconds(*duration_, [&] { progress.Show("holding"); });
      } else {
        session->WaitUntil([] { return false; }, [&] { progress.Show("holding"); });
      }
    } catch (const SafetyStop&) {
      if (guard.flag().load() == 0) throw;
      stopped = true;  // Ctrl-C / SIGTERM is how an open-ended hold ends; safe was sent
    }
    progress.End();
    if (!stopped) session->SafeStop("apply ended");
    if (sink) {
      session->AttachRecording(nullptr);
      sink->Close();
    }
    ctx.out << "safe stop sent" << (stopped ? " (stopped by signal)" : "") << "\n";
    nlohmann::json summary = {{"controller", controller.ToString()},
                              {"gain", gain},
                              {"reference", reference},
                              {"rig", caps.name}};
    if (sink) summary["recording"] = out_path_;
    LogRigResult(ctx, "apply", stopped ? "stopped" : "ok", summary,
                 sink ? std::vector<std::string>{out_path_} : std::vector<std::string>{});
    return 0;
  }

 private:
  RigOptions rig_;
  ControllerOption controller_;
  std::optional<double> reference_, duration_;
  std::string out_path_;
};

}  // namespace

std::unique_ptr<Command> MakeApplyCommand() { return std::make_unique<ApplyCommand>(); }

}  // namespace lw::app
