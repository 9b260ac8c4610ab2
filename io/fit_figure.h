// The fit figure: a fitted plant model drawn over the recording it came from.
//
//   top panel     measured output (kMeasured, solid) and the fitted model's response to the
//                 measured input (kModel, dashed), step instants as dotted vertical lines
//   middle panel  the input the rig applied (kInput), same instants
//   bottom panel  residuals measured - fitted (kResidual) around a zero line
//   caption       the parameters with their 95 % intervals and the fit %, one line each
//                 (the caller formats them; at most 6 lines)
// All series share one time axis; long recordings are reduced per pixel column keeping peaks
// (figure_reduce.h). Units appear in the axis labels ("output y (°C)" when the unit is given).
#ifndef LOOPWRIGHT_IO_FIT_FIGURE_H_
#define LOOPWRIGHT_IO_FIT_FIGURE_H_

#include <string>
#include <vector>

namespace lw {

struct FitFigureData {
  std::string title;               // e.g. "Fit of run.csv: first order + dead time"
  std::vector<double> t;           // s, non-decreasing
  std::vector<double> measured;    // output as recorded, same length as t
  std::vector<double> fitted;      // model response, same length (NaN where not simulated)
  std::vector<double> input;       // same length
  std::vector<double> step_times;  // s, instants where the input steps
  std::string output_unit;         // "" when unknown
  std::string input_unit;
  std::vector<std::string> caption;  // at most 6 lines
};

// Writes the figure to `path` (.svg, .png, .pdf; figure.h). Throws UsageError when the series
// differ in length, are shorter than 2 samples or the caption is too long.
void WriteFitFigure(const std::string& path, const FitFigureData& data);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_FIT_FIGURE_H_
