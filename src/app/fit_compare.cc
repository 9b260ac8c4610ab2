#include "app/fit_compare.h"

#include <cerrno>
#include <cmath>
#include <cstring>
#include <fstream>
#include <sstream>

#include "app/output.h"
#include "app/spec_options.h"
#include "app/summary_table.h"
#include "design/gain_band.h"
#include "design/infeasibility.h"
#include "design/loop_polynomials.h"
#include "design/response_band.h"
#include "design/robust_band.h"
#include "identify/parameter_draws.h"
#include "lti/error.h"

namespace lw::app {
namespace {

using nlohmann::json;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

[[noreturn]] void BadField(const std::string& path, const std::string& field,
                           const std::string& rule) {
  throw DataError(path + ": field '" + field + "' " + rule);
}

std::optional<double> OptionalNumber(const json& obj, const std::string& key,
                                     const std::string& path) {
  if (!obj.contains(key) || obj[key].is_null()) return std::nullopt;
  if (!obj[key].is_number()) BadField(path, "specs." + key, "must be a number or null");
  return obj[key].get<double>();
}

// [[lo, hi], ...] with hi null for an open end (JSON has no infinity).
GainSet ReadRanges(const json& a, const std::string& path, const std::string& field) {
  if (!a.is_array()) BadField(path, field, "must be an array of [lo, hi] pairs");
  GainSet set;
  for (const json& r : a) {
    if (!r.is_array() || r.size() != 2 || !r[0].is_number() ||
        !(r[1].is_number() || r[1].is_null())) {
      BadField(path, field, "must be an array of [lo, hi] pairs (hi null for no upper end)");
    }
    set.push_back({r[0].get<double>(), r[1].is_null() ? INFINITY : r[1].get<double>()});
  }
  return set;
}

json RangesJson(const GainSet& set) {
  json a = json::array();
  for (const GainRange& r : set) a.push_back({JsonNumber(r.lo), JsonNumber(r.hi)});
  return a;
}

json EstimateJson(const EstimateSummary& e) {
  return {{"value", JsonNumber(e.value)},
          {"ci95", {JsonNumber(e.ci_low), JsonNumber(e.ci_high)}},
          {"se", JsonNumber(e.se)}};
}

}  // namespace

BandFile ReadBandFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw DataError("cannot read the band file '" + path + "': " + std::strerror(errno));
  std::stringstream buf;
  buf << in.rdbuf();
  json doc;
  try {
    doc = json::parse(buf.str());
  } catch (const json::parse_error& e) {
    throw DataError(path + ": not valid JSON (" + e.what() + ")");
  }
  if (!doc.is_object() || !doc.contains("format") || doc["format"] != "loopwright-band") {
    throw DataError(path +
                    ": not a loopwright band file (expected \"format\": \"loopwright-band\"; "
                    "write one with `loopwright band ... -o BAND.json`)");
  }
  BandFile b;
  b.path = path;
  if (!doc.contains("specs") || !doc["specs"].is_object())
    BadField(path, "specs", "must be an object");
  const json& s = doc["specs"];
  b.specs.rise_max = OptionalNumber(s, "rise_max", path);
  b.specs.overshoot_max = OptionalNumber(s, "overshoot_max", path);
  b.specs.zeta_min = OptionalNumber(s, "zeta_min", path);
  b.specs.settle_max = OptionalNumber(s, "settle_max", path);
  b.specs.peak_max = OptionalNumber(s, "peak_max", path);
  b.specs.wn_min = OptionalNumber(s, "wn_min", path);
  if (auto v = OptionalNumber(s, "settle_band", path)) b.specs.settle_band = *v;
  if (auto v = OptionalNumber(s, "decay_min", path)) b.specs.decay_min = *v;
  try {
    b.specs.Validate();
  } catch (const UsageError& e) {
    throw DataError(path + ": specs: " + e.what());
  }
  if (!doc.contains("controller") || !doc["controller"].is_string()) {
    BadField(path, "controller", "must be a controller text such as \"pi:0.004\"");
  }
  try {
    b.controller = Controller::Parse(doc["controller"].get<std::string>());
  } catch (const UsageError& e) {
    throw DataError(path + ": " + e.what());
  }
  if (doc.contains("pade_order")) {
    if (!doc["pade_order"].is_number_integer() || doc["pade_order"] < 1 || doc["pade_order"] > 8) {
      BadField(path, "pade_order", "must be an integer 1 to 8");
    }
    b.pade_order = doc["pade_order"].get<int>();
  }
  if (!doc.contains("recommended_gain") || !doc["recommended_gain"].is_number() ||
      !(doc["recommended_gain"].get<double>() > 0.0)) {
    BadField(path, "recommended_gain", "must be a number > 0");
  }
  b.recommended_gain = doc["recommended_gain"].get<double>();
  if (!doc.contains("bands") || !doc["bands"].is_object())
    BadField(path, "bands", "must be an object");
  const json& bands = doc["bands"];
  b.locus = ReadRanges(bands.value("locus", json::array()), path, "bands.locus");
  b.response = ReadRanges(bands.value("response", json::array()), path, "bands.response");
  if (bands.contains("robust") && !bands["robust"].is_null()) {
    b.robust = ReadRanges(bands["robust"], path, "bands.robust");
  }
  if (doc.contains("discrete")) {
    const json& d = doc["discrete"];
    if (!d.is_object() || !d.contains("sample_time") || !d["sample_time"].is_number() ||
        !(d["sample_time"].get<double>() > 0.0)) {
      BadField(path, "discrete.sample_time", "must be a number > 0 (seconds)");
    }
    b.sample_time = d["sample_time"].get<double>();
  }
  return b;
}

