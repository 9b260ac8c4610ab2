// `loopwright fit`: identify a low-order plant model from a step-test recording.
//
//   loopwright fit REC.csv [--time C --input C --output C --time-unit U]
//                  [--structure auto|fopdt|sopdt|underdamped|integrating|sopdt-zero]
//                  [--simpler-within DELTA]
//                  [--window T0:T1] [--robust [--loss huber|cauchy]] [-o MODEL.json] [--json]
//                  [--plot FIG.svg]
//                  [--input-unit U] [--output-unit U]
//   loopwright fit REC.csv --step-at T --step-size A ...   (no input column: a known step)
//   loopwright fit REC.csv --closed-loop --gain K [--controller C] [--reference C] ...
//   loopwright fit NEW.csv --compare OLD.json [--band OLD_BAND.json] [--gain K] ...
//
// Prints the parameters with 95 % intervals, the fit percentage, the criterion and warnings
// (identify/fit.h explains the method). --structure auto fits every structure and chooses by
// AICc, the fewest parameters among those within --simpler-within (default 2) of the smallest,
// then one whose parameters the data determine (identify/structure_selection.h); the candidate
// table marks the chosen one with *, names the smallest AICc when it differs and says why in one
// line below. -o writes the model file (io/model_file.h) only after a successful fit, atomically.
// Exit 3 for an unusable recording, 1 when no fit converges.
//
// --closed-loop: the recording was made under feedback (columns t, r, u, y); the plant is fitted
// inside the known loop C = K shape (identify/closed_loop_fit.h).
// --compare OLD.json / --band OLD_BAND.json: what changed against an older model and whether the
// gain in use is still inside the bands found again on the new model (app/fit_compare.h).
//
// Units: the gain is in output unit / input unit, time constants and the dead time in seconds
// (the time column is converted to seconds whatever --time-unit says). The units come from
// --input-unit / --output-unit, else from the column name: "power[%]", "power (%)" or a last
// "_" part that is a known unit ("temp_degC", "flow_lpm").
//
// Every output path (-o, --plot) is checked before anything is read or written: a figure with an
// unknown extension, an output folder that does not exist or -o equal to --plot is refused (exit
// 2) with no file left.
#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>
#include <optional>
#include <string>
#include <tuple>
#include <vector>

#include <filesystem>

#include "app/column_options.h"
#include "app/command.h"
#include "app/controller_option.h"
#include "app/fit_compare.h"
#include "app/fit_plot.h"
#include "app/output.h"
#include "app/summary_table.h"
#include "app/workspace.h"
#include "identify/closed_loop_fit.h"
#include "identify/fit.h"
#include "identify/model_text.h"
#include "identify/structure_selection.h"
#include "io/csv_reader.h"
#include "io/figure.h"
#include "io/model_file.h"
#include "io/recording.h"
#include "io/sha256.h"
#include "lti/error.h"
#include "lti/number_text.h"

namespace lw::app {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// "T0:T1" with either side optional ("5:" from 5 s on, ":20" up to 20 s).
void ParseWindow(const std::string& text, double& t0, double& t1) {
  constexpr double kInf = std::numeric_limits<double>::infinity();
  const auto pair = ParseNumberPair(text, -kInf, kInf);
  if (!pair || !(pair->first < pair->second)) {
    throw UsageError("--window '" + text + "': expected T0:T1 in seconds with T0 < T1");
  }
  std::tie(t0, t1) = *pair;
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
                                   {"fit_percent", JsonNumber(c.fitted ? c.fit_percent : kNaN)},
                                   {"residual_rms", JsonNumber(c.fitted ? c.residual_rms : kNaN)},
                                   {"aicc", JsonNumber(c.usable ? c.aicc : kNaN)},
                                   {"delta_aicc", JsonNumber(c.usable ? c.delta_aicc : kNaN)},
                                   {"free_parameters", c.free_parameters},
                                   {"smallest_aicc", c.smallest},
                                   {"chosen", c.chosen}});
    }
    doc["selection"] = {{"prefer_fewer_parameters", id.selection.prefer_fewer_parameters},
                        {"support_width", JsonNumber(id.selection.support_width)},
                        {"note", id.selection_note}};
  }
  return doc;
}

