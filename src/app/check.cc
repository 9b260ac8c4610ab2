// `loopwright check (MODEL.json | --plant FORMULA) --gain K [--controller C] REC.csv
//                   [--time C --reference C --input C --output C] [--actuator LO:HI]
//                   [--draws N] [--seed N] [--json] [--plot FIG.svg] [--save CHECK.json]`
//
// Does the rig still do what the model says? The reference steps of a fresh closed-loop
// recording are measured (noise-robust metrics), the same reference is predicted with the exact
// dead time, and every metric is judged against a tolerance from the model's parameter draws and
// the recording's own noise (design/closed_loop_check.h). Verdict: confirmed (exit 0), stale or
// saturated (exit 1), with one line of why. A recording that cannot be judged (no reference
// step, or an output that never responded to one: a dead sensor, a loop not closed) is refused
// with exit 3 and one sentence naming it; nothing is written. A metric that is not judged (the
// peak actuator without a u column, the peak time of a response without a peak) shows its label
// ("no peak") and a line saying why instead of numbers; in JSON it is null in measured,
// predicted, tolerance and consistent, with the sentence under the step's `not_judged`.
#include <cmath>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/column_options.h"
#include "app/command.h"
#include "app/controller_option.h"
#include "app/model_source.h"
#include "app/output.h"
#include "app/summary_table.h"
#include "app/workspace.h"
#include "design/closed_loop_check.h"
#include "identify/model_structure.h"
#include "identify/parameter_draws.h"
#include "io/atomic_file.h"
#include "io/csv_reader.h"
#include "io/figure.h"
#include "io/recording.h"
#include "io/response_figure.h"
#include "io/rig_limits.h"
#include "lti/error.h"

namespace lw::app {
namespace {

using nlohmann::json;

// A metric that is not judged (peak actuator without u, peak time without a peak) is null in
// measured, predicted, tolerance and consistent; `not_judged` says why.
json MetricsJson(const StepCheck& st, double MetricCheck::*field) {
  json o = json::object();
  for (size_t i = 0; i < kCheckMetricCount; ++i) {
    const MetricCheck& m = st.metrics[i];
    o[std::string(CheckMetricKey(static_cast<CheckMetric>(i)))] =
        m.judged ? JsonNumber(m.*field) : json(nullptr);
  }
  return o;
}

json StepJson(const StepCheck& st) {
  json tol = json::object(), ok = json::object(), why = json::object();
  for (size_t i = 0; i < kCheckMetricCount; ++i) {
    const MetricCheck& m = st.metrics[i];
    const std::string key(CheckMetricKey(static_cast<CheckMetric>(i)));
    tol[key] = m.judged ? json{JsonNumber(m.lo), JsonNumber(m.hi)} : json(nullptr);
    ok[key] = m.judged ? json(m.consistent) : json(nullptr);
    if (!m.judged) why[key] = m.not_judged;
  }
  return {{"at", st.at},
          {"from", st.from},
          {"to", st.to},
          {"measured", MetricsJson(st, &MetricCheck::measured)},
          {"predicted", MetricsJson(st, &MetricCheck::predicted)},
          {"tolerance", tol},
          {"consistent", ok},
          {"not_judged", why},
          {"time_at_limit", st.time_at_limit},
          {"at_limit", st.at_limit}};
}

// CLI11 writes a positional that takes one or two values as "NAME(1x)" in the usage line; this
// formatter writes the name alone ("[MODEL.json] REC.csv" says what may be given).
class PositionalsAsNamed : public CLI::Formatter {
 public:
  explicit PositionalsAsNamed(const CLI::FormatterBase& base) {
    column_width(base.get_column_width());
  }
  std::string make_option_usage(const CLI::Option* opt) const override {
    return make_option_name(opt, true);
  }
};

class CheckCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    // MODEL.json REC.csv, or REC.csv alone with --plant (or --model): one positional list, so
    // the recording is always the last one whatever the options between them.
    sub.add_option("[MODEL.json] REC.csv", inputs_,
                   "Model file written by `loopwright fit -o` (or give --plant), then the "
                   "closed-loop recording (CSV)")
        ->expected(1, 2)
        ->option_text(" ")
        ->required();
    sub.formatter(std::make_shared<PositionalsAsNamed>(*sub.get_formatter()));
    source_.Add(sub, ModelSource::FileSpelling::kOption);
    controller_.Add(sub, /*gain_required=*/true);
    columns_.Add(sub, ColumnSet{true, true, true});
    sub.add_option("--actuator", actuator_,
                   "Actuator limits LO:HI (default: detect a flat run at the recorded extremes)");
    sub.add_option("--draws", draws_, "Parameter draws for the model's uncertainty (>= 200)")
        ->capture_default_str();
    sub.add_option("--seed", seed_, "Seed of the parameter draws and noise replicates")
        ->capture_default_str();
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
    sub.add_option("--plot", plot_path_,
                   "Draw prediction, envelope and measurement (.svg, .png or .pdf)");
    sub.add_option("--save", save_path_, "Write the check as JSON for `loopwright report`");
  }