BandRecheck RecheckBand(const BandFile& band, const FitResult& fresh,
                        std::optional<double> gain_in_use) {
  BandRecheck rc;
  rc.old = band;
  const Region region = band.specs.ToRegion();
  LoopPolynomials loop = LoopPolynomials::ForGain(fresh.tf, band.controller, band.pade_order);
  rc.gain_in_use = gain_in_use ? *gain_in_use : band.recommended_gain;
  rc.gain_source = gain_in_use ? "--gain" : "the old band's recommended gain";
  rc.infeasible = PositiveFeedbackNote(loop, fresh.tf);
  if (!rc.infeasible.empty()) return rc;  // no bands: every K > 0 is positive feedback now
  rc.locus = FindLocusBand(loop, region).gains();
  ResponseBandOptions ro;
  ro.pade_order = band.pade_order;
  rc.response = FindResponseBand(fresh.tf, band.controller, band.specs, ro).gains();
  if (fresh.covariance_ok && fresh.covariance.size() > 0) {
    try {
      ParameterDraws draws =
          DrawParameters(fresh.structure, fresh.values, fresh.covariance, 500, /*seed=*/1);
      RobustBandOptions rbo;
      rbo.pade_order = band.pade_order;
      rc.robust = FindRobustBand(draws.plants, band.controller, region, rbo).gains;
    } catch (const UsageError& e) {
      rc.robust_note = std::string("no robust band: ") + e.what();
    }
  } else {
    rc.robust_note = "the new fit has no covariance, so there is no robust band";
  }
  if (rc.locus.empty() && rc.response.empty()) {
    rc.infeasible = DiagnoseInfeasible(loop, region).sentence;
  }
  std::optional<GainSet> sampled;
  if (band.sample_time) {
    // The band command's rule: the sampled loop's response band in the response band's place.
    ResponseBandOptions so = ro;
    so.sample_time = *band.sample_time;
    sampled = FindResponseBand(fresh.tf, band.controller, band.specs, so).gains();
  }
  rc.recommendation = Recommend(rc.locus, rc.response, rc.robust, sampled);
  rc.inside_locus = Contains(rc.locus, rc.gain_in_use);
  rc.inside_response = Contains(rc.response, rc.gain_in_use);
  if (rc.robust) rc.inside_robust = Contains(*rc.robust, rc.gain_in_use);
  rc.still_inside = Contains(rc.recommendation.set, rc.gain_in_use);
  return rc;
}

