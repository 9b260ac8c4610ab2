// `loopwright drift [--structure NAME] [--plot FIG.svg|png|pdf] [--json]`
//
// Each fitted parameter of the rig across the fits in its logbook (app/workspace.h), with its
// 95 % interval, and every change from one fit to the next tested against the two fits'
// uncertainties (identify/parameter_change.h: two-sample z test at the 5 % level): a change
// with |z| > 1.96 is flagged "changed" (as fit --compare says it). Only fits that succeeded
// (outcome "ok") of one structure are compared, by default the structure of the latest fit;
// parameters of another structure mean other things. Exit status 0 whether or not something
// drifted; 1 when the logbook holds no such fit.
#include <cmath>
#include <filesystem>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/output.h"
#include "app/workspace.h"
#include "identify/parameter_change.h"
#include "io/drift_figure.h"
#include "io/figure.h"
#include "io/logbook.h"
#include "lti/error.h"

namespace lw::app {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

// One parameter across the fits: its estimate in each (NaN where a fit lacks it) and the change
// from the fit before.
struct Track {
  std::string name, unit;
  std::vector<EstimateSummary> estimates;
  std::vector<std::optional<ParameterChange>> changes;  // [0] always empty
};

std::string RecordingNames(const LoggedResult& r) {
  std::string names;
  for (const auto& rec : r.recordings) {
    names += (names.empty() ? "" : ", ") + fs::path(rec.path).filename().string();
  }
  return names.empty() ? "-" : names;
}

class DriftCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.add_option("--structure", structure_,
                   "Compare fits of this structure (default: that of the latest fit)");
    sub.add_option("--plot", plot_, "Draw each parameter across the fits (.svg, .png or .pdf)")
        ->type_name("FIG");
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
  }

  int Run(Context& ctx) override {
    if (!plot_.empty()) FigureFormatOf(plot_);  // a bad extension is a usage error up front
    std::string workspace;
    Logbook book = OpenWorkspaceLogbook(ctx, &workspace);
    const std::string rig = RequireRigProfile(ctx).name;
    std::vector<LoggedResult> all = book.Results("fit");
    std::vector<LoggedResult> fits;
    std::string structure = structure_;
    for (auto it = all.rbegin(); it != all.rend() && structure.empty(); ++it) {
      if (it->outcome == "ok" && !it->parameters.empty()) structure = it->parameters[0].structure;
    }
    int other = 0;
    for (auto& r : all) {
      if (r.outcome != "ok" || r.parameters.empty()) continue;
      if (r.parameters[0].structure == structure) {
        fits.push_back(std::move(r));
      } else {
        ++other;
      }
    }
    if (fits.empty()) {
      throw JobFailed(structure_.empty()
                          ? "the logbook " + book.path() + " holds no successful fit yet"
                          : "the logbook " + book.path() +
                                " holds no successful fit of structure '" + structure_ + "'");
    }
    std::vector<Track> tracks = Tracks(fits);
    int flagged = 0;
    for (const auto& t : tracks) {
      for (const auto& c : t.changes) flagged += c && c->significant.value_or(false);
    }
    if (!plot_.empty()) Plot(fits, tracks, rig + ", " + structure);
    if (json_) {
      json doc = Json(workspace, structure, fits, tracks, flagged, other);
      doc["rig"] = rig;
      PrintJson(ctx, doc);
    } else {
      ctx.out << "rig " << Bold(ctx, rig) << ": ";
      PrintHuman(ctx, structure, fits, tracks, flagged, other);
    }
    return 0;
  }

 private:
  static std::vector<Track> Tracks(const std::vector<LoggedResult>& fits) {
    std::vector<Track> tracks;
    for (const auto& p : fits.back().parameters) tracks.push_back({p.name, p.unit, {}, {}});
    for (const auto& f : fits) {
      for (auto& t : tracks) {
        EstimateSummary e;
        e.name = t.name;
        e.unit = t.unit;
        e.value = std::nan("");
        for (const auto& p : f.parameters) {
          if (p.name != t.name) continue;
          e.value = p.value;
          e.ci_low = p.ci_low;
          e.ci_high = p.ci_high;
          e.se = StandardErrorFromInterval(p.ci_low, p.ci_high);
        }
        if (t.estimates.empty() || !std::isfinite(e.value) ||
            !std::isfinite(t.estimates.back().value)) {
          t.changes.emplace_back();
        } else {
          t.changes.push_back(CompareEstimate(t.estimates.back(), e));
        }
        t.estimates.push_back(e);
      }
    }
    return tracks;
  }

  static json Json(const std::string& workspace, const std::string& structure,
                   const std::vector<LoggedResult>& fits, const std::vector<Track>& tracks,
                   int flagged, int other) {
    json doc = {{"workspace", workspace},
                {"structure", structure},
                {"significance_z", kSignificanceZ},
                {"significant_changes", flagged},
                {"fits_of_other_structures", other},
                {"fits", json::array()},
                {"parameters", json::array()}};
    for (const auto& f : fits) {
      json recs = json::array();
      for (const auto& rec : f.recordings)
        recs.push_back({{"path", rec.path}, {"sha256", rec.sha256}});
      doc["fits"].push_back({{"id", f.id}, {"time", f.time}, {"recordings", recs}});
    }
    for (const auto& t : tracks) {
      json points = json::array();
      for (size_t i = 0; i < t.estimates.size(); ++i) {
        const EstimateSummary& e = t.estimates[i];
        json point = {{"fit_id", fits[i].id},
                      {"value", JsonNumber(e.value)},
                      {"ci95", {JsonNumber(e.ci_low), JsonNumber(e.ci_high)}},
                      {"se", JsonNumber(e.se)}};
        if (const auto& c = t.changes[i]) {
          point["change"] = JsonNumber(c->change);
          point["change_percent"] = JsonNumber(c->change_percent);
          point["z"] = JsonNumber(c->z);
          point["significant"] = c->significant ? json(*c->significant) : json(nullptr);
        }
        points.push_back(std::move(point));
      }
      doc["parameters"].push_back({{"name", t.name}, {"unit", t.unit}, {"fits", points}});
    }
    return doc;
  }

  static void PrintHuman(Context& ctx, const std::string& structure,
                         const std::vector<LoggedResult>& fits, const std::vector<Track>& tracks,
                         int flagged, int other) {
    ctx.out << Bold(ctx, structure) << " parameters across " << fits.size() << " fit"
            << (fits.size() == 1 ? "" : "s");
    if (other > 0)
      ctx.out << " (" << other << " fit" << (other == 1 ? "" : "s")
              << " of other structures left out)";
    ctx.out << "\n";
    TextTable which({"fit", "time (UTC)", "recording"});
    for (size_t i = 0; i < fits.size(); ++i) {
      which.AddRow({std::to_string(i + 1), fits[i].time, RecordingNames(fits[i])});
    }
    which.Print(ctx.out);
    for (const auto& t : tracks) {
      ctx.out << Bold(ctx, t.name) << (t.unit.empty() ? "" : " (" + t.unit + ")") << "\n";
      TextTable table({"fit", "value", "95 % interval", "change", "z", "verdict"});
      std::vector<std::string> notes;
      for (size_t i = 0; i < t.estimates.size(); ++i) {
        const EstimateSummary& e = t.estimates[i];
        const ParameterText text = FormatParameter(t.name, e.value, e.ci_low, e.ci_high);
        if (!text.note.empty()) notes.push_back("fit " + std::to_string(i + 1) + ": " + text.note);
        std::vector<std::string> row = {std::to_string(i + 1), text.value, text.interval};
        if (const auto& c = t.changes[i]) {
          std::string change = (c->change >= 0 ? "+" : "") + FormatNumber(c->change);
          if (std::isfinite(c->change_percent)) {
            change += " (" + std::string(c->change_percent >= 0 ? "+" : "") +
                      FormatNumber(c->change_percent, 3) + " %)";
          }
          std::string verdict = !c->significant   ? "unknown (no interval)"
                                : *c->significant ? Bad(ctx, "changed")
                                                  : "within uncertainty";
          row.insert(row.end(), {change, FormatNumber(c->z, 3), verdict});
        }
        table.AddRow(row);
      }
      table.Print(ctx.out);
      PrintCutNotes(ctx.out, notes);
    }
    ctx.out << (flagged == 0 ? Good(ctx, "no significant change")
                             : Caution(ctx, std::to_string(flagged) + " significant change" +
                                                (flagged == 1 ? "" : "s")))
            << " (|z| > " << FormatNumber(kSignificanceZ, 3)
            << ", two-sample z test at the 5 % level between consecutive fits)\n";
  }

  void Plot(const std::vector<LoggedResult>& fits, const std::vector<Track>& tracks,
            const std::string& what) const {
    DriftFigureData d;
    d.title = what;
    d.fits = static_cast<int>(fits.size());
    for (size_t k = 0; k < tracks.size() && k < 6; ++k) {
      const Track& t = tracks[k];
      DriftSeries s;
      s.name = t.name;
      s.unit = t.unit;
      for (size_t i = 0; i < t.estimates.size(); ++i) {
        s.value.push_back(t.estimates[i].value);
        s.ci_low.push_back(t.estimates[i].ci_low);
        s.ci_high.push_back(t.estimates[i].ci_high);
        s.significant.push_back(t.changes[i] && t.changes[i]->significant.value_or(false));
      }
      d.series.push_back(std::move(s));
    }
    // Which recording each fit came from, as many as fit on 4 caption lines.
    std::string line;
    for (size_t i = 0; i < fits.size(); ++i) {
      std::string piece =
          std::to_string(i + 1) + ": " + RecordingNames(fits[i]) + " (" + fits[i].time + ")";
      if (!line.empty() && line.size() + piece.size() > 110) {
        if (d.caption.size() == 3) {
          line += "; ...";
          break;
        }
        d.caption.push_back(line);
        line.clear();
      }
      line += (line.empty() ? "" : ";  ") + piece;
    }
    if (!line.empty()) d.caption.push_back(line);
    WriteDriftFigure(plot_, d);
  }

  std::string structure_;
  std::string plot_;
  bool json_ = false;
};

}  // namespace

std::unique_ptr<Command> MakeDriftCommand() { return std::make_unique<DriftCommand>(); }

}  // namespace lw::app
