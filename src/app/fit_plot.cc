#include "app/fit_plot.h"

#include <algorithm>
#include <cmath>
#include <filesystem>

#include "app/output.h"
#include "identify/model_structure.h"
#include "io/fit_figure.h"
#include "lti/simulate.h"

namespace lw::app {

namespace {

std::string CaptionText(const ParameterEstimate& p) {
  const ParameterText text = FormatParameter(p.name, p.value, p.ci_low, p.ci_high);
  std::string s = p.name + " = " + text.value;
  if (std::isfinite(p.ci_low) && std::isfinite(p.ci_high))
    s +=
        " [" + text.low + ", " + text.high + "]" + (text.note.empty() ? "" : " (cut at the bound)");
  if (!p.unit.empty()) s += " " + p.unit;
  return s;
}

}  // namespace

void WriteFitPlot(const std::string& path, const std::string& recording_name,
                  const StepRecording& data, const Identification& id) {
  const FitResult& m = id.model;
  FitFigureData d;
  d.title = "Fit of " + std::filesystem::path(recording_name).filename().string() + ": " +
            std::string(StructureName(m.structure));
  d.t = data.t;
  d.measured = data.y;
  d.input = data.u;
  std::vector<double> du(data.u.size());
  for (size_t i = 0; i < du.size(); ++i) du[i] = data.u[i] - m.input_baseline;
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  d.fitted = Simulate(m.tf, data.t, du, so);
  for (size_t i = 0; i < d.fitted.size(); ++i) {
    d.fitted[i] += m.output_offset.value;
    if (m.output_drift) d.fitted[i] += m.output_drift->value * (data.t[i] - data.t.front());
  }
  if (!data.u.empty()) {
    auto [lo, hi] = std::minmax_element(data.u.begin(), data.u.end());
    double range = *hi - *lo;
    for (size_t i = 1; i < data.u.size(); ++i)
      if (range > 0 && std::abs(data.u[i] - data.u[i - 1]) > 0.25 * range)
        d.step_times.push_back(data.t[i]);
  }
  std::string line;
  int on_line = 0;
  for (const auto& p : m.parameters) {
    if (on_line == 2) {
      d.caption.push_back(line);
      line.clear();
      on_line = 0;
    }
    line += (line.empty() ? "" : "    ") + CaptionText(p);
    ++on_line;
  }
  if (!line.empty()) d.caption.push_back(line);
  d.caption.push_back("fit " + FormatNumber(m.fit_percent) + " %, residual rms " +
                      FormatNumber(m.residual_rms) + ", " + std::to_string(m.samples) +
                      " samples; intervals are 95 %");
  if (d.caption.size() > 6) d.caption.resize(6);
  WriteFitFigure(path, d);
}

}  // namespace lw::app