  int Run(Context& ctx) override {
    if (!plot_path_.empty()) FigureFormatOf(plot_path_);  // extension checked before any work
    if (!save_path_.empty() && !save_path_.ends_with(".json")) {
      throw UsageError("--save '" + save_path_ + "': the check file must end in .json");
    }
    if (draws_ < 200) {
      throw UsageError("--draws " + std::to_string(draws_) +
                       ": the tolerances need at least 200 parameter draws");
    }
    recording_ = inputs_.back();
    if (inputs_.size() == 2 && (source_.has_formula() || source_.has_file())) {
      throw UsageError("give either a model file or --plant FORMULA, not both");
    }
    LoadedModel model = inputs_.size() == 2 ? LoadModelFile(inputs_[0]) : source_.Load();
    const Controller controller = controller_.Parse();
    const double gain = controller_.gain();
    ClosedLoopCheckOptions o;
    if (!actuator_.empty()) {
      const auto [lo, hi] = ParseRange(actuator_, "--actuator");
      o.actuator = ActuatorLimits{lo, hi};
    }
    o.seed = seed_;
    Table table = ReadCsv(recording_);
    Recording rec = SelectColumns(table, columns_.names(), /*need_input=*/false,
                                  /*need_output=*/true, /*need_reference=*/true);
    if (!rec.has_u) Warn(ctx, "no actuator column: peak actuator and actuator limits not judged");

    std::vector<TransferFunction> draws = Draws(ctx, model);
    ClosedLoopCheck c;
    try {
      c = CheckClosedLoop(model.tf, draws, controller, gain,
                          CheckRecord{rec.t, rec.r, rec.u, rec.y}, o);
    } catch (const DataError& e) {
      throw DataError(recording_ + ": " + e.what());
    }
    for (const std::string& note : c.notes) Warn(ctx, note);
    json doc = Document(c, model, controller, gain);
    if (!plot_path_.empty()) Plot(c, rec, o);
    if (!save_path_.empty()) WriteFileAtomically(save_path_, doc.dump(2) + "\n");
    if (json_) {
      PrintJson(ctx, doc);
    } else {
      PrintText(ctx, c, model, controller, gain);
    }
    LogResult(ctx, "check", CheckVerdictName(c.verdict), doc, {recording_});
    return c.verdict == CheckVerdict::kConfirmed ? 0 : 1;
  }

 private:
  std::vector<TransferFunction> Draws(Context& ctx, const LoadedModel& model) const {
    if (!model.model) {
      Warn(ctx, "a plant formula has no parameter uncertainty: tolerances from noise only");
      return {};
    }
    const ModelDocument& m = *model.model;
    if (m.covariance.size() == 0) {
      Warn(ctx, "the model file has no covariance: tolerances from noise only");
      return {};
    }
    try {
      std::vector<double> mean;
      for (const auto& p : m.parameters) mean.push_back(p.value);
      ParameterDraws d = DrawParameters(ParseStructure(m.structure), mean, m.covariance,
                                        static_cast<size_t>(draws_), seed_);
      return d.plants;
    } catch (const UsageError& e) {
      Warn(ctx, std::string("the model's uncertainty cannot be drawn from (") + e.what() +
                    "): tolerances from noise only");
      return {};
    }
  }

  json Document(const ClosedLoopCheck& c, const LoadedModel& model, const Controller& controller,
                double gain) const {
    json steps = json::array();
    for (const StepCheck& st : c.steps) steps.push_back(StepJson(st));
    const std::string verdict(CheckVerdictName(c.verdict));
    return {{"format", "loopwright-check"},
            {"version", 1},
            {"recording", recording_},
            {"model", model.description},
            {"plant", model.tf.ToString()},
            {"controller", controller.ToString()},
            {"gain", gain},
            {"steps", steps},
            {"fit_percent", JsonNumber(c.fit_percent)},
            {"noise", {{"output_sd", c.sd_output}, {"actuator_sd", c.sd_actuator}}},
            {"draws", c.draws},
            {"noise_replicates", c.noise_replicates},
            {"notes", c.notes},
            {"applied_gain",
             {{"gain", JsonNumber(c.applied_gain)},
              {"fit_percent", JsonNumber(c.applied_gain_fit_percent)}}},
            {"verdict", verdict},
            {"reason", c.reason},
            {"pass", c.verdict == CheckVerdict::kConfirmed},
            {"sentence", verdict + ": " + c.reason + "."}};
  }

