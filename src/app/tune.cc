// `loopwright tune [--port P] [--controller C] [--from U0 --to U1] [--ref-step A:B] [--gain K]
//                  [--structure auto|NAME]
//                  [--rise-max S] [--overshoot-max PCT] [--zeta-min Z] [--settle-max S]
//                  [--settle auto|S] [--max-wait S] [--dir OUT] [--yes] [--dry-run]
//                  [rig options]`            (the workspace: the global --rig DIR)
//
// The whole job on one rig session, every file in OUT and every result in the rig logbook:
//   1. step test U0 -> U1 (default: U0 40 % up the actuator range, U1 = U0 + 10 % of the actuator
//      range, downwards when upwards does not fit, no more than --max-step) -> step.csv
//   2. `fit step.csv` (with --structure, default auto: every structure, chosen by AICc, the fewest
//      parameters within 2 of the smallest) ->
//      model.json, fit.svg
//   3. `band model.json --sample-time T` (T the rig's sample period, at which it runs the
//      controller) with the specs (options, else the profile's [specs], else an overshoot
//      of at most 10 %, common practice) -> band.json; the proposed gain is its recommendation
//      (or --gain K), refused above the maximum gain
//   4. the proposal is shown and confirmed (on a terminal, else --yes)
//   5. `predict` at that gain -> prediction.json
//   6. apply and verify: loop C K A, rest, reference A -> B, rest -> closed_loop.csv (default A
//      the output's mean level at U0, B = A + half the output change of the step test, both to
//      6 significant digits; the hold before the step lasts at least the step test's length
//      and the predicted settling time, the recorded response the step test's length and twice
//      the predicted settling time);
//      safe stop
//   7. `check` -> check.json, the verdict;  8. `report` -> report.html
// The rig session (heartbeat, trips, signals) stays open from 1 to 6. Exit status: check's
// (0 confirmed, 1 stale or saturated), or the first failure's.
// --dry-run opens nothing and writes nothing: it prints every line of the step test (SEQ and
// CRC included), then steps 2 to 8 as they would run, the commands with K for the proposed gain
// and A:B for the verification step where only the step test can tell them; with --gain and
// --ref-step both given, step 6's lines are printed exactly too.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <functional>
#include <memory>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/controller_option.h"
#include "app/output.h"
#include "app/rig_connect.h"
#include "app/rig_options.h"
#include "app/rig_phases.h"
#include "app/run_command.h"
#include "app/stop_signal.h"
#include "identify/model_structure.h"
#include "io/atomic_file.h"
#include "lti/error.h"
#include "lti/number_text.h"

namespace lw::app {

std::pair<double, double> ParseRefStep(const std::string& text);  // verify.cc
std::string ActuatorRangeText(const RigLimits& l);                // verify.cc

namespace {

std::string Stamp() {
  std::time_t now = std::time(nullptr);
  std::tm tm{};
  gmtime_r(&now, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y%m%dT%H%M%SZ", &tm);
  return buf;
}

void Banner(Context& ctx, int step, const std::string& what) {
  ctx.out << "\n" << Bold(ctx, "tune " + std::to_string(step) + ": " + what) << "\n" << std::flush;
}

void PrintCommand(Context& ctx, const std::string& name, const std::vector<std::string>& args) {
  ctx.out << "$ loopwright " << CommandText(name, args) << "\n" << std::flush;
}

// Runs a command in-process with its output shown, after printing its command line.
int Show(Context& ctx, const std::string& name, const std::vector<std::string>& args) {
  PrintCommand(ctx, name, args);
  int status = RunCommand(ctx, name, args);
  ctx.out << std::flush;
  return status;
}

// The commands tune runs after the step test. The gain and the verification step are text:
// their numbers in a run, and in a dry run "K", "A" and "B" where only the step test can tell.
struct TunePlan {
  std::vector<std::string> fit, band, predict, check, report;
};

using FileNamer = std::function<std::string(const std::string&)>;

class TuneCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    rig_.Add(sub, /*drives=*/true);
    controller_.Add(sub, /*gain_required=*/false);
    sub.add_option("--from", from_,
                   "Step test: actuator before the step (default: 40 % up the range)");
    sub.add_option("--to", to_,
                   "Step test: actuator after the step (default: --from + 10 % of the range, "
                   "at most the largest step; downwards when that passes the top)");
    sub.add_option("--ref-step", ref_step_,
                   "Verification step A:B (default: from the step test's levels, to 6 significant "
                   "digits)");
    sub.add_option("--structure", structure_,
                   "Model structure fit uses: auto (each, chosen by AICc, the simpler of a "
                   "near-tie) or one of fit's names")
        ->capture_default_str();
    sub.add_option("--rise-max", rise_max_, "Spec: largest 10-90 % rise time, s");
    sub.add_option("--overshoot-max", overshoot_max_, "Spec: largest overshoot, percent");
    sub.add_option("--zeta-min", zeta_min_, "Spec: smallest damping ratio");
    sub.add_option("--settle-max", settle_max_, "Spec: largest settling time, s");
    sub.add_option("--settle", settle_, "auto or seconds per phase")->capture_default_str();
    sub.add_option("--max-wait", max_wait_, "Longest wait for rest per phase, rig seconds")
        ->capture_default_str();
    sub.add_option("--dir", dir_,
                   "Folder for every file of the job (default: tune-<UTC time> in the workspace "
                   "or the current folder)");
  }

