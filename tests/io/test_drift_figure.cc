// The drift figure (io/drift_figure.h): its x axis counts fits, so its tick labels are whole fit
// numbers at the interval the header's 1-2-5 rule gives, read back from the SVG's tick labels.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "io/drift_figure.h"
#include "lti/error.h"
#include "svg_probe.h"
#include "temp_dir.h"

namespace {

// A made-up rig's gain over `fits` fits, drifting slowly, each with a 95 % interval.
lw::DriftFigureData Gains(int fits) {
  lw::DriftFigureData d;
  d.title = "oven";
  d.fits = fits;
  lw::DriftSeries s;
  s.name = "gain";
  s.unit = "degC/%";
  for (int i = 0; i < fits; ++i) {
    const double v = 1.8 + 0.01 * i;
    s.value.push_back(v);
    s.ci_low.push_back(v - 0.05);
    s.ci_high.push_back(v + 0.05);
    s.significant.push_back(false);
  }
  d.series = {s};
  return d;
}

// The x tick labels: PLplot writes them centred and upright, below the bottom panel; the axis
// label is the one centred upright text that is not a number.
std::vector<double> XTickLabels(const lw::test::SvgProbe& p) {
  std::vector<double> out;
  for (const auto& e : p.elements) {
    if (e.name != "text") continue;
    auto anchor = e.attributes.find("text-anchor");
    auto transform = e.attributes.find("transform");
    if (anchor == e.attributes.end() || anchor->second != "middle") continue;
    if (transform == e.attributes.end() || transform->second.rfind("matrix(1.000000 0.", 0) != 0)
      continue;
    size_t used = 0;
    try {
      const double v = std::stod(e.text, &used);
      if (used == e.text.size()) out.push_back(v);
    } catch (const std::logic_error&) {
    }
  }
  return out;
}

}  // namespace

TEST_CASE("drift figure: whole tick intervals by the 1-2-5 rule, at most 10 intervals") {
  CHECK(lw::WholeTickInterval(1) == 1.0);
  CHECK(lw::WholeTickInterval(10) == 1.0);
  CHECK(lw::WholeTickInterval(11) == 2.0);
  CHECK(lw::WholeTickInterval(20) == 2.0);
  CHECK(lw::WholeTickInterval(21) == 5.0);
  CHECK(lw::WholeTickInterval(50) == 5.0);
  CHECK(lw::WholeTickInterval(51) == 10.0);
  CHECK(lw::WholeTickInterval(140) == 20.0);
  CHECK(lw::WholeTickInterval(1000) == 100.0);
}

TEST_CASE("drift figure: the x ticks are whole fit numbers, never half fits") {
  lw::test::TempDir dir;
  for (int fits : {1, 2, 3, 7, 12, 23, 140}) {
    CAPTURE(fits);
    const std::string path = dir.File("drift_" + std::to_string(fits) + ".svg");
    lw::WriteDriftFigure(path, Gains(fits));
    const std::vector<double> labels = XTickLabels(lw::test::ProbeSvg(lw::test::ReadText(path)));
    // The axis runs from 0.5 to max(1.5, fits + 0.5): the multiples of the interval inside it.
    const double step = lw::WholeTickInterval(fits), hi = std::max(1.5, fits + 0.5);
    std::vector<double> want;
    for (double x = step; x <= hi; x += step) want.push_back(x);
    CHECK(labels == want);
    for (double v : labels) CHECK(v == std::round(v));
  }
}
