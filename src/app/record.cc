// `loopwright record [--port P] -o REC.csv [--duration S] [rig options]`
//
// Passive recording: hello, go, and every valid sample written to REC.csv as it arrives
// (io/recording_sink.h: flushed at least every 100 ms, gaps and corrupted lines noted as `#`
// comments), until --duration seconds of rig time have passed or Ctrl-C / SIGTERM (a normal end
// here: exit 0). It never moves the actuator, but an output beyond a --trip limit still sends the
// safe stop at once (exit 5). A lost link leaves the recording intact to the last valid line
// (exit 4).
#include <cmath>
#include <memory>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "app/command.h"
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

class RecordCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    rig_.Add(sub, /*drives=*/false);
    sub.add_option("-o,--out", out_path_, "The recording to write (CSV; must not exist)")
        ->required();
    sub.add_option("--duration", duration_,
                   "Seconds of rig time to record (default: until Ctrl-C or SIGTERM)");
  }

  int Run(Context& ctx) override {
    if (duration_ && !(std::isfinite(*duration_) && *duration_ > 0.0)) {
      throw UsageError("--duration " + FormatNumber(*duration_) + ": it must be a number > 0 (s)");
    }
    ResolvedRig rig = rig_.Resolve(ctx);
    StopSignalGuard guard;
    auto session = ConnectRig(ctx, rig, guard, /*drives=*/false);
    const RigCaps caps = session->caps();
    RecordingSinkOptions so;
    so.provenance = std::string("loopwright ") + LOOPWRIGHT_VERSION + " record from " + caps.name +
                    " on " + session->port() + ": " + ctx.command_line;
    std::unique_ptr<RecordingSink> sink;
    if (!session->dry_run()) {
      sink = std::make_unique<RecordingSink>(out_path_, so);
      session->AttachRecording(sink.get());
    }
    session->SetStreaming(true);
    RigProgress progress(ctx, *session);
    bool stopped = false;
    try {
      if (duration_) {
        double left = *duration_;
        session->WaitRigSeconds(*duration_, [&] {
          RigSessionStats st = session->stats();
          progress.Show("record", left - (st.last_t_s - st.first_t_s));
        });
      } else {
        session->WaitUntil([] { return false; }, [&] { progress.Show("record"); });
      }
    } catch (const SafetyStop&) {
      if (guard.flag().load() == 0) throw;
      stopped = true;
    }
    progress.End();
    if (session->dry_run()) {
      session->SetStreaming(false);
      return 0;
    }
    if (!stopped) session->SetStreaming(false);  // every sample before its ok is recorded
    session->AttachRecording(nullptr);
    sink->Close();
    if (stopped) ctx.err << "stopped by signal " << guard.flag().load() << "\n";
    nlohmann::json summary = RecordingSummary(ctx, *session, out_path_, sink->samples());
    LogRigResult(ctx, "record", stopped ? "stopped" : "ok", summary, {out_path_});
    return 0;
  }

 private:
  RigOptions rig_;
  std::string out_path_;
  std::optional<double> duration_;
};

}  // namespace

std::unique_ptr<Command> MakeRecordCommand() { return std::make_unique<RecordCommand>(); }

}  // namespace lw::app
