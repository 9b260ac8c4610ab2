// Locus, metrics and response figures (io/locus_figure.h, metrics_figure.h, response_figure.h):
// each SVG parses as XML and holds the expected drawn elements and labels. The plant is one of
// our own: a(s) + K b(s) = (s + 1)(s + 4) + K, whose closed-loop poles are
// s = -2.5 ± sqrt(2.25 - K) in closed form (real for K <= 2.25, a complex pair above).
// Set LOOPWRIGHT_KEEP_FIGURES=DIR to keep PNG copies for looking at.
#include <doctest/doctest.h>

#include <cmath>
#include <complex>
#include <cstdlib>
#include <string>

#include "io/figure.h"
#include "io/locus_figure.h"
#include "io/metrics_figure.h"
#include "io/response_figure.h"
#include "svg_probe.h"
#include "temp_dir.h"

namespace {

using cd = std::complex<double>;

// Writes the figure as SVG into `dir` and, when asked, a PNG copy into LOOPWRIGHT_KEEP_FIGURES.
template <typename Data, typename Writer>
lw::test::SvgProbe DrawAndProbe(const lw::test::TempDir& dir, const std::string& name,
                                const Data& data, Writer write) {
  if (const char* keep = std::getenv("LOOPWRIGHT_KEEP_FIGURES"))
    write(std::string(keep) + "/" + name + ".png", data);
  std::string path = dir.File(name + ".svg");
  if (const char* keep = std::getenv("LOOPWRIGHT_KEEP_FIGURES"))
    write(std::string(keep) + "/" + name + ".svg", data);
  write(path, data);
  return lw::test::ProbeSvg(lw::test::ReadText(path));
}

// PLplot's SVG driver writes a filled area as a <polyline> with a fill and stroke="none".
size_t Polygons(const lw::test::SvgProbe& p, lw::Ink ink) {
  return p.Count("polyline", "fill", lw::InkHex(ink));
}
size_t Polylines(const lw::test::SvgProbe& p, lw::Ink ink) {
  return p.Lines(lw::InkHex(ink)).size();
}

lw::LocusFigureData SecondOrderLocus() {
  lw::LocusFigureData d;
  d.title = "Locus of K / ((s + 1)(s + 4))";
  lw::ComplexPath upper, lower;
  for (int i = 0; i <= 400; ++i) {
    double k = 40.0 * std::pow(i / 400.0, 2);
    cd root = std::sqrt(cd(2.25 - k, 0));
    upper.push_back(cd(-2.5, 0) + root * (k > 2.25 ? 1.0 : 1.0));
    lower.push_back(cd(-2.5, 0) - root);
  }
  d.branches = {upper, lower};
  d.open_loop_poles = {cd(-1, 0), cd(-4, 0)};
  // Damping ratio >= 0.5: the wedge within 60 degrees of the negative real axis.
  double t = std::tan(std::acos(0.5));
  d.region = {{cd(0, 0), cd(-8, 8 * t), cd(-8, -8 * t)}};
  d.boundaries = {{"ζ ≥ 0.5", {cd(0, 0), cd(-8, 8 * t)}, cd(-4.8, 4.8 * t)},
                  {"", {cd(0, 0), cd(-8, -8 * t)}, cd(0, 0)}};
  // In band for K <= 21 (the pair reaches the wedge's edge at wd = 2.5 tan 60°).
  lw::ComplexPath in_upper, in_lower;
  for (size_t i = 0; i < upper.size(); ++i)
    if (std::abs(upper[i].imag()) <= 2.5 * t + 1e-9) {
      in_upper.push_back(upper[i]);
      in_lower.push_back(lower[i]);
    }
  d.in_band = {in_upper, in_lower};
  d.edge_labels = {{cd(-2.5, 2.5 * t), "K = 21"}};
  double k_rec = 6.0;
  d.recommended_poles = {cd(-2.5, std::sqrt(k_rec - 2.25)), cd(-2.5, -std::sqrt(k_rec - 2.25))};
  d.recommended_label = "recommended K = 6";
  d.caption = {"band 0 < K ≤ 21 from the damping boundary"};
  return d;
}

}  // namespace

TEST_CASE("locus figure: region, boundaries, branches, band, markers and labels") {
  lw::test::TempDir dir;
  lw::test::SvgProbe p = DrawAndProbe(dir, "locus", SecondOrderLocus(), lw::WriteLocusFigure);
  CHECK(p.Count("svg") == 1);
  CHECK(Polygons(p, lw::Ink::kRegion) == 2);      // the shaded wedge and its legend swatch
  CHECK(Polylines(p, lw::Ink::kMuted) >= 2 + 1);  // two branches (and their legend sample)
  CHECK(Polylines(p, lw::Ink::kBand) >= 2 + 1);   // two highlighted pieces + legend
  CHECK(Polygons(p, lw::Ink::kText) == 2);        // one direction arrow per branch
  CHECK(Polygons(p, lw::Ink::kModel) == 2);       // the recommended pair
  CHECK(Polygons(p, lw::Ink::kLimit) == 1);       // the band-edge pole
  // Open-loop poles as crosses: one polyline each in the text ink, plus the legend's cross and
  // circle; no zeros.
  CHECK(Polylines(p, lw::Ink::kText) == 2 + 2);
  for (const char* label : {"ζ ≥ 0.5", "K = 21", "recommended K = 6", "real part σ (1/s)",
                            "imaginary part ω (rad/s)", "in band", "admissible region",
                            "open-loop pole, zero", "band 0 < K ≤ 21 from the damping boundary"})
    CHECK_MESSAGE(p.HasText(label), label);
}

