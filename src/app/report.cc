// loopwright report: one self-contained HTML page of a tuning session from the files the other
// commands saved.
//   loopwright report FILE... -o report.html [--title TEXT]
//   loopwright report --rig DIR -o report.html       every *.json and *.svg in DIR, by name
// FILE is a model file (fit -o), a band file (band -o), a prediction (predict --json saved to a
// file) or an SVG figure (any command's --plot FILE.svg). Figures go to the section they belong
// to by their name: "fit" with the model, "locus" and "metrics" with the band, "response" and
// "predict" with the prediction, "check" with the verification (a check file saved by
// `loopwright check --save`), anything else under "Figures". A JSON file of another kind is a
// data error (exit 3) naming the file; the report is written atomically.
#include <algorithm>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>
#include <utility>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/output.h"
#include "identify/model_structure.h"
#include "identify/model_text.h"
#include "io/model_file.h"
#include "io/report.h"
#include "lti/error.h"

namespace lw::app {
namespace {

using nlohmann::json;

// The metric keys of a saved prediction or check (predict's --json keys) and their row labels.
constexpr std::pair<const char*, const char*> kMetricRows[] = {
    {"rise_time", "rise time (s)"},
    {"overshoot_percent", "overshoot (%)"},
    {"peak_time", "peak time (s)"},
    {"settling_time", "settling time (s)"},
    {"steady_state_error", "steady-state error"},
    {"peak_actuator", "peak actuator"}};

// The model in its structure's factored form (identify/model_text.h) when the file names one of
// fit's structures and holds its parameters; else the transfer function's coefficients.
std::string ModelLine(const ModelDocument& m) {
  try {
    const Structure st = ParseStructure(m.structure);
    std::vector<double> values;
    for (const std::string& name : ParameterNames(st)) {
      auto it = std::find_if(m.parameters.begin(), m.parameters.end(),
                             [&](const ModelParameter& p) { return p.name == name; });
      if (it == m.parameters.end()) return m.tf.ToString();
      values.push_back(it->value);
    }
    return FactoredModelText(st, values);
  } catch (const UsageError&) {
    return m.tf.ToString();
  }
}

std::string ReadWhole(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw DataError("cannot read '" + path + "': " + std::strerror(errno));
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

std::string Text(const json& v) {
  if (v.is_null()) return "n/a";
  if (v.is_number()) return FormatNumber(v.get<double>());
  if (v.is_string()) return v.get<std::string>();
  if (v.is_boolean()) return v.get<bool>() ? "yes" : "no";
  return v.dump();
}

std::string RangesText(const json& ranges) {
  if (ranges.is_null()) return "not computed";
  if (!ranges.is_array() || ranges.empty()) return "empty (no gain)";
  std::string out;
  for (const auto& r : ranges) {
    if (!out.empty()) out += " ∪ ";
    if (r.is_array() && r.size() == 2)
      out += "[" + Text(r[0]) + ", " + Text(r[1]) + "]";
    else if (r.is_object() && r.contains("lo") && r.contains("hi"))
      out += "[" + Text(r["lo"]) + ", " + Text(r["hi"]) + "]";
    else
      out += r.dump();
  }
  return out;
}

class Builder {
 public:
  void AddModel(const std::string& path) {
    ModelDocument m = ReadModelFile(path);
    ReportSection rig{"Rig and data", {}, {}, {}};
    ReportTable t{{"item", "value"}, {}};
    t.rows.push_back({"recording", m.provenance.source});
    if (!m.provenance.source_sha256.empty())
      t.rows.push_back({"recording SHA-256", m.provenance.source_sha256});
    t.rows.push_back({"model made", m.provenance.created + " by " + m.provenance.tool});
    t.rows.push_back({"command", m.provenance.command_line});
    if (m.details.contains("samples"))
      t.rows.push_back({"samples used", Text(m.details["samples"])});
    rig.tables.push_back(t);
    sections_.push_back(rig);

    ReportSection model{"Model", {}, {}, {}};
    model.paragraphs.push_back("Structure: " + m.structure +
                               ". Transfer function G(s) = " + ModelLine(m) + ".");
    if (m.details.contains("fit_percent"))
      model.paragraphs.push_back("Fit " + Text(m.details["fit_percent"]) +
                                 " % of the output variation explained; residual rms " +
                                 Text(m.details.value("residual_rms", json(nullptr))) + ".");
    ReportTable p{{"parameter", "value", "95 % interval", "unit"}, {}};
    for (const auto& q : m.parameters)
      p.rows.push_back({q.name, FormatNumber(q.value),
                        "[" + FormatNumber(q.ci_low) + ", " + FormatNumber(q.ci_high) + "]",
                        q.unit});
    model.tables.push_back(p);
    if (m.details.contains("warnings") && m.details["warnings"].is_array())
      for (const auto& w : m.details["warnings"]) model.paragraphs.push_back("Note: " + Text(w));
    sections_.push_back(model);
    model_index_ = sections_.size() - 1;
  }

  void AddBand(const json& doc) {
    ReportSection band{"Gain band", {}, {}, {}};
    if (doc.contains("controller"))
      band.paragraphs.push_back("Controller " + Text(doc["controller"]) + " around the plant " +
                                Text(doc.value("plant", json(nullptr))) + ".");
    if (doc.contains("specs")) band.paragraphs.push_back("Specs: " + SpecText(doc["specs"]) + ".");
    ReportTable t{{"band", "gains K"}, {}};
    const json& bands = doc.value("bands", json::object());
    for (const char* name : {"locus", "response", "robust"})
      if (bands.contains(name)) t.rows.push_back({name, RangesText(bands[name])});
    // With a sample time (band --sample-time): the sampled loop's locus and response bands.
    const json discrete = doc.value("discrete", json::object());
    const std::string every =
        discrete.contains("sample_time") ? ", every " + Text(discrete["sample_time"]) + " s" : "";
    if (bands.contains("discrete"))
      t.rows.push_back({"sampled locus" + every, RangesText(bands["discrete"])});
    if (bands.contains("sampled_response"))
      t.rows.push_back({"sampled response" + every, RangesText(bands["sampled_response"])});
    band.tables.push_back(t);
    if (doc.contains("differences") && doc["differences"].is_array())
      for (const auto& d : doc["differences"]) band.paragraphs.push_back("Note: " + Text(d));
    sections_.push_back(band);
    band_index_ = sections_.size() - 1;

    ReportSection gain{"Chosen gain", {}, {}, {}};
    const json rec = doc.value("recommendation", json::object());
    const json rule = rec.value("rule", json()), from = rec.value("from", json());
    const json gain_k = doc.value("recommended_gain", json());
    if (gain_k.is_null()) {
      // design/recommendation.h: an empty response band or a band of [0, inf) recommends no
      // gain, and the rule says why.
      gain.paragraphs.push_back("No recommended gain: " + Text(rule) + ".");
    } else {
      gain.paragraphs.push_back("Recommended gain K = " + Text(gain_k) + ".");
    }
    if (!from.is_null())
      gain.paragraphs.push_back(
          "Rule: " + Text(rule) + " (from the " + Text(from) +
          (Text(from).find(" and ") != std::string::npos ? " bands)." : " band)."));
    sections_.push_back(gain);
  }

  void AddPrediction(const json& doc) {
    ReportSection s{"Prediction at K = " + Text(doc["gain"]), {}, {}, {}};
    s.paragraphs.push_back(std::string("Closed loop ") +
                           (doc.value("stable", false) ? "stable" : "UNSTABLE") + "; reference " +
                           Text(doc.value("reference", json())) + ".");
    ReportTable t{{"quantity", "predicted"}, {}};
    const json& m = doc["metrics"];
    // A response without a peak: peak_time null and peak_note "no peak: ..." (predict.cc).
    const bool no_peak = m.contains("peak_note") && m["peak_note"].is_string();
    for (const auto& [key, label] : kMetricRows) {
      if (!m.contains(key)) continue;
      const bool peakless = no_peak && std::string(key) == "peak_time" && m[key].is_null();
      t.rows.push_back({label, peakless ? std::string("no peak") : Text(m[key])});
    }
    if (no_peak) {
      const std::string note = m["peak_note"].get<std::string>();
      const size_t colon = note.find(": ");
      s.paragraphs.push_back("Peak time: no peak; " +
                             (colon == std::string::npos ? note : note.substr(colon + 2)) + ".");
    }
    if (doc.contains("margins")) {
      const json& g = doc["margins"];
      t.rows.push_back({"gain margin (dB)", Text(g.value("gain_margin_db", json()))});
      t.rows.push_back({"phase margin (deg)", Text(g.value("phase_margin_deg", json()))});
      t.rows.push_back({"delay margin (s)", Text(g.value("delay_margin", json()))});
    }
    s.tables.push_back(t);
    if (doc.contains("actuator") && doc["actuator"].value("exceeded", false))
      s.paragraphs.push_back("Caution: the predicted actuator effort leaves its limits.");
    sections_.push_back(s);
    prediction_index_ = sections_.size() - 1;
  }

  void AddFigure(const std::string& path) {
    std::string svg = ReadWhole(path);
    if (svg.find("<svg") == std::string::npos) throw DataError(path + ": not an SVG figure");
    figures_.push_back({std::filesystem::path(path).filename().string(), svg});
  }

  ReportData Finish(const std::string& title) {
    ReportSection others{"Figures", {}, {}, {}};
    for (auto& f : figures_) {
      std::string n = f.caption;
      std::optional<size_t> target;
      if (n.find("fit") != std::string::npos) target = model_index_;
      if (n.find("locus") != std::string::npos || n.find("metric") != std::string::npos)
        target = band_index_;
      if (n.find("response") != std::string::npos || n.find("predict") != std::string::npos)
        target = prediction_index_;
      if (n.find("check") != std::string::npos && check_index_) target = check_index_;
      if (target && *target < sections_.size())
        sections_[*target].figures.push_back(f);
      else
        others.figures.push_back(f);
    }
    if (!others.figures.empty()) sections_.push_back(others);
    ReportData r;
    r.title = title;
    r.created = NowUtcIso8601();
    r.tool = std::string("loopwright ") + LOOPWRIGHT_VERSION;
    r.sections = sections_;
    if (verdict_) r.verdict = verdict_;
    return r;
  }

  // A saved check (`loopwright check --save`): the verdict box and a verification section with
  // every step's measured and predicted metrics and their tolerances.
  void AddVerdict(const json& doc) {
    verdict_ = ReportVerdict{doc.value("pass", false), Text(doc.value("sentence", json()))};
    if (!doc.contains("steps") || !doc["steps"].is_array()) return;
    ReportSection s{"Verification against a closed-loop recording", {}, {}, {}};
    s.paragraphs.push_back("Recording " + Text(doc.value("recording", json())) + ", controller " +
                           Text(doc.value("controller", json())) +
                           " at K = " + Text(doc.value("gain", json())) +
                           ". Verdict: " + Text(doc.value("verdict", json())) + " (" +
                           Text(doc.value("reason", json())) + ").");
    const json noise = doc.value("noise", json::object());
    s.paragraphs.push_back("Fit of the predicted output " + Text(doc.value("fit_percent", json())) +
                           " %; output noise sd " + Text(noise.value("output_sd", json())) +
                           "; tolerances from " + Text(doc.value("draws", json())) +
                           " parameter draws and " + Text(doc.value("noise_replicates", json())) +
                           " noise replicates.");
    for (const json& st : doc["steps"]) {
      ReportTable t{
          {"step " + Text(st.value("from", json())) + " → " + Text(st.value("to", json())) +
               " at " + Text(st.value("at", json())) + " s",
           "measured", "predicted", "tolerance", "consistent"},
          {}};
      const json none = json::object();
      const json& meas = st.contains("measured") ? st["measured"] : none;
      const json& pred = st.contains("predicted") ? st["predicted"] : none;
      const json& tol = st.contains("tolerance") ? st["tolerance"] : none;
      const json& ok = st.contains("consistent") ? st["consistent"] : none;
      // Why a metric is not judged: "no peak: the predicted overshoot ..." gives the cell
      // "no peak" and a sentence under the tables.
      const json& why =
          st.contains("not_judged") && st["not_judged"].is_object() ? st["not_judged"] : none;
      for (const auto& [key, label] : kMetricRows) {
        std::string range = "n/a";
        if (tol.contains(key) && tol[key].is_array() && tol[key].size() == 2)
          range = Text(tol[key][0]) + " to " + Text(tol[key][1]);
        const std::string reason =
            why.contains(key) && why[key].is_string() ? why[key].get<std::string>() : std::string();
        const size_t colon = reason.find(": ");
        std::string verdict = !ok.contains(key)            ? "n/a"
                              : !ok[key].is_null()         ? (ok[key].get<bool>() ? "yes" : "NO")
                              : colon != std::string::npos ? reason.substr(0, colon)
                                                           : "not judged";
        if (ok.contains(key) && ok[key].is_null() && colon != std::string::npos) {
          s.paragraphs.push_back(std::string(label) + ", step at " + Text(st.value("at", json())) +
                                 " s, not judged: " + reason.substr(colon + 2) + ".");
        }
        t.rows.push_back(
            {label, Text(meas.value(key, json())), Text(pred.value(key, json())), range, verdict});
      }
      s.tables.push_back(t);
    }
    sections_.push_back(s);
    check_index_ = sections_.size() - 1;
  }

 private:
  static std::string SpecText(const json& specs) {
    if (!specs.is_object()) return Text(specs);
    std::string out;
    for (auto it = specs.begin(); it != specs.end(); ++it) {
      if (it.value().is_null()) continue;
      if (!out.empty()) out += ", ";
      out += it.key() + " " + Text(it.value());
    }
    return out.empty() ? "none" : out;
  }

  std::vector<ReportSection> sections_;
  std::vector<ReportFigure> figures_;
  std::optional<size_t> model_index_, band_index_, prediction_index_, check_index_;
  std::optional<ReportVerdict> verdict_;
};

class ReportCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.add_option("files", files_, "Model, band and prediction JSON files and SVG figures");
    sub.add_option("--rig", rig_dir_, "Take every *.json and *.svg in this folder");
    sub.add_option("-o,--out", out_path_, "The HTML page to write")->required();
    sub.add_option("--title", title_, "Title of the page")->capture_default_str();
  }

