// `loopwright predict (MODEL.json | --plant FORMULA) --gain K [--controller C]
//                     [--reference step:FROM:TO:AT] [--duration S] [--actuator LO:HI]
//                     [--overshoot-max PCT] [--pade N] [--json] [--save FILE.json]
//                     [--plot FIGURE.svg] [--draws N] [--seed N] [-o FILE.csv]`
//
// What one gain will do (design/prediction.h): closed-loop poles (dead time through Padé, said),
// the dominant pair's zeta and wn, gain and phase margins with their crossovers (exact dead
// time), the steady-state error to the step, the simulated step's metrics and the peak actuator
// effort, with a warning beyond the actuator limits; a compact summary table (app/summary_table.h).
// A response without a peak (lti/step_metrics.h: no overshoot above 0.1 % of the step, or the
// largest value in the record's tail) shows "no peak" and why instead of a peak time; in JSON
// metrics.peak_time is null and metrics.peak_note the reason (null when there is a peak).
// --save writes the JSON document the report reads; --plot draws the response figure with the
// envelope over parameter draws when the model file has a covariance (app/predict_plot.h).
#include <cmath>
#include <memory>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/controller_option.h"
#include "app/figure_path.h"
#include "app/model_draws.h"
#include "app/model_source.h"
#include "app/output.h"
#include "app/predict_plot.h"
#include "app/saved_document.h"
#include "app/summary_table.h"
#include "design/prediction.h"
#include "io/csv_writer.h"
#include "io/response_figure.h"
#include "io/rig_limits.h"
#include "lti/error.h"
#include "lti/input_signal.h"

namespace lw::app {
namespace {

using nlohmann::json;

// The prediction as one JSON document (printed by --json, written by --save; the report reads
// it: io/report.h, src/app/report.cc).
json PredictionJson(const Prediction& p, const Controller& controller, const LoadedModel& model,
                    const InputSignal& ref) {
  const StepMetrics& m = p.metrics;
  json poles = json::array();
  for (const auto& s : p.poles) poles.push_back({s.real(), s.imag()});
  return {
      {"gain", p.gain},
      {"controller", controller.ToString()},
      {"plant", model.tf.ToString()},
      {"pade_order", p.pade_order},
      {"stable", p.stable},
      {"closed_loop_poles", poles},
      {"dominant",
       {{"pole", {p.dominant.real(), p.dominant.imag()}},
        {"zeta", JsonNumber(p.dominant_shape.zeta)},
        {"wn", JsonNumber(p.dominant_shape.wn)}}},
      {"metrics",
       {{"rise_time", JsonNumber(m.rise_time)},
        {"overshoot_percent", JsonNumber(m.overshoot_percent)},
        {"peak_time", m.has_peak ? JsonNumber(m.peak_time) : json()},
        {"peak_note", m.has_peak ? json() : json(m.no_peak)},
        {"settling_time", JsonNumber(m.settling_time)},
        {"steady_state_error", JsonNumber(p.steady_state_error)},
        {"peak_actuator", JsonNumber(m.peak_actuator)}}},
      {"margins",
       {{"gain_margin", JsonNumber(p.margins.gain_margin)},
        {"gain_margin_db", JsonNumber(p.margins.gain_margin_db)},
        {"phase_crossover", JsonNumber(p.margins.phase_crossover)},
        {"phase_margin_deg", JsonNumber(p.margins.phase_margin_deg)},
        {"gain_crossover", JsonNumber(p.margins.gain_crossover)},
        {"delay_margin", JsonNumber(p.margins.delay_margin)}}},
      {"actuator",
       {{"min", p.actuator_min}, {"max", p.actuator_max}, {"exceeded", p.actuator_exceeded}}},
      {"reference", ref.ToString()},
  };
}

std::string MarginText(double v, const std::string& unit, double at) {
  if (std::isinf(v)) return "inf";
  return FormatNumber(v, 4) + " " + unit + " at " + FormatQuantity(at, "rad/s");
}

class PredictCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    source_.Add(sub);
    controller_.Add(sub, /*gain_required=*/true);
    sub.add_option("--reference", reference_,
                   "Reference step step:FROM:TO:AT (one step; default step:0:1:0)")
        ->capture_default_str();
    sub.add_option("--duration", duration_, "Seconds to simulate after the step (default: auto)");
    sub.add_option("--actuator", actuator_, "Actuator limits LO:HI (warn when exceeded)");
    sub.add_option("--overshoot-max", overshoot_max_,
                   "Overshoot limit in percent of the step, judged in the summary and drawn");
    sub.add_option("--pade", pade_, "Padé order for the dead time in the pole list (1..8)")
        ->capture_default_str();
    sub.add_option("--draws", draws_,
                   "Parameter draws for the figure's uncertainty envelope (model with covariance)")
        ->capture_default_str();
    sub.add_option("--seed", seed_, "Seed of the parameter draws")->capture_default_str();
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
    sub.add_option("--save", save_path_,
                   "Also write the JSON document to this file (the report "
                   "reads it)");
    sub.add_option("--plot", plot_path_,
                   "Draw the predicted response and actuator effort to FILE (.svg, .png, .pdf)");
    sub.add_option("-o,--out", out_path_, "Write the predicted response (t, r, u, y) as CSV");
  }

