// The fit figure (io/fit_figure.h) as SVG, PNG and PDF: the SVG parses as XML and holds the
// expected series (polylines in each series' ink) and labels; long recordings stay small.
#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <random>
#include <string>

#include "io/figure.h"
#include "io/fit_figure.h"
#include "lti/error.h"
#include "svg_probe.h"
#include "temp_dir.h"

namespace {

// A made-up heater: gain 1.8 °C per %, time constant 14 s, dead time 2.5 s, a step at 5 s and
// one back at 60 s, with measurement noise.
lw::FitFigureData Heater(size_t n, double duration) {
  lw::FitFigureData d;
  d.title = "Fit of heater.csv: first order + dead time";
  d.output_unit = "°C";
  d.input_unit = "%";
  d.step_times = {5.0, 60.0};
  std::mt19937 rng(7);
  std::normal_distribution<double> noise(0.0, 0.05);
  for (size_t i = 0; i < n; ++i) {
    double t = duration * static_cast<double>(i) / static_cast<double>(n - 1);
    auto rise = [&](double t0) { return t > t0 ? 1 - std::exp(-(t - t0) / 14.0) : 0.0; };
    double u = (t >= 5.0 ? 20.0 : 0.0) - (t >= 60.0 ? 20.0 : 0.0);
    double y = 21 + 1.8 * 20 * (rise(7.5) - rise(62.5));
    d.t.push_back(t);
    d.input.push_back(u);
    d.fitted.push_back(y);
    d.measured.push_back(y + noise(rng));
  }
  d.caption = {"K = 1.80 °C/% [1.76, 1.84]   tau = 14.0 s [13.5, 14.6]   T = 2.50 s [2.41, 2.59]",
               "fit 97.3 % (NRMSE), 1200 samples"};
  return d;
}

size_t PolylinesIn(const lw::test::SvgProbe& p, lw::Ink ink) {
  return p.Count("polyline", "stroke", lw::InkHex(ink));
}

size_t PointsIn(const lw::test::SvgProbe& p, lw::Ink ink) { return p.LinePoints(lw::InkHex(ink)); }

}  // namespace

TEST_CASE("fit figure SVG holds measured, fitted, input, residual series and the caption") {
  lw::test::TempDir dir;
  std::string path = dir.File("fit.svg");
  lw::WriteFitFigure(path, Heater(1200, 120.0));
  lw::test::SvgProbe p = lw::test::ProbeSvg(lw::test::ReadText(path));
  CHECK(p.Count("svg") == 1);
  // PLplot's SVG driver writes a long line as several <polyline> pieces (and a dashed one as one
  // piece per dash), so count the points drawn in each series' ink: every sample of the measured
  // and input traces is drawn (1200 each), the legend samples add their own.
  CHECK(PointsIn(p, lw::Ink::kMeasured) >= 1200);
  CHECK(PointsIn(p, lw::Ink::kInput) >= 1200);
  CHECK(PointsIn(p, lw::Ink::kResidual) >= 1200);
  CHECK(PolylinesIn(p, lw::Ink::kModel) > 10);  // dashed: many pieces
  CHECK(PointsIn(p, lw::Ink::kModel) >= 1200);
  CHECK(PolylinesIn(p, lw::Ink::kMuted) >= 5);  // step lines on two panels, the zero line
  for (const char* label :
       {"time t (s)", "output y (°C)", "input u (%)", "residual (°C)", "measured", "fitted model",
        "input step", "Fit of heater.csv: first order + dead time", "fit 97.3 % (NRMSE)",
        "K = 1.80 °C/% [1.76, 1.84]"})
    CHECK_MESSAGE(p.HasText(label), label);
  CHECK(dir.Entries() == std::vector<std::string>{"fit.svg"});
}

TEST_CASE("fit figure as PNG and PDF") {
  lw::test::TempDir dir;
  lw::FitFigureData d = Heater(600, 120.0);
  lw::WriteFitFigure(dir.File("fit.png"), d);
  lw::WriteFitFigure(dir.File("fit.PDF"), d);
  std::string png = lw::test::ReadText(dir.File("fit.png"));
  std::string pdf = lw::test::ReadText(dir.File("fit.PDF"));
  REQUIRE(png.size() > 8);
  CHECK(png.compare(0, 8, "\x89PNG\r\n\x1a\n") == 0);
  CHECK(png.size() > 20000);  // a page with text and lines, not a blank
  CHECK(pdf.compare(0, 5, "%PDF-") == 0);
  CHECK(dir.Entries() == std::vector<std::string>{"fit.PDF", "fit.png"});
}

TEST_CASE("a million-sample recording draws into a small SVG that keeps the spike") {
  lw::test::TempDir dir;
  lw::FitFigureData d = Heater(1000000, 1000.0);
  d.measured[400000] += 80.0;  // one glitch the figure must still show
  std::string path = dir.File("long.svg");
  lw::WriteFitFigure(path, d);
  auto size = std::filesystem::file_size(path);
  CHECK(size < 3u * 1024 * 1024);
  lw::test::SvgProbe p = lw::test::ProbeSvg(lw::test::ReadText(path));
  // The measured polyline's highest point (SVG y grows up under PLplot's flipped transform)
  // reaches the top of the output panel's data range, i.e. the glitch is drawn.
  double top_measured = -1, top_fitted = -1;
  for (const auto& e : p.elements) {
    if (e.name != "polyline") continue;
    auto stroke = e.attributes.find("stroke");
    auto points = e.attributes.find("points");
    if (stroke == e.attributes.end() || points == e.attributes.end()) continue;
    double top = -1;
    std::string pts = points->second;
    for (size_t pos = 0; (pos = pts.find(',', pos)) != std::string::npos; ++pos)
      top = std::max(top, std::stod(pts.substr(pos + 1)));
    if (stroke->second == lw::InkHex(lw::Ink::kMeasured))
      top_measured = std::max(top_measured, top);
    if (stroke->second == lw::InkHex(lw::Ink::kModel)) top_fitted = std::max(top_fitted, top);
  }
  CHECK(top_measured > top_fitted + 100);  // the glitch stands far above the fitted curve
  // Reduced: at most about two points per pixel column (the panel is under 900 columns wide).
  CHECK(PointsIn(p, lw::Ink::kMeasured) < 2 * 900 + 50);
  CHECK(PointsIn(p, lw::Ink::kMeasured) > 900);
}

TEST_CASE("bad figure requests") {
  lw::test::TempDir dir;
  lw::FitFigureData d = Heater(100, 10.0);
  CHECK_THROWS_AS(lw::WriteFitFigure(dir.File("fit.jpg"), d), lw::UsageError);
  d.fitted.pop_back();
  CHECK_THROWS_AS(lw::WriteFitFigure(dir.File("fit.svg"), d), lw::UsageError);
  CHECK_THROWS_AS(lw::WriteFitFigure(dir.File("no/such/folder/fit.svg"), Heater(100, 10.0)),
                  lw::UsageError);
  CHECK(dir.Entries().empty());
  CHECK(lw::FigureFormatOf("a.SVG") == lw::FigureFormat::kSvg);
}
