// The locus figure: where the closed-loop poles of the chosen loop go as the gain K grows, over
// the region of the s-plane the specs admit.
//
// Drawn (bottom to top):
//   the admissible region shaded (kRegion, translucent) and each constraint's boundary curve
//   (kLimit, dashed) with its label placed at the curve's `label_at` point;
//   every locus branch (kMuted, solid), ordered by increasing K, with an arrow head one third
//   along it showing the direction of increasing K;
//   the parts of the branches inside the band highlighted (kBand, thick);
//   open-loop poles as crosses and zeros as circles (kText), the imaginary axis (kMuted);
//   the band-edge gains as text next to the pole on the boundary ("K = 0.42");
//   the recommended gain's closed-loop poles as filled diamonds (kModel) with a legend entry.
// Axes: "real part σ (1/s)" and "imaginary part ω (rad/s)". The view is the given one, or (when
// lo >= hi) chosen to hold the open-loop poles and zeros, the highlighted segments and the
// recommended poles with some room (branches leaving to infinity are clipped).
#ifndef LOOPWRIGHT_IO_LOCUS_FIGURE_H_
#define LOOPWRIGHT_IO_LOCUS_FIGURE_H_

#include <complex>
#include <string>
#include <vector>

namespace lw {

using ComplexPath = std::vector<std::complex<double>>;

struct RegionBoundaryCurve {
  std::string label;  // e.g. "ζ ≥ 0.6", "σ ≥ 0.8 /s", "ωn ≤ 12 rad/s"
  ComplexPath curve;
  std::complex<double> label_at;  // where the label goes
};

struct GainLabel {
  std::complex<double> at;  // the pole on the boundary at that gain
  std::string text;         // e.g. "K = 0.42"
};

struct LocusFigureData {
  std::string title;
  std::vector<ComplexPath> branches;  // each ordered by increasing K
  ComplexPath open_loop_poles, open_loop_zeros;
  std::vector<ComplexPath> region;  // admissible region as closed polygons (shaded)
  std::vector<RegionBoundaryCurve> boundaries;
  std::vector<ComplexPath> in_band;  // pieces of branches inside the band
  std::vector<GainLabel> edge_labels;
  ComplexPath recommended_poles;
  std::string recommended_label;  // e.g. "recommended K = 0.8"
  std::string band_label = "in band";
  // The view; automatic when re_lo >= re_hi (or im_lo >= im_hi).
  double re_lo = 0, re_hi = 0, im_lo = 0, im_hi = 0;
  std::vector<std::string> caption;  // at most 4 lines
};

// Writes the figure (.svg, .png, .pdf; figure.h). Throws UsageError on a bad path or caption.
void WriteLocusFigure(const std::string& path, const LocusFigureData& data);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_LOCUS_FIGURE_H_