std::vector<EstimateSummary> OldEstimates(const ModelDocument& old) {
  std::vector<EstimateSummary> out;
  const Eigen::Index m = static_cast<Eigen::Index>(old.parameters.size());
  const bool cov = old.covariance.rows() == m && old.covariance.cols() == m && m > 0;
  for (Eigen::Index i = 0; i < m; ++i) {
    const ModelParameter& p = old.parameters[static_cast<size_t>(i)];
    EstimateSummary e{p.name, p.unit, p.value, kNaN, p.ci_low, p.ci_high};
    e.se = cov && old.covariance(i, i) >= 0.0 ? std::sqrt(old.covariance(i, i))
                                              : StandardErrorFromInterval(p.ci_low, p.ci_high);
    out.push_back(e);
  }
  return out;
}

std::vector<EstimateSummary> NewEstimates(const FitResult& fresh) {
  std::vector<EstimateSummary> out;
  for (const ParameterEstimate& p : fresh.parameters) {
    out.push_back({p.name, p.unit, p.value, p.sd, p.ci_low, p.ci_high});
  }
  return out;
}

ModelComparison CompareWithOld(const std::string& old_path, const ModelDocument& old,
                               const FitResult& fresh) {
  ModelComparison c;
  c.old_path = old_path;
  c.old_structure = old.structure;
  c.new_structure = std::string(StructureName(fresh.structure));
  c.changes = CompareEstimates(OldEstimates(old), NewEstimates(fresh), c.only_old, c.only_new);
  return c;
}

json ComparisonJson(const ModelComparison& c) {
  json doc;
  doc["old_model"] = c.old_path;
  doc["old_structure"] = c.old_structure;
  doc["new_structure"] = c.new_structure;
  doc["rule"] = "significant when |z| > 1.96, z = (new - old) / sqrt(se_old^2 + se_new^2)";
  doc["parameters"] = json::array();
  for (const ParameterChange& p : c.changes) {
    doc["parameters"].push_back(
        {{"name", p.name},
         {"unit", p.unit},
         {"old", EstimateJson(p.before)},
         {"new", EstimateJson(p.after)},
         {"change", JsonNumber(p.change)},
         {"change_percent", JsonNumber(p.change_percent)},
         {"z", JsonNumber(p.z)},
         {"significant", p.significant ? json(*p.significant) : json(nullptr)}});
  }
  doc["only_old"] = c.only_old;
  doc["only_new"] = c.only_new;
  if (!c.band) {
    doc["band"] = nullptr;
    return doc;
  }
  const BandRecheck& b = *c.band;
  json band;
  band["file"] = b.old.path;
  band["controller"] = b.old.controller.ToString();
  band["specs"] = SpecsJson(b.old.specs);
  band["old"] = {{"locus", RangesJson(b.old.locus)},
                 {"response", RangesJson(b.old.response)},
                 {"robust", b.old.robust ? RangesJson(*b.old.robust) : json(nullptr)},
                 {"recommended_gain", JsonNumber(b.old.recommended_gain)}};
  band["new"] = {{"locus", RangesJson(b.locus)},
                 {"response", RangesJson(b.response)},
                 {"robust", b.robust ? RangesJson(*b.robust) : json(nullptr)},
                 {"recommended_gain",
                  b.recommendation.found ? JsonNumber(b.recommendation.gain) : json(nullptr)},
                 {"rule", b.recommendation.reason}};
  band["gain_in_use"] = JsonNumber(b.gain_in_use);
  band["gain_source"] = b.gain_source;
  band["inside"] = {{"locus", b.inside_locus},
                    {"response", b.inside_response},
                    {"robust", b.inside_robust ? json(*b.inside_robust) : json(nullptr)}};
  band["still_inside"] = b.still_inside;
  band["judged_on"] = b.recommendation.set_name;
  band["infeasible"] = b.infeasible.empty() ? json(nullptr) : json(b.infeasible);
  if (!b.robust_note.empty()) band["robust_note"] = b.robust_note;
  doc["band"] = band;
  return doc;
}