  void PrintText(Context& ctx, const ClosedLoopCheck& c, const LoadedModel& model,
                 const Controller& controller, double gain) const {
    std::ostream& out = ctx.out;
    out << Bold(ctx, "check") << " K = " << FormatNumber(gain, 6) << ", controller "
        << controller.ToString() << ", " << model.description << ", recording '" << recording_
        << "'\n";
    for (const StepCheck& st : c.steps) {
      out << "  reference step " << FormatNumber(st.from) << " -> " << FormatNumber(st.to)
          << " at t = " << FormatQuantity(st.at, "s") << "\n";
      SummaryTable t({"metric", "measured", "predicted", "tolerance", "verdict"});
      std::vector<std::string> why;
      for (size_t i = 0; i < kCheckMetricCount; ++i) {
        const MetricCheck& m = st.metrics[i];
        const std::string label(CheckMetricLabel(static_cast<CheckMetric>(i)));
        if (!m.judged) {
          // "no peak: the predicted overshoot ..." -> cell "no peak", the sentence below.
          const size_t colon = m.not_judged.find(": ");
          t.AddRow({label, "", "", "", SummaryCell(m.not_judged.substr(0, colon))});
          if (colon != std::string::npos) {
            why.push_back(label + " not judged: " + m.not_judged.substr(colon + 2));
          }
          continue;
        }
        const std::string unit(CheckMetricUnit(static_cast<CheckMetric>(i)));
        const std::string tol = std::isfinite(m.lo)
                                    ? FormatNumber(m.lo) + " to " + FormatQuantity(m.hi, unit)
                                    : std::string("n/a");
        t.AddRow({label, FormatQuantity(m.measured, unit), FormatQuantity(m.predicted, unit), tol,
                  OkFail(m.consistent)});
      }
      if (c.has_u) {
        t.AddRow({"time at a limit", FormatQuantity(st.time_at_limit, "s"), "", "",
                  Verdict(!st.at_limit, "OK", "SATURATED")});
      }
      t.Print(ctx, 4);
      for (const std::string& line : why) out << "    " << line << "\n";
    }
    KeyValueList kv;
    kv.Add("fit", FormatQuantity(c.fit_percent, "%", 3) +
                      " of the output variation explained by the prediction");
    kv.Add("noise sd", FormatNumber(c.sd_output, 3) + " (output), " +
                           FormatNumber(c.sd_actuator, 3) + " (actuator)");
    kv.Add("tolerances", std::to_string(c.draws) + " parameter draws, " +
                             std::to_string(c.noise_replicates) + " noise replicates");
    kv.Print(out);
    const std::string name(CheckVerdictName(c.verdict));
    out << Bold(ctx, "verdict") << ": "
        << (c.verdict == CheckVerdict::kConfirmed ? Good(ctx, name) : Bad(ctx, name)) << " ("
        << c.reason << ")\n";
  }

  void Plot(const ClosedLoopCheck& c, const Recording& rec, const ClosedLoopCheckOptions& o) const {
    ResponseFigureData f;
    f.title = "check: prediction against the closed-loop recording";
    f.t = rec.t;
    f.reference = rec.r;
    f.predicted = c.predicted_y;
    f.envelope_lo = c.envelope_y_lo;
    f.envelope_hi = c.envelope_y_hi;
    f.effort = c.predicted_u;
    f.effort_lo = c.envelope_u_lo;
    f.effort_hi = c.envelope_u_hi;
    f.measured_t = rec.t;
    f.measured_y = rec.y;
    f.measured_u = rec.u;
    const StepCheck& st = c.steps.front();
    const double dr = st.to - st.from;
    const MetricCheck& os = st.metric(CheckMetric::kOvershoot);
    if (std::isfinite(os.hi)) f.overshoot_level = st.to + os.hi / 100.0 * dr;
    f.settle_lo = st.to - o.settle_band * std::abs(dr);
    f.settle_hi = st.to + o.settle_band * std::abs(dr);
    if (o.actuator) {
      f.actuator_lo = o.actuator->low;
      f.actuator_hi = o.actuator->high;
    }
    f.caption = {"verdict " + std::string(CheckVerdictName(c.verdict)) + ": " + c.reason,
                 "shaded: 95 % of " + std::to_string(c.draws) +
                     " parameter draws; dashed: the highest overshoot within tolerance; fit " +
                     FormatNumber(c.fit_percent, 3) + " %"};
    WriteResponseFigure(plot_path_, f);
  }

  ModelSource source_;
  ControllerOption controller_;
  ColumnOptions columns_;
  std::vector<std::string> inputs_;
  std::string recording_;
  std::string actuator_;
  int draws_ = 200;
  uint64_t seed_ = 1;
  bool json_ = false;
  std::string plot_path_;
  std::string save_path_;
};

}  // namespace

std::unique_ptr<Command> MakeCheckCommand() { return std::make_unique<CheckCommand>(); }

}  // namespace lw::app
