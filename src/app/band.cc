// `loopwright band (MODEL.json | --plant FORMULA) [--controller C] [specs...] [--pade N]
//                  [--sample-time T] [--draws N] [--seed N] [--json] [--save BAND.json]
//                  [--plot FIGURE.svg]`
//
// Every controller gain that meets the response specs: the exact locus band (dominant-pole
// region, design/gain_band.h), the simulated response band (exact dead time,
// design/response_band.h), the robust band over parameter draws when the model file carries a
// covariance (design/robust_band.h), optionally the band of the sampled loop, and the
// recommended gain (design/recommendation.h: always inside the response band; none, JSON null,
// when the response band is empty or the band is [0, inf)).
// Exit 1 with one sentence when no gain meets the specs. Robust draws come from
// identify/parameter_draws.h (app/model_draws.h). --save (alias -o,
// --out) writes the JSON document the report reads; --plot draws the locus and metrics figures
// (app/band_plot.h); a bad figure extension is refused before anything is computed.
#include <cmath>
#include <cstdio>
#include <memory>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/band_plot.h"
#include "app/command.h"
#include "app/controller_option.h"
#include "app/figure_path.h"
#include "app/model_draws.h"
#include "app/model_source.h"
#include "app/output.h"
#include "app/saved_document.h"
#include "app/spec_options.h"
#include "app/summary_table.h"
#include "design/discrete_band.h"
#include "design/gain_band.h"
#include "design/infeasibility.h"
#include "design/recommendation.h"
#include "design/response_band.h"
#include "design/robust_band.h"
#include "lti/error.h"

