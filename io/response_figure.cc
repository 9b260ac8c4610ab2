#include "io/response_figure.h"

#include "io/figure.h"
#include "lti/error.h"

namespace lw {

namespace {

std::string WithUnit(const std::string& name, const std::string& unit) {
  return unit.empty() ? name : name + " (" + unit + ")";
}

void RequireLength(const std::string& path, const char* what, size_t size, size_t n,
                   bool may_be_empty) {
  if (size == n || (may_be_empty && size == 0)) return;
  throw UsageError("response figure '" + path + "': " + what + " has " + std::to_string(size) +
                   " samples, t has " + std::to_string(n));
}

}  // namespace

void WriteResponseFigure(const std::string& path, const ResponseFigureData& d) {
  const size_t n = d.t.size();
  if (n < 2) throw UsageError("response figure '" + path + "': needs at least 2 samples");
  RequireLength(path, "predicted", d.predicted.size(), n, false);
  RequireLength(path, "effort", d.effort.size(), n, false);
  RequireLength(path, "reference", d.reference.size(), n, true);
  RequireLength(path, "envelope_lo", d.envelope_lo.size(), n, true);
  RequireLength(path, "envelope_hi", d.envelope_hi.size(), d.envelope_lo.size(), false);
  RequireLength(path, "effort_lo", d.effort_lo.size(), n, true);
  RequireLength(path, "effort_hi", d.effort_hi.size(), d.effort_lo.size(), false);
  RequireLength(path, "measured_y", d.measured_y.size(), d.measured_t.size(), false);
  RequireLength(path, "measured_u", d.measured_u.size(), d.measured_t.size(), true);
  if (d.caption.size() > 4)
    throw UsageError("response figure '" + path + "': at most 4 caption lines");

  Figure fig(path, 960, 760, {2.6, 1.2}, static_cast<int>(d.caption.size()));
  std::vector<double> all_t = d.t;
  all_t.insert(all_t.end(), d.measured_t.begin(), d.measured_t.end());
  DataRange tr = RangeOf({all_t}, 0.0);
  std::vector<double> levels = {d.overshoot_level, d.settle_lo, d.settle_hi};
  DataRange yr =
      RangeOf({d.predicted, d.envelope_lo, d.envelope_hi, d.measured_y, d.reference, levels}, 0.06);
  std::vector<double> limits = {d.actuator_lo, d.actuator_hi};
  DataRange ur = RangeOf({d.effort, d.effort_lo, d.effort_hi, d.measured_u, limits}, 0.1);

  fig.BeginPanel(0, {"", tr.lo, tr.hi}, {WithUnit("output y", d.output_unit), yr.lo, yr.hi},
                 d.title);
  std::vector<LegendEntry> legend;
  if (std::isfinite(d.settle_lo) && std::isfinite(d.settle_hi)) {
    fig.Fill({tr.lo, tr.hi, tr.hi, tr.lo}, {d.settle_lo, d.settle_lo, d.settle_hi, d.settle_hi},
             Ink::kRegion, 0.2);
    fig.HorizontalLine(d.settle_lo, {Ink::kRegion, Dash::kDotted, 1.2});
    fig.HorizontalLine(d.settle_hi, {Ink::kRegion, Dash::kDotted, 1.2});
    legend.push_back({"settling band", {Ink::kRegion}, true});
  }
  if (!d.envelope_lo.empty()) {
    fig.FillBetween(d.t, d.envelope_lo, d.envelope_hi, Ink::kModel, 0.22);
    legend.push_back({"spread over parameter draws", {Ink::kModel}, true});
  }
  if (std::isfinite(d.overshoot_level)) {
    fig.HorizontalLine(d.overshoot_level, {Ink::kLimit, Dash::kDashed, 1.3});
    fig.Text(tr.lo + 0.01 * (tr.hi - tr.lo), d.overshoot_level + 0.015 * (yr.hi - yr.lo),
             "overshoot limit", Ink::kLimit, 0.0, 0.0, 0.8);
    legend.push_back({"overshoot limit", {Ink::kLimit, Dash::kDashed, 1.3}});
  }
  if (!d.reference.empty()) {
    fig.Line(d.t, d.reference, {Ink::kMuted, Dash::kDotted, 1.3});
    legend.push_back({"reference r", {Ink::kMuted, Dash::kDotted, 1.3}});
  }
  if (!d.measured_t.empty()) {
    fig.Line(d.measured_t, d.measured_y, {Ink::kMeasured, Dash::kSolid, 1.3});
    legend.push_back({"measured", {Ink::kMeasured, Dash::kSolid, 1.3}});
  }
  fig.Line(d.t, d.predicted, {Ink::kModel, Dash::kSolid, 2.2});
  legend.push_back({"predicted", {Ink::kModel, Dash::kSolid, 2.2}});
  fig.Legend(legend, 2);

  fig.BeginPanel(1, {"time t (s)", tr.lo, tr.hi},
                 {WithUnit("actuator u", d.input_unit), ur.lo, ur.hi}, "Actuator effort");
  std::vector<LegendEntry> effort_legend;
  if (!d.effort_lo.empty()) fig.FillBetween(d.t, d.effort_lo, d.effort_hi, Ink::kInput, 0.22);
  for (double lim : limits)
    if (std::isfinite(lim)) fig.HorizontalLine(lim, {Ink::kLimit, Dash::kDashed, 1.3});
  if (std::isfinite(d.actuator_lo) || std::isfinite(d.actuator_hi))
    effort_legend.push_back({"actuator limit", {Ink::kLimit, Dash::kDashed, 1.3}});
  if (!d.measured_u.empty()) {
    fig.Line(d.measured_t, d.measured_u, {Ink::kMeasured, Dash::kSolid, 1.2});
    effort_legend.push_back({"measured effort", {Ink::kMeasured, Dash::kSolid, 1.2}});
  }
  fig.Line(d.t, d.effort, {Ink::kInput, Dash::kSolid, 1.8});
  effort_legend.push_back({"predicted effort", {Ink::kInput, Dash::kSolid, 1.8}});
  fig.Legend(effort_legend, 0);
  if (!d.caption.empty()) fig.Caption(d.caption);
  fig.Save();
}

}  // namespace lw