  int Run(Context& ctx) override {
    if (!plot_path_.empty()) CheckFigurePath("--plot", plot_path_);
    CheckDistinct();
    if (draws_ < 20) {
      throw UsageError("--draws " + std::to_string(draws_) +
                       ": the envelope needs at least 20 parameter draws");
    }
    if (overshoot_max_ && !(*overshoot_max_ > 0.0 && *overshoot_max_ < 100.0)) {
      throw UsageError("--overshoot-max " + FormatNumber(*overshoot_max_) +
                       ": it must be a percentage with 0 < P < 100");
    }
    LoadedModel model = source_.Load();
    Controller controller = controller_.Parse();
    const double gain = controller_.gain();
    InputSignal ref = InputSignal::Parse(reference_);
    if (ref.kind() != InputSignal::Kind::kSteps || ref.StepTimes().size() != 1) {
      throw UsageError("--reference '" + reference_ +
                       "': predict needs exactly one step, step:FROM:TO:AT");
    }
    PredictionOptions o;
    o.step_time = ref.StepTimes()[0];
    o.reference_from = ref.initial_level();
    o.reference_to = ref.Sample(std::vector<double>{o.step_time + 1.0})[0];
    if (duration_) {
      if (!(std::isfinite(*duration_) && *duration_ > 0.0)) {
        throw UsageError("--duration " + FormatNumber(*duration_) +
                         ": it must be a number > 0 (s)");
      }
      o.duration = *duration_;
    }
    o.pade_order = pade_;
    if (!actuator_.empty()) {
      auto [lo, hi] = ParseRange(actuator_, "--actuator");
      o.actuator_lo = lo;
      o.actuator_hi = hi;
    }
    Prediction p = Predict(model.tf, controller, gain, o);
    if (p.actuator_exceeded) Warn(ctx, p.actuator_warning);
    if (!p.stable) Warn(ctx, "the closed loop is unstable at K = " + FormatNumber(gain, 4));
    if (!p.direction_warning.empty()) Warn(ctx, p.direction_warning);
    json doc = PredictionJson(p, controller, model, ref);
    if (overshoot_max_) doc["overshoot_limit_percent"] = *overshoot_max_;

    std::string envelope_note;
    if (!plot_path_.empty()) {
      ModelDraws draws = DrawModelPlants(model, static_cast<size_t>(draws_), seed_);
      ResponseEnvelope env = EnvelopeOverDraws(p, controller, draws.plants);
      envelope_note =
          draws.plants.empty() ? draws.note + "; the figure has no envelope" : draws.note;
      PredictPlotInput in{
          p,
          env,
          o.reference_from,
          o.reference_to,
          overshoot_max_,
          o.settle_band,
          o.actuator_lo,
          o.actuator_hi,
          "Predicted step at K = " + FormatNumber(gain, 4) + ", " + controller.ToString(),
          {"Model: " + model.description + "; exact dead time in the loop."}};
      if (!envelope_note.empty()) in.caption.push_back(envelope_note);
      WriteResponseFigure(plot_path_, BuildResponseFigure(in));
      doc["figures"] = {{"response", plot_path_}};
      doc["envelope_draws"] = env.used;
    }
    if (!out_path_.empty()) WriteRecord(p, ctx);
    if (!save_path_.empty())
      SaveDocument(save_path_, doc, "loopwright-prediction", model.description, ctx.command_line);
    if (json_) {
      PrintJson(ctx, doc);
      return 0;
    }
    PrintHuman(ctx, p, controller, model, ref, o);
    if (!envelope_note.empty()) ctx.out << "  (" << envelope_note << ")\n";
    if (!plot_path_.empty()) ctx.out << "figure: " << plot_path_ << "\n";
    if (!save_path_.empty()) ctx.out << "prediction file: " << save_path_ << "\n";
    if (!out_path_.empty()) ctx.out << "response record: " << out_path_ << "\n";
    return 0;
  }

 private:
  void CheckDistinct() const {
    const std::string* paths[] = {&plot_path_, &save_path_, &out_path_};
    const char* names[] = {"--plot", "--save", "-o"};
    for (int i = 0; i < 3; ++i)
      for (int j = i + 1; j < 3; ++j)
        if (!paths[i]->empty() && *paths[i] == *paths[j])
          throw UsageError(std::string(names[i]) + " and " + names[j] + " name the same file '" +
                           *paths[i] + "'");
  }

