#include "io/drift_figure.h"

#include <algorithm>
#include <cmath>

#include "io/figure.h"
#include "lti/error.h"

namespace lw {

double WholeTickInterval(int count) {
  for (double decade = 1.0;; decade *= 10.0) {
    for (double step : {1.0, 2.0, 5.0}) {
      if (count <= 10.0 * step * decade) return step * decade;
    }
  }
}

void WriteDriftFigure(const std::string& path, const DriftFigureData& d) {
  auto fail = [&](const std::string& why) {
    throw UsageError("drift figure '" + path + "': " + why);
  };
  if (d.fits < 1) fail("needs at least one fit");
  if (d.series.empty() || d.series.size() > 6) fail("needs 1 to 6 parameters");
  if (d.caption.size() > 4) fail("at most 4 caption lines");
  const size_t n = static_cast<size_t>(d.fits);
  for (const auto& s : d.series) {
    if (s.value.size() != n || s.ci_low.size() != n || s.ci_high.size() != n ||
        s.significant.size() != n) {
      fail("parameter '" + s.name + "' needs one value, interval and flag per fit");
    }
  }

  const int panels = static_cast<int>(d.series.size());
  Figure fig(path, 900, 220 + 190 * panels, std::vector<double>(d.series.size(), 1.0),
             static_cast<int>(d.caption.size()));
  // Half a fit of room on either side; at least two fits wide so one fit sits in the middle.
  // Fit numbers are whole: ticks every 1, 2 or 5 times a power of ten fits, at most 10 of them.
  Axis x_axis{"fit (logbook order)", 0.5, std::max(1.5, d.fits + 0.5)};
  x_axis.tick = WholeTickInterval(d.fits);
  const double tick = 0.08;  // half-width of an interval bar's end ticks, in fits
  for (int p = 0; p < panels; ++p) {
    const DriftSeries& s = d.series[p];
    DataRange r = RangeOf({s.value, s.ci_low, s.ci_high}, 0.1);
    // Room above the data in the top panel for the legend.
    if (p == 0) r.hi += 0.5 * (r.hi - r.lo);
    std::string label = s.unit.empty() ? s.name : s.name + " (" + s.unit + ")";
    std::string title = p == 0 && !d.title.empty() ? d.title + ": " + s.name : s.name;
    Axis x = x_axis;
    if (p != panels - 1) x.label.clear();
    fig.BeginPanel(p, x, {label, r.lo, r.hi}, title);
    for (size_t i = 0; i < n; ++i) {
      if (std::isfinite(s.value[i])) {
        fig.HorizontalLine(s.value[i], {Ink::kMuted, Dash::kDashed, 1.0});
        break;
      }
    }
    std::vector<double> plain_x, plain_y, flagged_x, flagged_y;
    for (size_t i = 0; i < n; ++i) {
      const double xi = static_cast<double>(i + 1);
      const Ink ink = s.significant[i] ? Ink::kResidual : Ink::kModel;
      if (std::isfinite(s.ci_low[i]) && std::isfinite(s.ci_high[i])) {
        const Stroke bar{ink, Dash::kSolid, 1.6};
        fig.Line({xi, xi}, {s.ci_low[i], s.ci_high[i]}, bar);
        fig.Line({xi - tick, xi + tick}, {s.ci_low[i], s.ci_low[i]}, bar);
        fig.Line({xi - tick, xi + tick}, {s.ci_high[i], s.ci_high[i]}, bar);
      }
      if (!std::isfinite(s.value[i])) continue;
      (s.significant[i] ? flagged_x : plain_x).push_back(xi);
      (s.significant[i] ? flagged_y : plain_y).push_back(s.value[i]);
    }
    if (!plain_x.empty()) fig.FilledMarkers(plain_x, plain_y, Ink::kModel, Marker::kCircle, 1.1);
    if (!flagged_x.empty()) {
      fig.FilledMarkers(flagged_x, flagged_y, Ink::kResidual, Marker::kDiamond, 1.4);
    }
    if (p == 0) {
      fig.Legend(
          {{"estimate with 95 % interval", {Ink::kModel}, false, {Marker::kCircle}},
           {"significant change from the fit before", {Ink::kResidual}, false, {Marker::kDiamond}},
           {"first fit", {Ink::kMuted, Dash::kDashed, 1.0}}},
          0);
    }
  }
  if (!d.caption.empty()) fig.Caption(d.caption);
  fig.Save();
}

}  // namespace lw