  int Run(Context& ctx) override {
    std::vector<std::string> files = files_;
    if (!rig_dir_.empty()) {
      std::error_code ec;
      std::filesystem::directory_iterator it(rig_dir_, ec);
      if (ec) throw UsageError("--rig '" + rig_dir_ + "': " + ec.message());
      std::vector<std::string> found;
      for (const auto& e : it) {
        std::string ext = e.path().extension().string();
        if (e.is_regular_file() && (ext == ".json" || ext == ".svg")) found.push_back(e.path());
      }
      std::sort(found.begin(), found.end());
      files.insert(files.end(), found.begin(), found.end());
    }
    if (files.empty()) throw UsageError("report needs at least one file (or --rig DIR)");
    Builder b;
    // JSON files first (in the order given), so figures can join their sections.
    for (const auto& f : files) {
      if (std::filesystem::path(f).extension() == ".svg") continue;
      json doc;
      try {
        doc = json::parse(ReadWhole(f));
      } catch (const json::parse_error& e) {
        throw DataError(f + ": not valid JSON (" + e.what() + ")");
      }
      std::string format = doc.is_object() ? doc.value("format", std::string()) : "";
      if (format == "loopwright-model") {
        b.AddModel(f);
      } else if (format == "loopwright-band") {
        b.AddBand(doc);
      } else if (format == "loopwright-check") {
        b.AddVerdict(doc);
      } else if (doc.is_object() && doc.contains("gain") && doc.contains("metrics")) {
        b.AddPrediction(doc);
      } else {
        throw DataError(f + ": not a loopwright model, band, prediction or check file");
      }
    }
    for (const auto& f : files)
      if (std::filesystem::path(f).extension() == ".svg") b.AddFigure(f);
    WriteReport(out_path_, b.Finish(title_));
    ctx.out << "report: " << out_path_ << "\n";
    return 0;
  }

 private:
  std::vector<std::string> files_;
  std::string rig_dir_;
  std::string out_path_;
  std::string title_ = "Loop tuning report";
};

}  // namespace

std::unique_ptr<Command> MakeReportCommand() { return std::make_unique<ReportCommand>(); }

}  // namespace lw::app
