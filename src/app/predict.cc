// `loopwright predict (MODEL.json | --plant FORMULA) --gain K [--controller C]
//                     [--reference step:FROM:TO:AT] [--duration S] [--actuator LO:HI]
//                     [--pade N] [--json] [-o FILE.csv]`
//
// What one gain will do (design/prediction.h): closed-loop poles (dead time through Padé, said),
// the dominant pair's zeta and wn, gain and phase margins with their crossovers (exact dead
// time), the steady-state error to the step, the simulated step's metrics and the peak actuator
// effort, with a warning beyond the actuator limits.
#include <cmath>
#include <memory>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/controller_option.h"
#include "app/model_source.h"
#include "app/output.h"
#include "design/prediction.h"
#include "io/csv_writer.h"
#include "lti/error.h"
#include "lti/input_signal.h"

namespace lw::app {
namespace {

using nlohmann::json;

std::pair<double, double> ParseActuator(const std::string& text) {
  auto colon = text.find(':');
  try {
    if (colon == std::string::npos) throw std::invalid_argument("no colon");
    size_t used = 0;
    double lo = std::stod(text.substr(0, colon), &used);
    if (used != colon) throw std::invalid_argument("junk");
    std::string rest = text.substr(colon + 1);
    double hi = std::stod(rest, &used);
    if (used != rest.size() || !(lo < hi) || !std::isfinite(lo) || !std::isfinite(hi)) {
      throw std::invalid_argument("order");
    }
    return {lo, hi};
  } catch (const std::exception&) {
    throw UsageError("--actuator '" + text + "': expected LO:HI with two numbers, LO < HI");
  }
}

std::string PoleText(std::complex<double> p) {
  std::string s = FormatNumber(p.real(), 4);
  if (p.imag() != 0.0) s += (p.imag() < 0 ? " - j" : " + j") + FormatNumber(std::abs(p.imag()), 4);
  return s;
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
    sub.add_option("--pade", pade_, "Padé order for the dead time in the pole list (1..8)")
        ->capture_default_str();
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
    sub.add_option("-o,--out", out_path_, "Write the predicted response (t, r, u, y) as CSV");
  }

  int Run(Context& ctx) override {
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
      auto [lo, hi] = ParseActuator(actuator_);
      o.actuator_lo = lo;
      o.actuator_hi = hi;
    }
    Prediction p = Predict(model.tf, controller, gain, o);
    if (!out_path_.empty()) WriteRecord(p, ctx);
    if (p.actuator_exceeded) Warn(ctx, p.actuator_warning);
    if (!p.stable) Warn(ctx, "the closed loop is unstable at K = " + FormatNumber(gain, 4));
    const StepMetrics& m = p.metrics;
    if (json_) {
      json poles = json::array();
      for (const auto& s : p.poles) poles.push_back({s.real(), s.imag()});
      json doc = {
          {"gain", gain},
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
            {"peak_time", JsonNumber(m.peak_time)},
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
      PrintJson(ctx, doc);
      return 0;
    }
    std::ostream& out = ctx.out;
    out << Bold(ctx, "predict") << " K = " << FormatNumber(gain, 6) << ", controller "
        << controller.ToString() << ", " << model.description << "\n";
    out << "  closed-loop poles"
        << (p.pade_order ? " (dead time through Padé order " + std::to_string(p.pade_order) + ")"
                         : std::string())
        << ":";
    for (const auto& s : p.poles) {
      if (s.imag() >= 0.0) out << "  " << PoleText(s);
    }
    out << (p.stable ? "" : "  " + Bad(ctx, "UNSTABLE")) << "\n";
    KeyValueList kv;
    kv.Add("dominant pair", "zeta " + FormatNumber(p.dominant_shape.zeta, 3) + ", wn " +
                                FormatQuantity(p.dominant_shape.wn, "rad/s", 4));
    kv.Add("gain margin", std::isinf(p.margins.gain_margin)
                              ? std::string("infinite (phase never reaches -180 deg)")
                              : FormatNumber(p.margins.gain_margin, 4) + " (" +
                                    FormatNumber(p.margins.gain_margin_db, 3) + " dB) at " +
                                    FormatQuantity(p.margins.phase_crossover, "rad/s"));
    kv.Add("phase margin", std::isinf(p.margins.phase_margin_deg)
                               ? std::string("infinite (|L| never reaches 1)")
                               : FormatNumber(p.margins.phase_margin_deg, 4) + " deg at " +
                                     FormatQuantity(p.margins.gain_crossover, "rad/s"));
    kv.Add("steady-state error", FormatNumber(p.steady_state_error, 4));
    kv.Add("rise time (10-90 %)", FormatQuantity(m.rise_time, "s"));
    kv.Add("overshoot", FormatQuantity(m.overshoot_percent, "%"));
    kv.Add("peak time", FormatQuantity(m.peak_time, "s"));
    kv.Add("settling time (2 %)", FormatQuantity(m.settling_time, "s"));
    kv.Add("peak actuator", FormatNumber(m.peak_actuator, 4) + " (range " +
                                FormatNumber(p.actuator_min, 4) + " to " +
                                FormatNumber(p.actuator_max, 4) + ")");
    kv.Print(out);
    out << "  (response simulated with the exact dead time, reference " << ref.ToString() << ")\n";
    return 0;
  }

 private:
  void WriteRecord(const Prediction& p, Context& ctx) const {
    lw::WriteCsv(out_path_, {"t", "r", "u", "y"}, {p.t, p.r, p.u, p.y},
                 "loopwright predict: " + ctx.command_line);
  }

  ModelSource source_;
  ControllerOption controller_;
  std::string reference_ = "step:0:1:0";
  std::optional<double> duration_;
  std::string actuator_;
  int pade_ = 3;
  bool json_ = false;
  std::string out_path_;
};

}  // namespace

std::unique_ptr<Command> MakePredictCommand() { return std::make_unique<PredictCommand>(); }

}  // namespace lw::app
