#include "io/locus_figure.h"

#include <algorithm>
#include <cmath>

#include "io/figure.h"
#include "lti/error.h"

namespace lw {

namespace {

void Split(const ComplexPath& p, std::vector<double>& re, std::vector<double>& im) {
  re.clear();
  im.clear();
  for (const auto& z : p) {
    re.push_back(z.real());
    im.push_back(z.imag());
  }
}

struct View {
  double re_lo, re_hi, im_lo, im_hi;
};

View AutomaticView(const LocusFigureData& d) {
  std::vector<double> re, im;
  auto add = [&](const ComplexPath& p) {
    for (const auto& z : p)
      if (std::isfinite(z.real()) && std::isfinite(z.imag())) {
        re.push_back(z.real());
        im.push_back(z.imag());
      }
  };
  add(d.open_loop_poles);
  add(d.open_loop_zeros);
  add(d.recommended_poles);
  for (const auto& p : d.in_band) add(p);
  for (const auto& g : d.edge_labels) add({g.at});
  re.push_back(0.0);
  im.push_back(0.0);
  DataRange r = RangeOf({re}, 0.0), i = RangeOf({im}, 0.0);
  double span = std::max({r.hi - r.lo, i.hi - i.lo, 1e-6});
  double pad = 0.25 * span;
  double im_half = std::max(std::abs(i.lo), std::abs(i.hi)) + pad;
  return {r.lo - pad, std::max(r.hi, 0.0) + pad, -im_half, im_half};
}

}  // namespace

void WriteLocusFigure(const std::string& path, const LocusFigureData& d) {
  if (d.caption.size() > 4)
    throw UsageError("locus figure '" + path + "': at most 4 caption lines");
  View v{d.re_lo, d.re_hi, d.im_lo, d.im_hi};
  if (!(v.re_lo < v.re_hi) || !(v.im_lo < v.im_hi)) v = AutomaticView(d);

  Figure fig(path, 900, 720, {1.0}, static_cast<int>(d.caption.size()));
  fig.BeginPanel(0, {"real part σ (1/s)", v.re_lo, v.re_hi},
                 {"imaginary part ω (rad/s)", v.im_lo, v.im_hi}, d.title);
  std::vector<double> re, im;
  for (const auto& poly : d.region) {
    Split(poly, re, im);
    fig.Fill(re, im, Ink::kRegion, 0.22);
  }
  fig.VerticalLine(0.0, {Ink::kMuted, Dash::kSolid, 1.0});
  fig.HorizontalLine(0.0, {Ink::kMuted, Dash::kSolid, 0.6});
  for (const auto& b : d.boundaries) {
    Split(b.curve, re, im);
    fig.Line(re, im, {Ink::kLimit, Dash::kDashed, 1.2});
    fig.Text(b.label_at.real(), b.label_at.imag(), b.label, Ink::kLimit, 0.0, 0.0, 0.8);
  }
  for (const auto& branch : d.branches) {
    Split(branch, re, im);
    fig.Line(re, im, {Ink::kMuted, Dash::kSolid, 1.6});
    // An arrow head a third of the way along the visible part, pointing to increasing K.
    std::vector<size_t> visible;
    for (size_t k = 0; k + 1 < branch.size(); ++k)
      if (branch[k].real() > v.re_lo && branch[k].real() < v.re_hi && branch[k].imag() > v.im_lo &&
          branch[k].imag() < v.im_hi && branch[k + 1] != branch[k])
        visible.push_back(k);
    if (visible.size() >= 3) {
      size_t k = visible[visible.size() / 3];
      std::complex<double> dir = branch[k + 1] - branch[k];
      fig.Arrow(branch[k].real(), branch[k].imag(), dir.real(), dir.imag(), Ink::kText, 1.0);
    }
  }
  for (const auto& piece : d.in_band) {
    Split(piece, re, im);
    fig.Line(re, im, {Ink::kBand, Dash::kSolid, 4.0});
  }
  Split(d.open_loop_poles, re, im);
  fig.Markers(re, im, Ink::kText, Marker::kCross, 1.2);
  Split(d.open_loop_zeros, re, im);
  fig.Markers(re, im, Ink::kText, Marker::kCircle, 1.2);
  for (const auto& g : d.edge_labels) {
    fig.FilledMarkers({g.at.real()}, {g.at.imag()}, Ink::kLimit, Marker::kCircle, 0.55);
    fig.Text(g.at.real(), g.at.imag() + 0.03 * (v.im_hi - v.im_lo), g.text, Ink::kText, 0.0, 0.0,
             0.8);
  }
  Split(d.recommended_poles, re, im);
  fig.FilledMarkers(re, im, Ink::kModel, Marker::kDiamond, 1.3);

  std::vector<LegendEntry> legend = {
      {"locus branch", {Ink::kMuted, Dash::kSolid, 1.6}},
      {d.band_label, {Ink::kBand, Dash::kSolid, 4.0}},
      {"admissible region", {Ink::kRegion}, true},
      {"constraint boundary", {Ink::kLimit, Dash::kDashed, 1.2}},
      {"open-loop pole, zero", {Ink::kText}, false, {Marker::kCross, Marker::kCircle}}};
  if (!d.recommended_poles.empty())
    legend.push_back({d.recommended_label.empty() ? "recommended gain" : d.recommended_label,
                      {Ink::kModel, Dash::kSolid, 5.0}});
  fig.Legend(legend, 1);
  if (!d.caption.empty()) fig.Caption(d.caption);
  fig.Save();
}

}  // namespace lw