namespace lw::app {
namespace {

using nlohmann::json;

json RangesJson(const GainSet& set) {
  json a = json::array();
  for (const GainRange& r : set) a.push_back({JsonNumber(r.lo), JsonNumber(r.hi)});
  return a;
}

json PoleJson(std::complex<double> p) {
  if (!std::isfinite(p.real()) || !std::isfinite(p.imag())) return nullptr;
  return {p.real(), p.imag()};
}

json EdgeJson(const BandEdge& e) {
  json j = {{"gain", JsonNumber(e.gain)},
            {"boundary", BoundaryKey(e.boundary)},
            {"pole", PoleJson(e.pole)},
            {"dominant", PoleJson(e.dominant)}};
  if (std::isfinite(e.dominant.real())) {
    PoleShape s = ShapeOf(e.dominant);
    j["dominant_zeta"] = s.zeta;
    j["dominant_wn"] = s.wn;
  }
  return j;
}

json LocusEdgesJson(const LocusBand& band) {
  json a = json::array();
  for (const auto& iv : band.intervals)
    a.push_back({{"lo", EdgeJson(iv.lo)}, {"hi", EdgeJson(iv.hi)}});
  return a;
}

json ResponseEdgesJson(const ResponseBand& band) {
  json a = json::array();
  for (const auto& r : band.ranges) {
    a.push_back({{"lo", {{"gain", JsonNumber(r.lo.gain)}, {"limiting", r.lo.limiting}}},
                 {"hi", {{"gain", JsonNumber(r.hi.gain)}, {"limiting", r.hi.limiting}}}});
  }
  return a;
}

// One line per range of a response band: the range and what fails beyond each end.
void PrintResponseRanges(std::ostream& out, const ResponseBand& band, const std::string& indent) {
  for (const auto& r : band.ranges) {
    out << indent << ToString(GainSet{{r.lo.gain, r.hi.gain}}) << ": "
        << (r.lo.limiting.empty() ? "from K = 0" : r.lo.limiting + " fails below") << ", "
        << (r.hi.limiting.empty() ? "no upper limit" : r.hi.limiting + " fails above") << "\n";
  }
}

std::string EdgeText(const BandEdge& e) {
  if (e.boundary == Boundary::kGainZero) return "from K = 0";
  if (e.boundary == Boundary::kUnbounded) return "no upper limit";
  std::string s = BoundaryName(e.boundary);
  if (std::isfinite(e.pole.real())) s += " at s = " + PoleText(e.pole);
  if (std::isfinite(e.dominant.real())) {
    PoleShape d = ShapeOf(e.dominant);
    s += " (dominant zeta " + FormatNumber(d.zeta, 3) + ", wn " + FormatNumber(d.wn, 3) + ")";
  }
  return s;
}

bool SameWithin(const GainSet& x, const GainSet& y, double rel) {
  if (x.size() != y.size()) return false;
  auto close = [&](double a, double b) {
    if (std::isinf(a) || std::isinf(b)) return a == b;
    return std::abs(a - b) <= rel * std::max(std::abs(a), std::abs(b));
  };
  for (size_t i = 0; i < x.size(); ++i) {
    if (!close(x[i].lo, y[i].lo) || !close(x[i].hi, y[i].hi)) return false;
  }
  return true;
}

// Why the locus and response bands differ, one sentence per cause present in this loop.
std::vector<std::string> Differences(const TransferFunction& plant, const Controller& controller,
                                     const Specs& specs, const LoopPolynomials& loop,
                                     const LocusBand& locus, const ResponseBand& response) {
  std::vector<std::string> notes;
  if (SameWithin(locus.gains(), response.gains(), 0.02)) {
    notes.push_back("the locus and response bands agree within 2 %");
    return notes;
  }
  notes.push_back(
      "the bands differ: the region is exact only for a second-order loop, and this one is not");
  std::vector<std::string> zeros;
  for (const auto& z : (controller.Shape() * plant.Rational()).zeros()) {
    if (std::abs(z) < 1e6 && z.real() > -1e6 && z.imag() >= 0.0) zeros.push_back(PoleText(z));
  }
  if (!zeros.empty()) {
    std::string list;
    for (size_t i = 0; i < zeros.size(); ++i) list += (i ? ", " : "") + zeros[i];
    notes.push_back("the zeros of the controller and plant (s = " + list +
                    ") add overshoot and speed the rise, which the region ignores");
  }
  if (plant.delay() > 0.0) {
    notes.push_back("the locus sees the " + FormatQuantity(plant.delay(), "s") +
                    " dead time through Padé order " + std::to_string(loop.pade_order) +
                    ", the simulated response sees it exactly");
  }
  GainSet where = locus.empty() ? response.gains() : locus.gains();
  if (!where.empty()) {
    double k = GeometricMiddle(Widest(where));
    auto poles = loop.PolesAt(k);
    double dom = -JudgePoles(poles, Region{}).dominant.real();
    double next = INFINITY;
    for (const auto& p : poles) {
      if (-p.real() > dom * (1 + 1e-9)) next = std::min(next, -p.real());
    }
    if (dom > 0 && std::isfinite(next) && next < 3.0 * dom) {
      notes.push_back("at K = " + FormatNumber(k, 3) + " the next pole decays only " +
                      FormatNumber(next / dom, 2) +
                      " times faster than the dominant one, so the response is not second order");
    }
  }
  if (specs.rise_max || specs.wn_min) {
    notes.push_back("the rise-time bound wn >= 1.8/tr is a rule of thumb, exact at no zeta");
  }
  if (specs.settle_max) {
    notes.push_back(
        "the settling bound sigma >= 4/ts (or 4.6/ts) uses the decay envelope, "
        "which is conservative for the actual response");
  }
  return notes;
}

class BandCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.footer(
        "The loop is u = K C(s) (r - y) with K > 0. Three bands of K:\n"
        "  locus     the dominant closed-loop pole (the one nearest the imaginary axis) lies in\n"
        "            the s-plane region the specs ask (second-order relations; Padé dead time)\n"
        "  response  the simulated step (exact dead time) meets the specs themselves\n"
        "  robust    the region holds for 95 % of plants drawn from the fit's covariance\n"
        "The recommended gain is the geometric middle of the widest range of the first non-empty\n"
        "of: robust and response, locus and response, response (with --sample-time the sampled\n"
        "loop's response band in place of the response band: the step of the loop with its\n"
        "error sampled and held every T s). It always meets the specs in that simulated step;\n"
        "with an empty response band nothing is recommended (exit 0), and\n"
        "with neither a locus nor a response band the command exits 1 naming the spec no gain\n"
        "can meet. A plant with a negative gain (reverse acting) is refused with exit 1: every\n"
        "K > 0 would feed back positively; so is any loop in which no stable K > 0 makes y\n"
        "follow r (a controller zero in the right half-plane). An unstable plant such as\n"
        "1/(s-1) is designed although G(0) < 0: K > 1 stabilises it.");
    source_.Add(sub);
    controller_.Add(sub, /*gain_required=*/false, /*with_gain=*/false);
    specs_.Add(sub);
    sub.add_option("--sample-time", sample_time_,
                   "Also the band of the loop sampled with a zero-order hold every T s");
    sub.add_option("--draws", draws_, "Parameter draws for the robust band (>= 500)")
        ->capture_default_str();
    sub.add_option("--seed", seed_, "Seed of the parameter draws")->capture_default_str();
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
    sub.add_option("--save,-o,--out", out_path_,
                   "Also write the bands and specs to this JSON file (the report reads it)");
    sub.add_option("--plot", plot_path_,
                   "Draw the locus figure to FILE (.svg, .png, .pdf) and the gain sweep of the "
                   "step metrics beside it, to FILE with -metrics before the extension");
  }