  void PrintHuman(Context& ctx, const Prediction& p, const Controller& controller,
                  const LoadedModel& model, const InputSignal& ref,
                  const PredictionOptions& o) const {
    const StepMetrics& m = p.metrics;
    std::ostream& out = ctx.out;
    out << Bold(ctx, "predict") << " K = " << FormatNumber(p.gain, 6) << ", controller "
        << controller.ToString() << ", " << model.description << "\n";
    out << "  closed-loop poles"
        << (p.pade_order ? " (dead time through Padé order " + std::to_string(p.pade_order) + ")"
                         : std::string())
        << ":";
    for (const auto& s : p.poles) {
      if (ListedPole(s)) out << "  " << PoleText(s);
    }
    out << (p.stable ? "" : "  " + Bad(ctx, "UNSTABLE")) << "\n";
    if (p.dominant.imag() > 0.0) {
      out << "  dominant pair: zeta " << FormatNumber(p.dominant_shape.zeta, 3) << ", wn "
          << FormatQuantity(p.dominant_shape.wn, "rad/s", 4) << "\n\n";
    } else {  // a real pole: no pair; the region's zeta and wn read it as zeta 1, wn = |s|
      out << "  dominant pole: real, s = " << FormatNumber(p.dominant.real(), 4)
          << " (as zeta 1, wn " << FormatQuantity(p.dominant_shape.wn, "rad/s", 4) << ")\n\n";
    }

    SummaryTable t({"quantity", "predicted", "limit", "verdict"});
    t.AddRow({"closed loop", p.stable ? "stable" : "unstable", "", OkFail(p.stable)});
    t.AddRow({"rise time (10-90 %)", FormatQuantity(m.rise_time, "s")});
    if (overshoot_max_) {
      t.AddRow({"overshoot", FormatQuantity(m.overshoot_percent, "%"),
                "<= " + FormatQuantity(*overshoot_max_, "%"),
                OkFail(m.overshoot_percent <= *overshoot_max_)});
    } else {
      t.AddRow({"overshoot", FormatQuantity(m.overshoot_percent, "%")});
    }
    t.AddRow({"peak time", !p.stable    ? "n/a"
                           : m.has_peak ? FormatQuantity(m.peak_time, "s")
                                        : "no peak"});
    t.AddRow({"settling time (" + FormatNumber(100 * o.settle_band) + " %)",
              FormatQuantity(m.settling_time, "s")});
    t.AddRow({"steady-state error", FormatNumber(p.steady_state_error, 4)});
    if (o.actuator_lo || o.actuator_hi) {
      std::string range =
          FormatNumber(p.actuator_min, 4) + " to " + FormatNumber(p.actuator_max, 4);
      t.AddRow({"actuator range", range,
                FormatNumber(o.actuator_lo.value_or(-INFINITY), 4) + " to " +
                    FormatNumber(o.actuator_hi.value_or(INFINITY), 4),
                OkFail(!p.actuator_exceeded)});
    } else {
      t.AddRow({"peak actuator |u|", FormatNumber(m.peak_actuator, 4)});
    }
    t.AddRow({"gain margin",
              std::isinf(p.margins.gain_margin)
                  ? std::string("inf")
                  : MarginText(p.margins.gain_margin_db, "dB", p.margins.phase_crossover)});
    t.AddRow({"phase margin",
              std::isinf(p.margins.phase_margin_deg)
                  ? std::string("inf")
                  : MarginText(p.margins.phase_margin_deg, "deg", p.margins.gain_crossover)});
    t.AddRow({"delay margin", FormatQuantity(p.margins.delay_margin, "s")});
    t.Print(ctx);
    if (!m.has_peak) out << "  " << m.no_peak << "\n";
    out << "  (response simulated with the exact dead time, reference " << ref.ToString() << ")\n";
  }

  void WriteRecord(const Prediction& p, Context& ctx) const {
    lw::WriteCsv(out_path_, {"t", "r", "u", "y"}, {p.t, p.r, p.u, p.y},
                 "loopwright predict: " + ctx.command_line);
  }

  ModelSource source_;
  ControllerOption controller_;
  std::string reference_ = "step:0:1:0";
  std::optional<double> duration_;
  std::string actuator_;
  std::optional<double> overshoot_max_;
  int pade_ = 3;
  int draws_ = 200;
  unsigned seed_ = 1;
  bool json_ = false;
  std::string save_path_;
  std::string plot_path_;
  std::string out_path_;
};

}  // namespace

std::unique_ptr<Command> MakePredictCommand() { return std::make_unique<PredictCommand>(); }

}  // namespace lw::app