// The unit a column name carries: "power[%]" / "power (%)" -> "%", "temp_degC" -> "degC" (the
// part after the last '_' when it is a known unit); empty when there is none.
std::string UnitOfColumnName(const std::string& name) {
  for (auto [open, close] : {std::pair{'[', ']'}, std::pair{'(', ')'}}) {
    size_t a = name.rfind(open);
    if (a != std::string::npos && name.size() > a + 2 && name.back() == close) {
      std::string unit = name.substr(a + 1, name.size() - a - 2);
      while (!unit.empty() && unit.front() == ' ') unit.erase(unit.begin());
      while (!unit.empty() && unit.back() == ' ') unit.pop_back();
      if (!unit.empty()) return unit;
    }
  }
  static const std::vector<std::string> known = {
      "degC", "degF", "K",   "pct", "percent", "m",   "mm",  "cm",  "um",  "mps", "rpm",
      "rads", "rad",  "deg", "bar", "mbar",    "Pa",  "kPa", "MPa", "psi", "V",   "mV",
      "A",    "mA",   "W",   "kW",  "N",       "Nm",  "kg",  "g",   "lpm", "Hz",  "kHz",
      "C",    "F",    "l",   "ml",  "m3h",     "kgh", "lph", "ms",  "s",   "min", "h"};
  size_t us = name.rfind('_');
  if (us == std::string::npos || us + 1 >= name.size()) return "";
  std::string tail = name.substr(us + 1);
  for (const auto& k : known) {
    if (tail == k) return tail;
  }
  return "";
}

// The header name of a column chosen by name or 1-based position (recording.h's rule).
std::string ColumnHeader(const Table& table, const std::string& chosen) {
  for (const auto& n : table.names) {
    if (n == chosen) return n;
  }
  if (!chosen.empty() && chosen.find_first_not_of("0123456789") == std::string::npos) {
    size_t i = std::stoul(chosen);
    if (i >= 1 && i <= table.names.size()) return table.names[i - 1];
  }
  return chosen;
}

// Refuses, before anything is written, an output that cannot be made: its folder is missing or
// not a folder.
void CheckOutputFolder(const std::string& path, const std::string& option) {
  std::filesystem::path parent = std::filesystem::path(path).parent_path();
  if (parent.empty()) return;
  std::error_code ec;
  if (!std::filesystem::is_directory(parent, ec)) {
    throw UsageError(option + " '" + path + "': the folder '" + parent.string() +
                     "' does not exist");
  }
}

// One parameter row: name, value, 95 % interval (cut at the physical range), unit; the cut's
// note, named, goes to `notes`.
std::vector<std::string> EstimateRow(const ParameterEstimate& p, std::vector<std::string>& notes) {
  const ParameterText text = FormatParameter(p.name, p.value, p.ci_low, p.ci_high);
  if (!text.note.empty()) notes.push_back(p.name + ": " + text.note);
  return {p.name, text.value, text.interval, p.unit};
}

class FitCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.footer(
        "Each parameter is shown with its 95 % interval, value +- t sd from the covariance\n"
        "scaled by the residual variance. An interval that reaches past the parameter's physical\n"
        "range (a negative dead time or time constant, a damping ratio above 1) is shown cut at\n"
        "the bound and marked †, with a line under the table giving the symmetric end; fit\n"
        "--compare and drift show it the same way, and --json and the model file keep the\n"
        "symmetric interval. A recording without an input column is fitted to a known step\n"
        "with --step-at T --step-size A. Exit status: 0 fitted, 1 the fit failed, 2 a usage\n"
        "error, 3 a recording that cannot be used; no model file is written unless 0.");
    sub.add_option("REC.csv", path_, "Step-test recording (CSV)")->required();
    columns_.Add(sub, ColumnSet{true, true, true});
    sub.add_option("--structure", structure_,
                   "auto (every structure, chosen by AICc: see --simpler-within), fopdt, "
                   "sopdt, underdamped, integrating or sopdt-zero")
        ->capture_default_str();
    sub.add_option("--simpler-within", simpler_within_,
                   "auto: among structures within this delta AICc of the smallest, take the one "
                   "with the fewest parameters, then one whose parameters are determined (0: the "
                   "smallest AICc alone)")
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
    sub.add_option("--input-unit", input_unit_,
                   "Unit of the input column (default: from its name)");
    sub.add_option("--output-unit", output_unit_,
                   "Unit of the output column (default: from its name)");
    sub.add_flag("--closed-loop", closed_loop_,
                 "The recording ran under feedback (t, r, u, y): fit the plant inside the loop "
                 "given by --controller and --gain");
    controller_.Add(sub, /*gain_required=*/false);
    sub.add_option("--compare", compare_path_,
                   "An older model file: show each parameter's change and its significance");
    sub.add_option("--band", band_path_,
                   "A band file (band -o): find the bands again on the new model; is the gain in "
                   "use (--gain, else its recommended gain) still inside?");
  }

  int Run(Context& ctx) override {
    FitOptions options;
    options.structure = structure_;
    if (!(std::isfinite(simpler_within_) && simpler_within_ >= 0.0)) {
      throw UsageError("--simpler-within " + FormatNumber(simpler_within_) +
                       ": must be a delta AICc >= 0 (0 takes the smallest AICc)");
    }
    options.selection.prefer_fewer_parameters = simpler_within_ > 0.0;
    options.selection.support_width = simpler_within_;
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
    CheckOptions();

    // Inputs that can be refused are read before the fit, so nothing runs on a bad file.
    std::optional<ModelDocument> old_model;
    if (!compare_path_.empty()) old_model = ReadModelFile(compare_path_);
    std::optional<BandFile> band;
    if (!band_path_.empty()) band = ReadBandFile(band_path_);

    Table table = ReadCsv(path_);
    const bool known_step = step_at_.has_value();
    if (!known_step && !closed_loop_) {
      try {
        table.ColumnIndex(columns_.names().input);
      } catch (const DataError& e) {
        // A response-only recording is fitted to a known step: say how.
        throw DataError(std::string(e.what()) +
                        " (name the input column with --input C, or for a recorded response "
                        "to a known step give --step-at T --step-size A)");
      }
    }
    Recording rec = SelectColumns(table, columns_.names(), /*need_input=*/!known_step,
                                  /*need_output=*/true, /*need_reference=*/closed_loop_, 3);
    options.input_unit = !input_unit_.empty()
                             ? input_unit_
                             : UnitOfColumnName(ColumnHeader(table, columns_.names().input));
    options.output_unit = !output_unit_.empty()
                              ? output_unit_
                              : UnitOfColumnName(ColumnHeader(table, columns_.names().output));
    StepRecording data;
    data.t = rec.t;
    data.y = rec.y;
    data.u = known_step ? KnownStepInput(rec.t, *step_at_, *step_size_) : rec.u;

    Identification id;
    std::optional<ClosedLoopFit> loop_fit;
    try {
      if (closed_loop_) {
        ClosedLoopFitOptions co;
        co.structure = options.structure;
        co.controller = controller_.Parse();
        co.gain = controller_.gain();
        co.input_unit = options.input_unit;
        co.output_unit = options.output_unit;
        co.selection = options.selection;
        loop_fit = FitClosedLoop(ClosedLoopRecording{rec.t, rec.r, rec.u, rec.y}, co);
        id.model = loop_fit->model;
        id.automatic = loop_fit->automatic;
        id.candidates = loop_fit->candidates;
        id.selection = co.selection;
        id.selection_note = loop_fit->selection_note;
        id.analysis = loop_fit->start.analysis;
        id.samples_in = rec.t.size();
        id.warnings = loop_fit->warnings;
      } else {
        id = Identify(data, options);
        if (rec.has_r &&
            std::adjacent_find(rec.r.begin(), rec.r.end(), std::not_equal_to<>()) != rec.r.end()) {
          id.warnings.push_back(
              "the recording has a reference column '" + columns_.names().reference +
              "' that changes: if it ran under feedback, u follows the output's noise and an "
              "open-loop fit can be biased (a spurious zero, a shifted dead time); "
              "fit --closed-loop --controller C --gain K fits the plant inside the loop");
        }
      }
    } catch (const DataError& e) {
      throw DataError(path_ + ": " + e.what());
    }
    nlohmann::json doc = ResultJson(id);
    doc["model_text"] = FactoredModelText(id.model.structure, id.model.values);
    doc["units"] = {{"input", options.input_unit}, {"output", options.output_unit}, {"time", "s"}};
    if (loop_fit) doc["closed_loop"] = ClosedLoopJson(*loop_fit);

    std::optional<ModelComparison> comparison;
    if (old_model) comparison = CompareWithOld(compare_path_, *old_model, id.model);
    if (band) {
      if (!comparison) comparison.emplace();
      std::optional<double> in_use;
      if (controller_.has_gain()) in_use = controller_.gain();
      comparison->band = RecheckBand(*band, id.model, in_use);
    }
    if (comparison) doc["compare"] = ComparisonJson(*comparison);

    if (!out_path_.empty()) WriteModel(ctx, id, doc);
    if (!plot_path_.empty()) WriteFitPlot(plot_path_, path_, data, id);
    if (json_) {
      PrintJson(ctx, doc);
    } else {
      PrintHuman(ctx, id, options);
      if (loop_fit) PrintClosedLoop(ctx, *loop_fit);
      if (comparison && old_model) PrintComparison(ctx, *comparison);
      if (comparison && !old_model) PrintBandOnly(ctx, *comparison);
    }
    for (const auto& w : id.warnings) Warn(ctx, w);
    std::vector<std::string> recordings = {path_};
    LogResult(ctx, "fit", "ok", doc, recordings);
    return 0;
  }

 private:
  // Option combinations and output paths, before anything is read or written.
  void CheckOptions() const {
    if (closed_loop_) {
      if (!controller_.has_gain()) {
        throw UsageError("--closed-loop needs --gain K: the gain the loop ran at");
      }
      controller_.gain();
      controller_.Parse();
      if (step_at_) {
        throw UsageError(
            "--closed-loop fits a recording with its input column; --step-at and "
            "--step-size are for open-loop records without one");
      }
    } else {
      if (controller_.text() != "p") {
        throw UsageError(
            "--controller is the loop's controller of --closed-loop (a band file "
            "given with --band names its own)");
      }
      if (controller_.has_gain() && band_path_.empty()) {
        throw UsageError(
            "--gain is the loop's gain with --closed-loop, or the gain in use with "
            "--band");
      }
      if (controller_.has_gain()) controller_.gain();
    }
    if (!plot_path_.empty()) {
      FigureFormatOf(plot_path_);
      CheckOutputFolder(plot_path_, "--plot");
    }
    if (!out_path_.empty()) CheckOutputFolder(out_path_, "-o");
    if (!out_path_.empty() && !plot_path_.empty() &&
        std::filesystem::absolute(out_path_).lexically_normal() ==
            std::filesystem::absolute(plot_path_).lexically_normal()) {
      throw UsageError("-o and --plot both name '" + out_path_ + "': give two different files");
    }
  }

  nlohmann::json ClosedLoopJson(const ClosedLoopFit& f) const {
    nlohmann::json start = {{"structure", std::string(StructureName(f.start.model.structure))},
                            {"values", JsonNumbers(f.start.model.values)},
                            {"fit_percent", JsonNumber(f.start.model.fit_percent)}};
    return {{"controller", controller_.Parse().ToString()},
            {"gain", JsonNumber(controller_.gain())},
            {"input_fit_percent", JsonNumber(f.input_fit_percent)},
            {"input_residual_rms", JsonNumber(f.input_residual_rms)},
            {"input_baseline", JsonNumber(f.model.input_baseline)},
            {"noise",
             {{"output_sd", JsonNumber(f.output_sd)},
              {"input_sd", JsonNumber(f.input_sd)},
              {"input_sd_floored", f.input_sd_floored}}},
            {"solves", f.solves},
            {"open_loop_start", start}};
  }

  void PrintClosedLoop(Context& ctx, const ClosedLoopFit& f) const {
    ctx.out << "closed loop: controller " << controller_.Parse().ToString()
            << ", K = " << FormatNumber(controller_.gain()) << "; both channels fitted\n";
    SummaryTable t({"channel", "fit %", "residual rms", "noise sd used"});
    t.AddRow({"output y", FormatNumber(f.model.fit_percent), FormatNumber(f.model.residual_rms),
              FormatNumber(f.output_sd)});
    t.AddRow({"actuator u", FormatNumber(f.input_fit_percent), FormatNumber(f.input_residual_rms),
              FormatNumber(f.input_sd) + (f.input_sd_floored ? " (floor K sd_y)" : "")});
    t.Print(ctx);
    ctx.out << "  started from the open-loop fit u -> y: "
            << FactoredModelText(f.start.model.structure, f.start.model.values) << " (fit "
            << FormatNumber(f.start.model.fit_percent) << " %)\n";
  }

  // --band without --compare: only the bands.
  void PrintBandOnly(Context& ctx, const ModelComparison& c) const {
    ModelComparison only = c;
    only.changes.clear();
    only.old_path = "(no --compare model)";
    PrintComparison(ctx, only);
  }

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

  void PrintHuman(Context& ctx, const Identification& id, const FitOptions& options) {
    const FitResult& m = id.model;
    std::string how = !id.automatic               ? ""
                      : id.selection_note.empty() ? " (chosen by AICc)"
                                                  : " (chosen by AICc, the simpler of a near-tie)";
    ctx.out << Bold(ctx, std::string(StructureName(m.structure))) << how << ": "
            << FactoredModelText(m.structure, m.values) << "\n";
    ctx.out << "  units: gain in " << (options.output_unit.empty() ? "output" : options.output_unit)
            << " per " << (options.input_unit.empty() ? "input" : options.input_unit)
            << ", times in s\n";
    TextTable table({"parameter", "value", "95 % interval", "unit"});
    std::vector<std::string> notes;
    for (const auto& p : m.parameters) table.AddRow(EstimateRow(p, notes));
    table.AddRow(EstimateRow(m.output_offset, notes));
    if (m.output_drift) table.AddRow(EstimateRow(*m.output_drift, notes));
    table.Print(ctx.out);
    PrintCutNotes(ctx.out, notes);
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
        std::string mark = c.chosen ? " *" : "";
        if (!c.usable) {
          // A solve that stopped short still shows how well its last iterate fits; it has no
          // criterion, since it is not a candidate.
          cands.AddRow({std::string(StructureName(c.structure)),
                        c.fitted ? FormatNumber(c.fit_percent) : "",
                        c.fitted ? FormatNumber(c.residual_rms) : "", "", "", c.note});
          continue;
        }
        std::string note = c.note;
        if (c.smallest && !c.chosen)
          note = note.empty() ? "smallest AICc" : note + "; smallest AICc";
        cands.AddRow({std::string(StructureName(c.structure)) + mark, FormatNumber(c.fit_percent),
                      FormatNumber(c.residual_rms), FormatNumber(c.aicc, 6),
                      FormatNumber(c.delta_aicc, 3), note});
      }
      cands.Print(ctx.out);
      if (!id.selection_note.empty()) {
        ctx.out << "* " << id.selection_note << " (common practice; --simpler-within 0 takes the "
                << "smallest AICc)\n";
      }
    }
  }

  std::string path_;
  ColumnOptions columns_;
  std::string structure_ = "auto";
  double simpler_within_ = 2.0;
  std::string window_;
  bool robust_ = false;
  std::string loss_ = "huber";
  std::optional<double> step_at_, step_size_;
  std::string out_path_;
  std::string plot_path_;
  bool json_ = false;
  std::string input_unit_, output_unit_;
  bool closed_loop_ = false;
  ControllerOption controller_;
  std::string compare_path_, band_path_;
};

}  // namespace

std::unique_ptr<Command> MakeFitCommand() { return std::make_unique<FitCommand>(); }

}  // namespace lw::app
