// `loopwright fit`: identify a low-order plant model from a step-test recording.
//
//   loopwright fit REC.csv [--time C --input C --output C --time-unit U]
//                  [--structure auto|fopdt|sopdt|underdamped|integrating|sopdt-zero]
//                  [--window T0:T1] [--robust [--loss huber|cauchy]] [-o MODEL.json] [--json] [--plot FIG.svg]
//   loopwright fit REC.csv --step-at T --step-size A ...   (no input column: a known step)
//
// Prints the parameters with 95 % intervals, the fit percentage, the criterion and warnings
// (identify/fit.h explains the method). -o writes the model file (io/model_file.h) only after a
// successful fit, atomically. Exit 3 for an unusable recording, 1 when no fit converges.
#include <cmath>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "app/column_options.h"
#include "app/command.h"
#include "app/fit_plot.h"
#include "app/output.h"
#include "identify/fit.h"
#include "identify/structure_selection.h"
#include "io/csv_reader.h"
#include "io/model_file.h"
#include "io/recording.h"
#include "io/sha256.h"
#include "lti/error.h"

namespace lw::app {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// "T0:T1" with either side optional ("5:" from 5 s on, ":20" up to 20 s).
void ParseWindow(const std::string& text, double& t0, double& t1) {
  auto fail = [&] {
    throw UsageError("--window '" + text + "': expected T0:T1 in seconds with T0 < T1");
  };
  size_t colon = text.find(':');
  if (colon == std::string::npos) fail();
  auto number = [&](const std::string& s, double dflt) {
    if (s.empty()) return dflt;
    size_t used = 0;
    double v = 0.0;
    try {
      v = std::stod(s, &used);
    } catch (const std::logic_error&) {
      fail();
    }
    if (used != s.size() || !std::isfinite(v)) fail();
    return v;
  };
  t0 = number(text.substr(0, colon), -std::numeric_limits<double>::infinity());
  t1 = number(text.substr(colon + 1), std::numeric_limits<double>::infinity());
  if (!(t0 < t1)) fail();
}

nlohmann::json ParameterJson(const ParameterEstimate& p) {
  return {{"name", p.name},
          {"value", JsonNumber(p.value)},
          {"ci95", {JsonNumber(p.ci_low), JsonNumber(p.ci_high)}},
          {"unit", p.unit}};
}

nlohmann::json ResultJson(const Identification& id) {
  const FitResult& m = id.model;
  nlohmann::json doc;
  doc["structure"] = std::string(StructureName(m.structure));
  doc["parameters"] = nlohmann::json::array();
  for (const auto& p : m.parameters) doc["parameters"].push_back(ParameterJson(p));
  doc["offsets"] = nlohmann::json::array();
  doc["offsets"].push_back(ParameterJson(m.output_offset));
  if (m.output_drift) doc["offsets"].push_back(ParameterJson(*m.output_drift));
  doc["input_baseline"] = JsonNumber(m.input_baseline);
  doc["tf"] = {{"num", JsonNumbers(m.tf.num().coefficients())},
               {"den", JsonNumbers(m.tf.den().coefficients())},
               {"delay", JsonNumber(m.tf.delay())}};
  doc["fit_percent"] = JsonNumber(m.fit_percent);
  doc["residual_rms"] = JsonNumber(m.residual_rms);
  doc["criterion"] = {{"name", id.criterion},
                      {"value", JsonNumber(m.aicc)},
                      {"why", std::string(CriterionRationale())}};
  doc["samples"] = m.samples;
  doc["decimation"] = id.decimation;
  doc["rank_deficiency"] =
      m.rank_deficiency.empty() ? nlohmann::json(nullptr) : nlohmann::json(m.rank_deficiency);
  doc["solver"] = {{"termination", m.termination},
                   {"iterations", m.iterations},
                   {"seconds", JsonNumber(m.seconds)}};
  doc["warnings"] = id.warnings;
  if (id.automatic) {
    doc["candidates"] = nlohmann::json::array();
    for (const auto& c : id.candidates) {
      doc["candidates"].push_back({{"structure", std::string(StructureName(c.structure))},
                                   {"usable", c.usable},
                                   {"note", c.note},
                                   {"fit_percent", JsonNumber(c.usable ? c.fit_percent : kNaN)},
                                   {"residual_rms", JsonNumber(c.usable ? c.residual_rms : kNaN)},
                                   {"aicc", JsonNumber(c.usable ? c.aicc : kNaN)},
                                   {"delta_aicc", JsonNumber(c.usable ? c.delta_aicc : kNaN)},
                                   {"free_parameters", c.free_parameters}});
    }
  }
  return doc;
}

std::string Interval(const ParameterEstimate& p) {
  if (std::isnan(p.ci_low)) return "undetermined";
  return FormatNumber(p.ci_low) + " .. " + FormatNumber(p.ci_high);
}

class FitCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.add_option("recording", path_, "Step-test recording (CSV)")->required();
    columns_.Add(sub, ColumnSet{true, true, false});
    sub.add_option("--structure", structure_,
                   "auto, fopdt, sopdt, underdamped, integrating or sopdt-zero")
        ->capture_default_str();
    sub.add_option("--window", window_, "Use only T0 <= t <= T1 (seconds), e.g. 5:60");
    sub.add_flag("--robust", robust_, "Down-weight spikes with a robust loss (IRLS)");
    sub.add_option("--loss", loss_, "Robust loss: huber or cauchy (with --robust)")
        ->capture_default_str();
    sub.add_option("--step-at", step_at_, "No input column: the step's time in s");
    sub.add_option("--step-size", step_size_, "No input column: the step's size");
    sub.add_option("-o,--out", out_path_, "Write the model file (JSON) here");
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
    sub.add_option("--plot", plot_path_, "Draw the fit over the recording (.svg, .png or .pdf)");
  }

  int Run(Context& ctx) override {
    FitOptions options;
    options.structure = structure_;
    if (!window_.empty()) ParseWindow(window_, options.window_start, options.window_end);
    if (robust_) {
      if (loss_ == "huber") {
        options.robust = FitOptions::Robust::kHuber;
      } else if (loss_ == "cauchy") {
        options.robust = FitOptions::Robust::kCauchy;
      } else {
        throw UsageError("--loss '" + loss_ + "': expected huber or cauchy");
      }
    }
    if (step_at_.has_value() != step_size_.has_value()) {
      throw UsageError("--step-at and --step-size go together (a known step of the input)");
    }
    if (step_size_ && !(std::isfinite(*step_size_) && *step_size_ != 0.0)) {
      throw UsageError("--step-size " + FormatNumber(*step_size_) + ": must be a non-zero number");
    }
    options.Validate();

    Table table = ReadCsv(path_);
    const bool known_step = step_at_.has_value();
    Recording rec = SelectColumns(table, columns_.names(), /*need_input=*/!known_step,
                                  /*need_output=*/true, /*need_reference=*/false, 3);
    StepRecording data;
    data.t = rec.t;
    data.y = rec.y;
    data.u = known_step ? KnownStepInput(rec.t, *step_at_, *step_size_) : rec.u;

    Identification id;
    try {
      id = Identify(data, options);
    } catch (const DataError& e) {
      throw DataError(path_ + ": " + e.what());
    }
    nlohmann::json doc = ResultJson(id);
    if (!out_path_.empty()) WriteModel(ctx, id, doc);
    if (!plot_path_.empty()) WriteFitPlot(plot_path_, path_, data, id);
    if (json_) {
      PrintJson(ctx, doc);
    } else {
      PrintHuman(ctx, id);
    }
    for (const auto& w : id.warnings) Warn(ctx, w);
    return 0;
  }

 private:
  void WriteModel(Context& ctx, const Identification& id, const nlohmann::json& doc) {
    const FitResult& m = id.model;
    ModelDocument md;
    md.structure = std::string(StructureName(m.structure));
    md.tf = m.tf;
    for (const auto& p : m.parameters) {
      md.parameters.push_back({p.name, p.value, p.ci_low, p.ci_high, p.unit});
    }
    if (m.covariance_ok) md.covariance = m.covariance;
    md.provenance.source = path_;
    md.provenance.source_sha256 = Sha256OfFile(path_);
    md.provenance.created = NowUtcIso8601();
    md.provenance.tool = std::string("loopwright ") + LOOPWRIGHT_VERSION;
    md.provenance.command_line = ctx.command_line;
    md.details = doc;
    WriteModelFile(out_path_, md);
  }

  void PrintHuman(Context& ctx, const Identification& id) {
    const FitResult& m = id.model;
    std::string how = id.automatic ? " (chosen by AICc)" : "";
    ctx.out << Bold(ctx, std::string(StructureName(m.structure))) << how << ": " << m.tf.ToString()
            << "\n";
    TextTable table({"parameter", "value", "95 % interval", "unit"});
    for (const auto& p : m.parameters) {
      table.AddRow({p.name, FormatNumber(p.value), Interval(p), p.unit});
    }
    table.AddRow({m.output_offset.name, FormatNumber(m.output_offset.value),
                  Interval(m.output_offset), m.output_offset.unit});
    if (m.output_drift) {
      table.AddRow({m.output_drift->name, FormatNumber(m.output_drift->value),
                    Interval(*m.output_drift), m.output_drift->unit});
    }
    table.Print(ctx.out);
    KeyValueList kv;
    kv.Add("fit", FormatNumber(m.fit_percent) + " %");
    kv.Add("residual rms", FormatNumber(m.residual_rms));
    kv.Add("AICc", FormatNumber(m.aicc, 6));
    std::string samples = std::to_string(m.samples);
    if (id.decimation > 1) samples += " (decimated by " + std::to_string(id.decimation) + ")";
    kv.Add("samples", samples);
    kv.Add("input baseline", FormatNumber(m.input_baseline));
    kv.Print(ctx.out);
    if (id.automatic) {
      ctx.out << "candidates (" << CriterionRationale() << "):\n";
      TextTable cands({"structure", "fit %", "residual rms", "AICc", "delta", "note"});
      for (const auto& c : id.candidates) {
        std::string mark = c.structure == m.structure ? " *" : "";
        if (!c.usable) {
          cands.AddRow({std::string(StructureName(c.structure)), "", "", "", "", c.note});
          continue;
        }
        cands.AddRow({std::string(StructureName(c.structure)) + mark, FormatNumber(c.fit_percent),
                      FormatNumber(c.residual_rms), FormatNumber(c.aicc, 6),
                      FormatNumber(c.delta_aicc, 3), c.note});
      }
      cands.Print(ctx.out);
    }
  }

  std::string path_;
  ColumnOptions columns_;
  std::string structure_ = "auto";
  std::string window_;
  bool robust_ = false;
  std::string loss_ = "huber";
  std::optional<double> step_at_, step_size_;
  std::string out_path_;
  std::string plot_path_;
  bool json_ = false;
};

}  // namespace

std::unique_ptr<Command> MakeFitCommand() { return std::make_unique<FitCommand>(); }

}  // namespace lw::app
