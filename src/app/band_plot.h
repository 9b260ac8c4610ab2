// `band --plot FILE`: the locus figure (io/locus_figure.h) and the metrics-vs-K figure
// (io/metrics_figure.h) of a band result. FILE names the locus figure; the metrics figure goes
// beside it with "-metrics" before the extension (app/figure_path.h).
#ifndef LOOPWRIGHT_APP_BAND_PLOT_H_
#define LOOPWRIGHT_APP_BAND_PLOT_H_

#include <complex>
#include <optional>
#include <string>
#include <vector>

#include "design/gain_band.h"
#include "design/recommendation.h"
#include "design/response_band.h"
#include "design/specs.h"
#include "io/locus_figure.h"
#include "io/metrics_figure.h"
#include "lti/controller.h"
#include "lti/transfer_function.h"

namespace lw::app {

struct BandPlotInput {
  const TransferFunction& plant;
  const Controller& controller;
  const Specs& specs;
  const Region& region;
  const LoopPolynomials& loop;
  const LocusBand& locus;
  const ResponseBand& response;
  const std::optional<GainSet>& robust;
  const Recommendation& recommendation;
  ResponseBandOptions response_options;  // how the metrics are simulated
  std::string title;
};

// Closed-loop pole paths of a + K b for increasing `gains` (sorted, > 0), each starting at a
// root of a (K = 0): one path per pole, consecutive roots matched to the nearest unclaimed one.
std::vector<ComplexPath> TraceBranches(const LoopPolynomials& loop,
                                       const std::vector<double>& gains);

LocusFigureData BuildLocusFigure(const BandPlotInput& in);
// Simulates the step at log-spaced gains spanning the bands (CheckResponse, on 2 threads).
MetricsFigureData BuildMetricsFigure(const BandPlotInput& in);

// Writes both figures; returns their paths (locus first).
std::vector<std::string> WriteBandFigures(const std::string& path, const BandPlotInput& in);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_BAND_PLOT_H_