TEST_CASE("metrics figure: three metrics on a log gain axis with limits and band spans") {
  lw::MetricsFigureData d;
  d.title = "Step metrics";
  // Second-order closed loop wn^2 = 4 + K, 2 zeta wn = 5 (the plant above): overshoot from the
  // textbook formula exp(-pi zeta / sqrt(1 - zeta^2)) (Ogata, Modern Control Engineering; from
  // memory); rise and settling times need no exactness for a drawing test.
  for (int i = 0; i <= 100; ++i) {
    double k = 0.1 * std::pow(10.0, 3.0 * i / 100.0);
    double wn = std::sqrt(4 + k), zeta = 2.5 / wn;
    d.gains.push_back(k);
    d.overshoot_percent.push_back(
        zeta < 1 ? 100 * std::exp(-M_PI * zeta / std::sqrt(1 - zeta * zeta)) : 0.0);
    d.rise_time.push_back(1.8 / wn);
    d.settling_time.push_back(zeta < 1 ? 4 / (zeta * wn) : 4.0 / (2.5 - std::sqrt(2.25 - k)));
  }
  d.overshoot_limit = 10;
  d.rise_limit = 0.6;
  d.settling_limit = 2.0;
  d.locus_band = {{3.0, 21.0}};
  d.response_band = {{4.0, 18.0}};
  d.robust_band = {{5.0, 12.0}};
  d.recommended_gain = 8.0;
  d.caption = {"rise ≤ 0.6 s, overshoot ≤ 10 %, settling ≤ 2 s"};
  lw::test::TempDir dir;
  lw::test::SvgProbe p = DrawAndProbe(dir, "metrics", d, lw::WriteMetricsFigure);
  // Each band is one span per panel (3) plus its legend swatch.
  CHECK(Polygons(p, lw::Ink::kRegion) == 3 + 1);
  CHECK(Polygons(p, lw::Ink::kBand) == 3 + 1);
  CHECK(Polygons(p, lw::Ink::kInput) == 3 + 1);
  CHECK(Polylines(p, lw::Ink::kModel) >= 3);
  size_t limits = 0;
  for (const auto& t : p.texts) limits += t == "limit";
  CHECK(limits == 3);
  for (const char* label :
       {"rise time (s)", "overshoot (%)", "settling time (s)", "controller gain K (log scale)",
        "locus band", "response band", "robust band", "recommended gain", "spec limit"})
    CHECK_MESSAGE(p.HasText(label), label);
  // Decade labels of the log axis: 10^-1 .. 10^2 are written by PLplot as "10" with a
  // superscript exponent in its own span; at least the base appears four times.
  size_t tens = 0;
  for (const auto& t : p.texts) tens += t.rfind("10", 0) == 0;
  CHECK(tens >= 4);
}

TEST_CASE("response figure: prediction with envelope, measurement, limits and effort") {
  lw::ResponseFigureData d;
  d.title = "Predicted closed loop at K = 6";
  d.output_unit = "mm";
  d.input_unit = "V";
  const double zeta = 2.5 / std::sqrt(10.0), wn = std::sqrt(10.0);
  for (int i = 0; i <= 1500; ++i) {
    double t = 6.0 * i / 1500.0;
    double wd = wn * std::sqrt(1 - zeta * zeta);
    double y =
        0.6 * (1 - std::exp(-zeta * wn * t) *
                       (std::cos(wd * t) + zeta / std::sqrt(1 - zeta * zeta) * std::sin(wd * t)));
    d.t.push_back(t);
    d.reference.push_back(1.0);
    d.predicted.push_back(y);
    d.envelope_lo.push_back(0.95 * y);
    d.envelope_hi.push_back(1.05 * y);
    d.effort.push_back(6.0 * (1.0 - y));
    d.effort_lo.push_back(6.0 * (1.0 - 1.05 * y));
    d.effort_hi.push_back(6.0 * (1.0 - 0.95 * y));
    if (i % 3 == 0) {
      d.measured_t.push_back(t);
      d.measured_y.push_back(1.02 * y + 0.004 * std::sin(40 * t));
      d.measured_u.push_back(6.0 * (1.0 - 1.02 * y));
    }
  }
  d.overshoot_level = 0.66;
  d.settle_lo = 0.588;
  d.settle_hi = 0.612;
  d.actuator_lo = -1;
  d.actuator_hi = 5.0;
  d.caption = {"overshoot 9.5 %, settling 1.9 s (2 % band), effort peaks at 6 V"};
  lw::test::TempDir dir;
  lw::test::SvgProbe p = DrawAndProbe(dir, "response", d, lw::WriteResponseFigure);
  CHECK(Polygons(p, lw::Ink::kModel) == 1 + 1);      // envelope + legend swatch
  CHECK(Polygons(p, lw::Ink::kRegion) == 1 + 1);     // settling band + legend swatch
  CHECK(Polygons(p, lw::Ink::kInput) == 1);          // effort envelope
  CHECK(Polylines(p, lw::Ink::kMeasured) >= 2 + 2);  // measured y, u and their legend samples
  CHECK(Polylines(p, lw::Ink::kInput) >= 2);
  for (const char* label :
       {"output y (mm)", "actuator u (V)", "time t (s)", "overshoot limit", "settling band",
        "spread over parameter draws", "measured", "predicted", "actuator limit",
        "predicted effort", "measured effort", "Actuator effort", "Predicted closed loop at K = 6"})
    CHECK_MESSAGE(p.HasText(label), label);
}
