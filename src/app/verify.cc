// `loopwright verify [--port P] MODEL.json --gain K [--controller C]
//                    --ref-step A:B -o CL.csv [--settle auto|S] [--max-wait S] [--json]
//                    [--save CHECK.json] [--yes] [--dry-run] [rig options]`
//
// A closed-loop step on the rig (app/rig_phases.h: loop C K A, hold until at rest, baseline,
// reference A -> B, record until at rest), then the safe stop, then `loopwright check` on the
// recording (design/closed_loop_check.h): its report and verdict, confirmed / stale / saturated,
// and its exit status (0 only for confirmed). The check is told the actuator range in force.
#include <cmath>
#include <memory>
#include <string>
#include <vector>

#include "app/command.h"
#include "app/controller_option.h"
#include "app/model_source.h"
#include "app/output.h"
#include "app/rig_connect.h"
#include "app/rig_options.h"
#include "app/rig_phases.h"
#include "app/run_command.h"
#include "app/stop_signal.h"
#include "design/loop_polynomials.h"
#include "design/prediction.h"
#include "io/model_file.h"
#include "lti/error.h"
#include "lti/number_text.h"

namespace lw::app {

// "A:B" with two finite numbers, A != B; UsageError naming --ref-step otherwise.
std::pair<double, double> ParseRefStep(const std::string& text) {
  const auto pair = ParseNumberPair(text);
  if (!pair || pair->first == pair->second) {
    throw UsageError("--ref-step '" + text +
                     "': expected A:B, the reference before and after the step (A != B)");
  }
  return *pair;
}

// The actuator range as --actuator text for check, or "" when unbounded.
std::string ActuatorRangeText(const RigLimits& l) {
  if (!std::isfinite(l.actuator_lo) || !std::isfinite(l.actuator_hi)) return {};
  return ShortestText(l.actuator_lo) + ":" + ShortestText(l.actuator_hi);
}

namespace {

class VerifyCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    rig_.Add(sub, /*drives=*/true);
    sub.add_option("MODEL.json", model_path_, "Model file written by `loopwright fit`")->required();
    controller_.Add(sub, /*gain_required=*/true);
    sub.add_option("--ref-step", ref_step_, "Reference step A:B (before, after)")->required();
    sub.add_option("--settle", settle_, "auto or seconds per phase")->capture_default_str();
    sub.add_option("--max-wait", max_wait_, "Longest wait for rest per phase, rig seconds")
        ->capture_default_str();
    sub.add_option("-o,--out", out_path_, "The closed-loop recording (CSV; must not exist)")
        ->required();
    sub.add_flag("--json", json_, "Print the check as one JSON document");
    sub.add_option("--save", save_path_, "Also write the check's JSON document here");
  }

  int Run(Context& ctx) override {
    const LoadedModel model = LoadModelFile(model_path_);  // fails before anything moves
    const Controller controller = controller_.Parse();
    const double gain = controller_.gain();
    auto [a, b] = ParseRefStep(ref_step_);
    // A reverse-acting model: closing the loop at K > 0 would run away; refuse before anything
    // moves.
    const LoopPolynomials loop = LoopPolynomials::ForGain(model.tf, controller, 3);
    if (std::string why = PositiveFeedbackNote(loop, model.tf); !why.empty()) throw JobFailed(why);
    PhaseTiming timing;
    timing.settle_s = ParseSettle(settle_);
    timing.max_wait_s = max_wait_;
    // "At rest" alone can end the record too early on a slow loop (the output creeps towards
    // its final value slower than the rest test's noise); an unstable or never-settling
    // prediction adds nothing here (check judges it).
    timing.CoverSettling(PredictedSettling(model, controller, gain, a, b));
    ResolvedRig rig = rig_.Resolve(ctx);
    rig.limits.RequireGain(gain);
    StopSignalGuard guard;
    auto session = ConnectRig(ctx, rig, guard, /*drives=*/true);
    const RigCaps caps = session->caps();
    ConfirmDriving(ctx, rig,
                   "verify closes the loop of '" + caps.name + "' on " + session->port() +
                       " with " + controller.ToString() + " at K = " + FormatNumber(gain, 6) +
                       " and steps the reference " + FormatNumber(a, 6) + " -> " +
                       FormatNumber(b, 6));
    std::string provenance = std::string("loopwright ") + LOOPWRIGHT_VERSION + " verify on " +
                             caps.name + " (" + session->port() + "): " + ctx.command_line;
    StepOutcome o = RunClosedLoopStep(ctx, *session, controller.ToString(), gain, a, b, timing,
                                      out_path_, provenance);
    session->SafeStop("verify step recorded");
    if (session->dry_run()) return 0;
    if (!json_) RecordingSummary(ctx, *session, o.path, o.samples);
    std::string actuator = ActuatorRangeText(session->limits());
    session.reset();  // the link is closed before the check's maths runs
    std::vector<std::string> args = {model_path_,           "--gain",
                                     ShortestText(gain),    "--controller",
                                     controller.ToString(), out_path_};
    if (!actuator.empty()) args.insert(args.end(), {"--actuator", actuator});
    if (json_) args.push_back("--json");
    if (!save_path_.empty()) args.insert(args.end(), {"--save", save_path_});
    return RunCommand(ctx, "check", args);
  }

 private:
  static double PredictedSettling(const LoadedModel& model, const Controller& controller,
                                  double gain, double a, double b) {
    PredictionOptions options;
    options.reference_from = a;
    options.reference_to = b;
    const Prediction p = Predict(model.tf, controller, gain, options);
    const double settle = p.metrics.settling_time;
    return p.stable && std::isfinite(settle) && settle > 0.0 ? settle : 0.0;
  }

  RigOptions rig_;
  std::string model_path_;
  ControllerOption controller_;
  std::string ref_step_;
  std::string settle_ = "auto";
  double max_wait_ = 3600.0;
  std::string out_path_, save_path_;
  bool json_ = false;
};

}  // namespace

std::unique_ptr<Command> MakeVerifyCommand() { return std::make_unique<VerifyCommand>(); }

}  // namespace lw::app
