#include "io/metrics_figure.h"

#include <cmath>

#include "io/figure.h"
#include "lti/error.h"

namespace lw {

void WriteMetricsFigure(const std::string& path, const MetricsFigureData& d) {
  const size_t n = d.gains.size();
  if (n < 2) throw UsageError("metrics figure '" + path + "': needs at least 2 gains");
  if (d.rise_time.size() != n || d.overshoot_percent.size() != n || d.settling_time.size() != n)
    throw UsageError("metrics figure '" + path + "': gains and metrics differ in length");
  for (double k : d.gains)
    if (!(k > 0) || !std::isfinite(k))
      throw UsageError("metrics figure '" + path + "': gains must be finite and > 0");
  if (d.caption.size() > 3)
    throw UsageError("metrics figure '" + path + "': at most 3 caption lines");

  Figure fig(path, 900, 820, {1.0, 1.0, 1.0}, static_cast<int>(d.caption.size()));
  const double k_lo = d.gains.front(), k_hi = d.gains.back();
  struct PanelSpec {
    const char* label;
    const char* title;
    const std::vector<double>* values;
    double limit;
  };
  const PanelSpec panels[3] = {
      {"rise time (s)", "Rise time", &d.rise_time, d.rise_limit},
      {"overshoot (%)", "Overshoot", &d.overshoot_percent, d.overshoot_limit},
      {"settling time (s)", "Settling time", &d.settling_time, d.settling_limit},
  };
  for (int p = 0; p < 3; ++p) {
    const PanelSpec& ps = panels[p];
    std::vector<double> with_limit = *ps.values;
    if (std::isfinite(ps.limit)) with_limit.push_back(ps.limit);
    with_limit.push_back(0.0);
    DataRange r = RangeOf({with_limit}, 0.08);
    Axis x{p == 2 ? "controller gain K (log scale)" : "", k_lo, k_hi, true};
    std::string title = p == 0 && !d.title.empty() ? d.title + ": " + ps.title : ps.title;
    fig.BeginPanel(p, x, {ps.label, std::min(r.lo, 0.0), r.hi}, title);
    for (const auto& [lo, hi] : d.locus_band) fig.VerticalSpan(lo, hi, Ink::kRegion, 0.22);
    for (const auto& [lo, hi] : d.response_band) fig.VerticalSpan(lo, hi, Ink::kBand, 0.25);
    for (const auto& [lo, hi] : d.robust_band) fig.VerticalSpan(lo, hi, Ink::kInput, 0.28);
    if (std::isfinite(ps.limit)) {
      fig.HorizontalLine(ps.limit, {Ink::kLimit, Dash::kDashed, 1.3});
      fig.Text(k_lo * std::pow(k_hi / k_lo, 0.01), ps.limit + 0.02 * (r.hi - r.lo), "limit",
               Ink::kLimit, 0.0, 0.0, 0.8);
    }
    if (std::isfinite(d.recommended_gain))
      fig.VerticalLine(d.recommended_gain, {Ink::kText, Dash::kSolid, 1.4});
    fig.Line(d.gains, *ps.values, {Ink::kModel, Dash::kSolid, 2.0});
    if (p == 0) {
      std::vector<LegendEntry> legend = {{"predicted metric", {Ink::kModel, Dash::kSolid, 2.0}},
                                         {"spec limit", {Ink::kLimit, Dash::kDashed, 1.3}}};
      if (!d.locus_band.empty()) legend.push_back({"locus band", {Ink::kRegion}, true});
      if (!d.response_band.empty()) legend.push_back({"response band", {Ink::kBand}, true});
      if (!d.robust_band.empty()) legend.push_back({"robust band", {Ink::kInput}, true});
      if (std::isfinite(d.recommended_gain))
        legend.push_back({"recommended gain", {Ink::kText, Dash::kSolid, 1.4}});
      fig.Legend(legend, 0);
    }
  }
  if (!d.caption.empty()) fig.Caption(d.caption);
  fig.Save();
}

}  // namespace lw
