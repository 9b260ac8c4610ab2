// The drift figure: each fitted parameter of a rig across the fits in its logbook, with its 95 %
// interval, so a change after a hardware rework (or slow ageing) is seen at a glance.
//
// One stacked panel per parameter (top to bottom in the order given), all on one x axis, the fit
// number 1 ... n in logbook order, its ticks at whole fit numbers (WholeTickInterval). Each fit is
// a filled circle (kModel) at its value with its interval as a vertical bar with end ticks; a fit
// whose change from the previous one is significant (identify/parameter_change.h) is drawn as a
// filled diamond in kResidual instead. The first fit's value is a dashed reference line (kMuted)
// across the panel. A fit without an interval is drawn without a bar; a NaN value is left out. A
// legend in the top panel names the marks (above the data: the top panel's y axis gets room for
// it); the caption (at most 4 lines) says which recording each fit came from.
#ifndef LOOPWRIGHT_IO_DRIFT_FIGURE_H_
#define LOOPWRIGHT_IO_DRIFT_FIGURE_H_

#include <string>
#include <vector>

namespace lw {

struct DriftSeries {
  std::string name, unit;                      // e.g. "tau", "s"
  std::vector<double> value, ci_low, ci_high;  // one per fit; NaN = not known
  std::vector<bool> significant;               // one per fit: changed significantly from the last
};

struct DriftFigureData {
  std::string title;
  int fits = 0;                      // number of fits (x = 1 ... fits), >= 1
  std::vector<DriftSeries> series;   // 1 ... 6, each with `fits` entries in every vector
  std::vector<std::string> caption;  // at most 4 lines
};

// The x tick interval for `count` fits: the smallest of 1, 2, 5, 10, 20, 50, ... that gives at
// most 10 intervals over count (1 up to 10 fits, 2 up to 20, 5 up to 50, ...).
double WholeTickInterval(int count);

// Writes the figure (.svg, .png, .pdf; figure.h). UsageError when there are no series or more
// than 6, a vector's length is not `fits`, or the caption has more than 4 lines.
void WriteDriftFigure(const std::string& path, const DriftFigureData& data);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_DRIFT_FIGURE_H_