  int Run(Context& ctx) override {
    const Controller controller = controller_.Parse();
    PhaseTiming timing;
    timing.settle_s = ParseSettle(settle_);
    timing.max_wait_s = max_wait_;
    std::optional<std::pair<double, double>> ref_step;
    if (!ref_step_.empty()) ref_step = ParseRefStep(ref_step_);
    CheckStructureChoice(structure_);  // a wrong name fails before anything moves
    ResolvedRig rig = rig_.Resolve(ctx);
    if (controller_.has_gain()) rig.limits.RequireGain(controller_.gain());
    std::string dir = dir_;
    if (dir.empty())
      dir = (std::filesystem::path(rig.workspace.value_or(".")) / ("tune-" + Stamp())).string();
    const FileNamer file = [dir](const std::string& name) {
      return (std::filesystem::path(dir) / name).string();
    };
    StopSignalGuard guard;
    auto session = ConnectRig(ctx, rig, guard, /*drives=*/true);
    const RigCaps caps = session->caps();
    const RigLimits& limits = session->limits();
    double u0 = from_ ? *from_ : DefaultStart(limits);
    double u1 = to_ ? *to_ : DefaultTarget(u0, limits);
    limits.RequireActuatorMove(u0, u1, RigLimits::kInf);
    ConfirmDriving(ctx, rig,
                   "tune drives '" + caps.name + "' on " + session->port() + ": a step test " +
                       FormatNumber(u0, 6) + " -> " + FormatNumber(u1, 6) +
                       ", then a closed-loop step at the gain it proposes");
    if (!session->dry_run()) {
      std::error_code ec;
      std::filesystem::create_directories(dir, ec);
      if (ec) throw UsageError("cannot create '" + dir + "': " + ec.message());
    }
    std::string tag = std::string("loopwright ") + LOOPWRIGHT_VERSION + " tune on " + caps.name +
                      " (" + session->port() + "): " + ctx.command_line;

    Banner(ctx, 1, "step test " + FormatNumber(u0, 6) + " -> " + FormatNumber(u1, 6));
    StepOutcome step = RunOpenLoopStep(ctx, *session, u0, u1, timing, file("step.csv"), tag);
    if (session->dry_run()) {
      return PrintRestOfPlan(ctx, *session, controller, rig.specs, ref_step, timing, file);
    }
    RecordingSummary(ctx, *session, step.path, step.samples);

    const std::string actuator = ActuatorRangeText(limits);
    TunePlan plan = MakePlan(file, controller, rig.specs, "", "", "", actuator, caps);
    Banner(ctx, 2, "fit a model to the step test");
    Show(ctx, "fit", plan.fit);

    Banner(ctx, 3, "the gain band for the specs");
    Show(ctx, "band", plan.band);
    double gain = controller_.has_gain() ? controller_.gain() : RecommendedGain(file("band.json"));
    std::string why = limits.CheckGain(gain);
    if (!why.empty()) throw JobFailed("the proposed " + why + "; nothing was applied");

    // The default reference step, from the measured levels, is rounded to the 6 significant
    // digits the proposal shows, so the step applied is the one shown, predicted and checked
    // (104.04, not 104.04000000000002); a --ref-step is taken as given.
    auto shown = [](double v) { return std::isfinite(v) ? std::stod(FormatNumber(v, 6)) : v; };
    double a = shown(step.level_before);
    double b = shown(step.level_before + 0.5 * (step.level_after - step.level_before));
    if (ref_step) std::tie(a, b) = *ref_step;
    plan = MakePlan(file, controller, rig.specs, ShortestText(gain), ShortestText(a),
                    ShortestText(b), actuator, caps);
    Banner(ctx, 4, "proposal");
    ctx.out << "  apply " << controller.ToString() << " at K = " << FormatNumber(gain, 6)
            << " and step the reference " << FormatNumber(a, 6) << " -> " << FormatNumber(b, 6)
            << "\n";
    ConfirmDriving(ctx, rig, "apply K = " + FormatNumber(gain, 6) + " on '" + caps.name + "'");

    Banner(ctx, 5, "predict the closed loop at K = " + FormatNumber(gain, 6));
    Show(ctx, "predict", plan.predict);
    SavePrediction(ctx, plan.predict, file("prediction.json"));

    Banner(
        ctx, 6,
        "apply and verify: closed-loop step " + FormatNumber(a, 6) + " -> " + FormatNumber(b, 6));
    // The loop starts on a plant still coming back to U0: nothing shorter than the step test.
    timing.CoverSettling(PredictedSettlingTime(file("prediction.json")), step.duration_s);
    StepOutcome verify = RunClosedLoopStep(ctx, *session, controller.ToString(), gain, a, b, timing,
                                           file("closed_loop.csv"), tag);
    session->SafeStop("tune: closed-loop step recorded");
    RecordingSummary(ctx, *session, verify.path, verify.samples);
    session.reset();

    Banner(ctx, 7, "check the model against the closed-loop step");
    int verdict = Show(ctx, "check", plan.check);

    Banner(ctx, 8, "report");
    Show(ctx, "report", plan.report);
    ctx.out << "\ntune done: files in " << dir << "\n";
    nlohmann::json summary = {{"dir", dir},
                              {"gain", gain},
                              {"controller", controller.ToString()},
                              {"step_test", step.path},
                              {"closed_loop", verify.path},
                              {"confirmed", verdict == 0}};
    LogRigResult(ctx, "tune", verdict == 0 ? "ok" : "failed", summary, {step.path, verify.path});
    return verdict;
  }