  int Run(Context& ctx) override {
    if (!plot_path_.empty()) CheckFigurePath("--plot", plot_path_);
    if (!out_path_.empty() && out_path_ == plot_path_) {
      throw UsageError("--save and --plot name the same file '" + out_path_ + "'");
    }
    LoadedModel model = source_.Load();
    Controller controller = controller_.Parse();
    Specs specs = specs_.Get();
    const int pade = specs_.pade();
    if (draws_ < 500) {
      throw UsageError("--draws " + std::to_string(draws_) +
                       ": the robust band needs at least 500 parameter draws");
    }
    if (sample_time_ && !(std::isfinite(*sample_time_) && *sample_time_ > 0.0)) {
      throw UsageError("--sample-time " + FormatNumber(*sample_time_) +
                       ": the sample time must be a number > 0 (s)");
    }
    const TransferFunction& plant = model.tf;
    const Region region = specs.ToRegion();
    LoopPolynomials loop = LoopPolynomials::ForGain(plant, controller, pade);
    if (std::string why = PositiveFeedbackNote(loop, plant); !why.empty()) throw JobFailed(why);
    LocusBand locus = FindLocusBand(loop, region);
    ResponseBandOptions ro;
    ro.pade_order = pade;
    ResponseBand response = FindResponseBand(plant, controller, specs, ro);

    std::optional<GainSet> robust;
    std::string robust_note;
    int draws_used = 0;
    ModelDraws draws = DrawModelPlants(model, static_cast<size_t>(draws_), seed_);
    robust_note = draws.note;
    if (!draws.plants.empty()) {
      RobustBandOptions rbo;
      rbo.pade_order = pade;
      rbo.min_draws = 500;
      RobustBand rb = FindRobustBand(draws.plants, controller, region, rbo);
      robust = rb.gains;
      draws_used = rb.draws;
    }

    std::optional<DiscreteBand> discrete;
    std::optional<ResponseBand> sampled_response;
    if (sample_time_) {
      discrete = FindDiscreteBand(plant, controller, region, *sample_time_, locus.gains());
      ResponseBandOptions so = ro;
      so.sample_time = *sample_time_;
      sampled_response = FindResponseBand(plant, controller, specs, so);
    }

    if (locus.empty() && response.empty() && !(sampled_response && !sampled_response->empty())) {
      Infeasibility why = DiagnoseInfeasible(loop, region);
      throw JobFailed(why.sentence);
    }
    Recommendation rec = Recommend(
        locus.gains(), response.gains(), robust,
        sampled_response ? std::optional<GainSet>(sampled_response->gains()) : std::nullopt);

    json doc;
    doc["bands"] = {{"locus", RangesJson(locus.gains())},
                    {"response", RangesJson(response.gains())},
                    {"robust", robust ? RangesJson(*robust) : json(nullptr)}};
    if (discrete) {
      doc["bands"]["discrete"] = RangesJson(discrete->band.gains());
      doc["bands"]["sampled_response"] = RangesJson(sampled_response->gains());
    }
    doc["recommended_gain"] = rec.found ? JsonNumber(rec.gain) : json(nullptr);
    doc["recommendation"] = {{"from", rec.found ? json(rec.source) : json(nullptr)},
                             {"rule", rec.reason}};
    doc["region"] = RegionJson(region);
    doc["specs"] = SpecsJson(specs);
    doc["controller"] = controller.ToString();
    doc["plant"] = plant.ToString();
    doc["pade_order"] = loop.pade_order;
    doc["edges"] = {{"locus", LocusEdgesJson(locus)}, {"response", ResponseEdgesJson(response)}};
    if (robust) doc["robust_draws"] = draws_used;
    if (discrete) {
      doc["discrete"] = {{"sample_time", discrete->period},
                         {"edges", LocusEdgesJson(discrete->band)},
                         {"response_edges", ResponseEdgesJson(*sampled_response)},
                         {"shrink_percent", JsonNumber(discrete->shrink_percent)}};
    }
    std::vector<std::string> differences =
        Differences(plant, controller, specs, loop, locus, response);
    doc["differences"] = differences;
    std::vector<std::string> figures;
    if (!plot_path_.empty()) {
      BandPlotInput in{plant,
                       controller,
                       specs,
                       region,
                       loop,
                       locus,
                       response,
                       robust,
                       rec,
                       ro,
                       "Gain band of " + controller.ToString() + " around " + plant.ToString()};
      figures = WriteBandFigures(plot_path_, in);
      doc["figures"] = {{"locus", figures[0]}, {"metrics", figures[1]}};
    }
    if (!out_path_.empty())
      SaveDocument(out_path_, doc, "loopwright-band", model.description, ctx.command_line);
    if (json_) {
      PrintJson(ctx, doc);
      return 0;
    }
    std::ostream& out = ctx.out;
    out << Bold(ctx, "band") << " for " << model.description << ", controller "
        << controller.ToString() << "\n";
    out << "  specs: " << specs.ToString() << "\n";
    out << "  region for the dominant pole (the one nearest the imaginary axis): "
        << region.ToString() << "\n";
    if (specs.rise_max || specs.wn_min) {
      out << "    (rise time through tr ~ 1.8/wn, a rule of thumb for 0.3 <= zeta <= 0.8)\n";
    }
    if (plant.delay() > 0.0) {
      out << "  dead time " << FormatQuantity(plant.delay(), "s") << ": Padé order "
          << loop.pade_order << " in the locus; exact in the simulated response\n";
    }
    out << "\n"
        << Bold(ctx, "locus band") << " (dominant poles in the region): " << ToString(locus.gains())
        << "\n";
    for (const auto& iv : locus.intervals) {
      out << "  " << ToString(GainSet{{iv.lo.gain, iv.hi.gain}}) << "\n"
          << "    low edge:  " << EdgeText(iv.lo) << "\n"
          << "    high edge: " << EdgeText(iv.hi) << "\n";
    }
    out << Bold(ctx, "response band")
        << " (simulated step meets the specs): " << ToString(response.gains()) << "\n";
    PrintResponseRanges(out, response, "  ");
    if (robust) {
      out << Bold(ctx, "robust band") << " (95 % of " << draws_used
          << " parameter draws meet the region): " << ToString(*robust) << "\n";
    } else {
      out << Bold(ctx, "robust band") << ": none (" << robust_note << ")\n";
    }
    if (robust && !robust_note.empty()) out << "  (" << robust_note << ")\n";
    if (discrete) {
      out << Bold(ctx, "sampled loop") << " (error sampled and held every "
          << FormatQuantity(discrete->period, "s") << "):\n"
          << "  locus band (dominant poles in the region): " << ToString(discrete->band.gains());
      if (std::isfinite(discrete->shrink_percent)) {
        out << ", " << FormatNumber(discrete->shrink_percent, 3)
            << " % narrower than the continuous one";
      }
      out << "\n  response band (its simulated step meets the specs): "
          << ToString(sampled_response->gains()) << "\n";
      PrintResponseRanges(out, *sampled_response, "    ");
    }
    if (locus.empty()) {
      out << Caution(ctx, "no gain puts the dominant poles in the region: ")
          << DiagnoseInfeasible(loop, region).sentence << "\n";
    }
    for (const std::string& d : differences) out << "  note: " << d << "\n";
    out << "\n";
    SummaryTable table({"band", "gains K", "verdict"});
    table.AddRow({"locus", ToString(locus.gains()), Verdict(!locus.empty(), "found", "none")});
    table.AddRow(
        {"response", ToString(response.gains()), Verdict(!response.empty(), "found", "none")});
    if (robust) {
      table.AddRow({"robust", ToString(*robust), Verdict(!robust->empty(), "found", "none")});
    } else {
      table.AddRow({"robust", "n/a", SummaryCell("no draws", CellMark::kCaution)});
    }
    if (discrete) {
      table.AddRow({"sampled locus", ToString(discrete->band.gains()),
                    Verdict(!discrete->band.empty(), "found", "none")});
      table.AddRow({"sampled response", ToString(sampled_response->gains()),
                    Verdict(!sampled_response->empty(), "found", "none")});
    }
    if (rec.found) {
      table.AddRow({"recommended", "K = " + FormatNumber(rec.gain, 4),
                    SummaryCell(rec.source, CellMark::kOk)});
    } else {
      table.AddRow({"recommended", "none",
                    SummaryCell(rec.unbounded ? "unbounded" : "specs unmet", CellMark::kCaution)});
    }
    table.Print(ctx);
    out << "\n";
    if (rec.found) {
      out << Good(ctx, "recommended gain K = " + FormatNumber(rec.gain, 4)) << ": " << rec.reason
          << "\n";
    } else {
      out << Caution(ctx, "no recommended gain") << ": " << rec.reason;
      if (rec.unbounded) {
        out << "; a spec that limits the gain (--overshoot-max, --zeta-min, --rise-max, "
               "--settle-max) gives one\n";
      } else {
        out << "; " << (sample_time_ ? "sample faster, relax a spec," : "relax a spec,")
            << " or choose a gain knowing that its simulated step misses the specs (predict "
               "shows by how much)\n";
      }
    }
    for (const std::string& f : figures) out << "figure: " << f << "\n";
    if (!out_path_.empty()) out << "band file: " << out_path_ << "\n";
    return 0;
  }

 private:
  ModelSource source_;
  ControllerOption controller_;
  SpecOptions specs_;
  std::optional<double> sample_time_;
  int draws_ = 500;
  unsigned seed_ = 1;
  bool json_ = false;
  std::string out_path_;
  std::string plot_path_;
};

}  // namespace

std::unique_ptr<Command> MakeBandCommand() { return std::make_unique<BandCommand>(); }

}  // namespace lw::app