void PrintComparison(const Context& ctx, const ModelComparison& c) {
  std::ostream& out = ctx.out;
  out << "\n"
      << Bold(ctx, "compared with") << " " << c.old_path << " (" << c.old_structure << " -> "
      << c.new_structure << "; significant when |z| > 1.96)\n";
  SummaryTable t({"parameter", "old", "old 95 %", "new", "new 95 %", "change", "z", "verdict"});
  std::vector<std::string> notes;
  for (const ParameterChange& p : c.changes) {
    std::string change = FormatNumber(p.change, 3);
    if (std::isfinite(p.change_percent)) change += " (" + FormatNumber(p.change_percent, 2) + " %)";
    SummaryCell verdict = p.significant
                              ? (*p.significant ? SummaryCell("changed", CellMark::kCaution)
                                                : SummaryCell("within uncertainty", CellMark::kOk))
                              : SummaryCell("unknown (no interval)");
    const ParameterText before =
        FormatParameter(p.name, p.before.value, p.before.ci_low, p.before.ci_high);
    const ParameterText after =
        FormatParameter(p.name, p.after.value, p.after.ci_low, p.after.ci_high);
    if (!before.note.empty()) notes.push_back("old " + p.name + ": " + before.note);
    if (!after.note.empty()) notes.push_back("new " + p.name + ": " + after.note);
    t.AddRow({p.name + (p.unit.empty() || p.unit == "-" ? "" : " [" + p.unit + "]"), before.value,
              before.interval, after.value, after.interval, change, FormatNumber(p.z, 3), verdict});
  }
  t.Print(ctx);
  PrintCutNotes(out, notes);
  if (!c.only_old.empty() || !c.only_new.empty()) {
    std::string o, n;
    for (const auto& s : c.only_old) o += (o.empty() ? "" : ", ") + s;
    for (const auto& s : c.only_new) n += (n.empty() ? "" : ", ") + s;
    out << "  not compared (different structures): " << (o.empty() ? "-" : o) << " (old only), "
        << (n.empty() ? "-" : n) << " (new only)\n";
  }
  if (!c.band) return;
  const BandRecheck& b = *c.band;
  out << "\n"
      << Bold(ctx, "band again") << " on the new model: " << b.old.path << ", controller "
      << b.old.controller.ToString() << ", specs " << b.old.specs.ToString() << "\n";
  SummaryTable bt({"band", "old", "new", "K in use"});
  auto inside = [](bool in) { return Verdict(in, "inside", "outside"); };
  bt.AddRow({"locus", ToString(b.old.locus), ToString(b.locus), inside(b.inside_locus)});
  bt.AddRow(
      {"response", ToString(b.old.response), ToString(b.response), inside(b.inside_response)});
  bt.AddRow({"robust", b.old.robust ? ToString(*b.old.robust) : "none",
             b.robust ? ToString(*b.robust) : "none",
             b.inside_robust ? inside(*b.inside_robust) : SummaryCell("n/a")});
  bt.Print(ctx);
  if (!b.robust_note.empty()) out << "  (" << b.robust_note << ")\n";
  if (!b.infeasible.empty())
    out << "  " << Bad(ctx, "no gain meets the specs now: ") << b.infeasible << "\n";
  const std::string k = "K = " + FormatNumber(b.gain_in_use, 4) + " (" + b.gain_source + ")";
  if (b.still_inside) {
    out << "  " << Good(ctx, k + " is still inside") << " the new " << b.recommendation.set_name
        << " band\n";
  } else {
    out << "  " << Bad(ctx, k + " is no longer inside") << " the new "
        << (b.recommendation.set_name == "none" ? "bands" : b.recommendation.set_name + " band")
        << "\n";
  }
  if (b.recommendation.found) {
    out << "  new recommended gain K = " << FormatNumber(b.recommendation.gain, 4) << " (was "
        << FormatNumber(b.old.recommended_gain, 4) << "): " << b.recommendation.reason << "\n";
  }
}

}  // namespace lw::app