 private:
  // 40 % up the actuator range: room for the loop's actuator to move both ways in the
  // closed-loop step (a loop resting at a limit would saturate and the linear check not apply).
  static double DefaultStart(const RigLimits& l) {
    if (!std::isfinite(l.actuator_lo) || !std::isfinite(l.actuator_hi)) {
      throw UsageError("the actuator range is unbounded: give the step test's --from and --to");
    }
    return l.actuator_lo + 0.4 * (l.actuator_hi - l.actuator_lo);
  }

  static double DefaultTarget(double u0, const RigLimits& l) {
    if (!std::isfinite(l.actuator_lo) || !std::isfinite(l.actuator_hi)) {
      throw UsageError("the actuator range is unbounded: give the step test's --from and --to");
    }
    double d = 0.1 * (l.actuator_hi - l.actuator_lo);
    d = std::min(d, l.max_step);
    return u0 + d <= l.actuator_hi ? u0 + d : u0 - d;
  }

  // fit, band, predict, check and report as tune runs them; gain, a and b as text (predict and
  // check need them; fit and band do not).
  TunePlan MakePlan(const FileNamer& file, const Controller& controller, const RigSpecs& specs,
                    const std::string& gain, const std::string& a, const std::string& b,
                    const std::string& actuator, const RigCaps& caps) const {
    const std::string& rig_name = caps.name;
    TunePlan p;
    p.fit = {file("step.csv"), "-o", file("model.json"), "--plot", file("fit.svg")};
    if (structure_ != "auto") p.fit.insert(p.fit.end(), {"--structure", structure_});
    // The rig runs the controller at its sample period: the band is that sampled loop's.
    p.band = {file("model.json"),
              "--controller",
              controller.ToString(),
              "--sample-time",
              ShortestText(static_cast<double>(caps.period_us) / 1e6),
              "-o",
              file("band.json")};
    AddSpecs(p.band, specs);
    p.predict = {file("model.json"),
                 "--gain",
                 gain,
                 "--controller",
                 controller.ToString(),
                 "--reference",
                 "step:" + a + ":" + b + ":0"};
    // predict judges the overshoot limit band designed for (its only limit option).
    const auto os = std::find(p.band.begin(), p.band.end(), "--overshoot-max");
    if (os != p.band.end()) p.predict.insert(p.predict.end(), {*os, *(os + 1)});
    p.check = {file("model.json"),
               "--gain",
               gain,
               "--controller",
               controller.ToString(),
               file("closed_loop.csv"),
               "--save",
               file("check.json")};
    if (!actuator.empty()) {
      p.predict.insert(p.predict.end(), {"--actuator", actuator});
      p.check.insert(p.check.end(), {"--actuator", actuator});
    }
    p.report = {file("model.json"), file("band.json"), file("prediction.json"), file("check.json"),
                file("fit.svg"),    "--title",         "Tuning of " + rig_name, "-o",
                file("report.html")};
    return p;
  }

