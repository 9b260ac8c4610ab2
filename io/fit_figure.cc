#include "io/fit_figure.h"

#include <cmath>

#include "io/figure.h"
#include "lti/error.h"

namespace lw {

namespace {

std::string WithUnit(const std::string& name, const std::string& unit) {
  return unit.empty() ? name : name + " (" + unit + ")";
}

}  // namespace

void WriteFitFigure(const std::string& path, const FitFigureData& d) {
  const size_t n = d.t.size();
  if (n < 2) throw UsageError("fit figure '" + path + "': needs at least 2 samples");
  if (d.measured.size() != n || d.fitted.size() != n || d.input.size() != n)
    throw UsageError("fit figure '" + path + "': t, measured, fitted and input differ in length");
  if (d.caption.size() > 6) throw UsageError("fit figure '" + path + "': at most 6 caption lines");

  std::vector<double> residual(n);
  for (size_t i = 0; i < n; ++i) residual[i] = d.measured[i] - d.fitted[i];

  Figure fig(path, 960, 760, {3.0, 1.3, 1.3}, static_cast<int>(d.caption.size()));
  DataRange tr = RangeOf({d.t}, 0.0);
  Axis time{"", tr.lo, tr.hi};
  Axis time_labelled{"time t (s)", tr.lo, tr.hi};
  DataRange yr = RangeOf({d.measured, d.fitted}, 0.06);
  DataRange ur = RangeOf({d.input}, 0.12);
  DataRange rr = RangeOf({residual}, 0.1);
  double rmax = std::max(std::abs(rr.lo), std::abs(rr.hi));
  const Stroke step_line{Ink::kMuted, Dash::kDotted, 1.0};

  fig.BeginPanel(0, time, {WithUnit("output y", d.output_unit), yr.lo, yr.hi}, d.title);
  for (double ts : d.step_times) fig.VerticalLine(ts, step_line);
  fig.Line(d.t, d.measured, {Ink::kMeasured, Dash::kSolid, 1.3});
  fig.Line(d.t, d.fitted, {Ink::kModel, Dash::kDashed, 2.2});
  std::vector<LegendEntry> legend = {{"measured", {Ink::kMeasured, Dash::kSolid, 1.3}},
                                     {"fitted model", {Ink::kModel, Dash::kDashed, 2.2}}};
  if (!d.step_times.empty()) legend.push_back({"input step", step_line});
  fig.Legend(legend, 2);

  fig.BeginPanel(1, time, {WithUnit("input u", d.input_unit), ur.lo, ur.hi}, "Input applied");
  for (double ts : d.step_times) fig.VerticalLine(ts, step_line);
  fig.Line(d.t, d.input, {Ink::kInput, Dash::kSolid, 1.5});

  fig.BeginPanel(2, time_labelled, {WithUnit("residual", d.output_unit), -1.1 * rmax, 1.1 * rmax},
                 "Residual: measured - fitted");
  fig.HorizontalLine(0.0, {Ink::kMuted, Dash::kSolid, 1.0});
  fig.Line(d.t, residual, {Ink::kResidual, Dash::kSolid, 1.0});
  if (!d.caption.empty()) fig.Caption(d.caption);
  fig.Save();
}

}  // namespace lw
