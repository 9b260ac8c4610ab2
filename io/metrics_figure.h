// The metrics figure: what the step response does as the gain K grows, with the specs and the
// bands over it.
//
// Three stacked panels on one logarithmic K axis: rise time (s), overshoot (%), settling time (s)
// of the closed-loop step response, each metric a line (kModel; NaN where undefined, e.g. an
// unstable loop), its spec limit as a dashed horizontal line (kLimit) labelled "limit", and the
// gain bands as shaded vertical spans in every panel: the locus band (kRegion), the response band
// (kBand) and the robust band (kInput), each a union of ranges, plus the recommended gain as a
// solid vertical line (kText). A legend names the spans.
#ifndef LOOPWRIGHT_IO_METRICS_FIGURE_H_
#define LOOPWRIGHT_IO_METRICS_FIGURE_H_

#include <cmath>
#include <string>
#include <utility>
#include <vector>

namespace lw {

using GainRanges = std::vector<std::pair<double, double>>;  // [lo, hi] each, lo < hi

struct MetricsFigureData {
  std::string title;
  std::vector<double> gains;                                             // > 0, increasing
  std::vector<double> rise_time, overshoot_percent, settling_time;       // same length, NaN = none
  double rise_limit = NAN, overshoot_limit = NAN, settling_limit = NAN;  // NaN = no spec
  GainRanges locus_band, response_band, robust_band;                     // empty when not computed
  double recommended_gain = NAN;
  std::vector<std::string> caption;  // at most 3 lines
};

// Writes the figure (.svg, .png, .pdf; figure.h). UsageError when the series differ in length,
// fewer than 2 gains are given or a gain is not > 0.
void WriteMetricsFigure(const std::string& path, const MetricsFigureData& data);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_METRICS_FIGURE_H_