  // A dry run after the step test's lines: what tune would do next, step by step, with K, A
  // and B standing for what only the step test can tell (numbers where --gain and --ref-step
  // give them). With both given, the closed-loop step's lines are printed exactly (SEQ, CRC).
  int PrintRestOfPlan(Context& ctx, RigSession& session, const Controller& controller,
                      const RigSpecs& specs, const std::optional<std::pair<double, double>>& ref,
                      const PhaseTiming& timing, const FileNamer& file) const {
    const bool gain_known = controller_.has_gain();
    const std::string k = gain_known ? ShortestText(controller_.gain()) : "K";
    const std::string a = ref ? ShortestText(ref->first) : "A";
    const std::string b = ref ? ShortestText(ref->second) : "B";
    const std::string c = controller.ToString();
    ctx.out << "\ndry run: the step test's lines end here; then tune would do what follows";
    if (!gain_known) ctx.out << "; K is the gain the band recommends";
    if (!ref) {
      ctx.out << "; A is the output's mean level before the step test's step and "
                 "B = A + half the step test's output change";
    }
    ctx.out << "\n";
    TunePlan plan = MakePlan(file, controller, specs, k, a, b, ActuatorRangeText(session.limits()),
                             session.caps());
    Banner(ctx, 2, "fit a model to the step test");
    PrintCommand(ctx, "fit", plan.fit);
    Banner(ctx, 3, "the gain band for the specs");
    PrintCommand(ctx, "band", plan.band);
    const std::string at_k = gain_known ? "K = " + k : "K";
    Banner(ctx, 4, "proposal");
    ctx.out << "  apply " << c << " at " << at_k << " and step the reference " << a << " -> " << b;
    const double max_gain = session.limits().max_gain;
    if (std::isfinite(max_gain)) {
      ctx.out << " (a gain above the maximum " << FormatNumber(max_gain, 6) << " is refused)";
    }
    ctx.out << "; asked on a terminal, else --yes\n";
    Banner(ctx, 5, "predict the closed loop at " + at_k);
    PrintCommand(ctx, "predict", plan.predict);
    ctx.out << "  (and its JSON document to " << file("prediction.json") << ")\n";
    Banner(ctx, 6, "apply and verify: closed-loop step " + a + " -> " + b);
    if (gain_known && ref) {
      RunClosedLoopStep(ctx, session, c, controller_.gain(), ref->first, ref->second, timing,
                        file("closed_loop.csv"), "");
      session.SafeStop("tune: closed-loop step recorded");
    } else {
      ctx.out << "  lines (their numbers known once the fit is done): go; loop " << c << " " << k
              << " " << a << "; at rest, ref " << b << "; at rest, halt; safe\n";
    }
    ctx.out << "  the step from its baseline recorded to " << file("closed_loop.csv")
            << " after a hold of at least the step test's length and the predicted settling "
               "time; the response for at least the step test's length and twice the predicted "
               "settling time\n";
    Banner(ctx, 7, "check the model against the closed-loop step");
    PrintCommand(ctx, "check", plan.check);
    Banner(ctx, 8, "report");
    PrintCommand(ctx, "report", plan.report);
    ctx.out << "\ndry run: nothing was opened or sent; no file was written\n";
    return 0;
  }

  void AddSpecs(std::vector<std::string>& args, const RigSpecs& profile) const {
    auto add = [&](const char* option, const std::optional<double>& mine,
                   const std::optional<double>& theirs) {
      const std::optional<double>& v = mine ? mine : theirs;
      if (v) args.insert(args.end(), {option, ShortestText(*v)});
      return v.has_value();
    };
    bool any = add("--rise-max", rise_max_, profile.rise_max);
    any = add("--overshoot-max", overshoot_max_, profile.overshoot_max) || any;
    any = add("--zeta-min", zeta_min_, profile.zeta_min) || any;
    any = add("--settle-max", settle_max_, profile.settle_max) || any;
    if (!any) args.insert(args.end(), {"--overshoot-max", "10"});
  }

  // The settling time `predict` wrote, in seconds; 0 when it names none (never settles within
  // its horizon).
  static double PredictedSettlingTime(const std::string& prediction_path) {
    std::ifstream in(prediction_path);
    nlohmann::json doc = nlohmann::json::parse(in, nullptr, /*allow_exceptions=*/false);
    if (doc.is_discarded() || !doc.contains("metrics") || !doc["metrics"].is_object() ||
        !doc["metrics"].contains("settling_time") || !doc["metrics"]["settling_time"].is_number()) {
      return 0.0;
    }
    const double settle = doc["metrics"]["settling_time"].get<double>();
    return std::isfinite(settle) && settle > 0.0 ? settle : 0.0;
  }

  static double RecommendedGain(const std::string& band_path) {
    std::ifstream in(band_path);
    nlohmann::json doc = nlohmann::json::parse(in, nullptr, /*allow_exceptions=*/false);
    if (doc.is_discarded() || !doc.contains("recommended_gain") ||
        !doc["recommended_gain"].is_number()) {
      // An empty response band or a band of [0, inf) recommends nothing, and the rule says why
      // (design/recommendation.h).
      std::string why;
      if (!doc.is_discarded() && doc.contains("recommendation") &&
          doc["recommendation"].value("rule", nlohmann::json()).is_string()) {
        why = " (" + doc["recommendation"]["rule"].get<std::string>() +
              "; give --gain or change the specs)";
      }
      throw JobFailed(band_path + " names no recommended gain" + why + "; nothing was applied");
    }
    return doc["recommended_gain"].get<double>();
  }

  static void SavePrediction(Context& ctx, std::vector<std::string> args, const std::string& path) {
    std::ostringstream json_out;
    Context quiet{json_out, ctx.err, false, false, ctx.command_line, ctx.rig_dir};
    args.push_back("--json");
    RunCommand(quiet, "predict", args);
    WriteFileAtomically(path, json_out.str());
  }

  RigOptions rig_;
  ControllerOption controller_;
  std::optional<double> from_, to_;
  std::string ref_step_;
  std::string structure_ = "auto";
  std::optional<double> rise_max_, overshoot_max_, zeta_min_, settle_max_;
  std::string settle_ = "auto";
  double max_wait_ = 3600.0;
  std::string dir_;
};

}  // namespace

std::unique_ptr<Command> MakeTuneCommand() { return std::make_unique<TuneCommand>(); }

}  // namespace lw::app
