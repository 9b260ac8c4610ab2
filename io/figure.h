// Figures: a small wrapper around PLplot for loopwright's plots, in a look of our own.
//
// A Figure is one page of stacked panels (top to bottom) written to a file whose extension picks
// the output: .svg (PLplot's svg driver: lines as <polyline>, text as <text>), .png (pngcairo),
// .pdf (pdfcairo). The file is written atomically (atomic_file.h): PLplot draws into the
// temporary file and Save() renames it onto the target, so a failed figure leaves nothing new.
//
// Look ("loopwright ink"): white paper, dark grey text and frame, a faint dotted grid, and data
// inks from the colour-blind-safe palette of Okabe & Ito, "Color Universal Design" (2008):
//   kMeasured  blue            #0072B2  what the rig recorded
//   kModel     vermillion      #D55E00  what a model predicts (fit, prediction)
//   kInput     bluish green    #009E73  actuator / input signals
//   kResidual  reddish purple  #CC79A7  residuals, secondary series
//   kBand      orange          #E69F00  gain bands, highlighted in-band parts
//   kRegion    sky blue        #56B4E9  admissible regions, settling bands (usually shaded)
//   kLimit     black           #000000  spec limits, actuator limits (usually dashed)
//   kMuted     grey            #7F7F7F  reference lines, secondary marks
// Series are told apart by ink and by line style, so a grey-scale print still separates them.
//
// Coordinates are data units; a log axis (Axis::log) takes positive values and is drawn with
// decade labels. Text may hold UTF-8 (Greek letters, "±"); the PLplot escape character '#' is
// escaped by the wrapper. Lines with NaN are drawn as separate pieces (NaN = gap). Lines longer
// than 4 samples per pixel column are reduced with figure_reduce.h (min/max per column) when
// their x is non-decreasing, so a 10^6-sample recording draws as a few thousand points.
//
// Errors: an unknown extension or a bad panel/axis request throws UsageError; a PLplot failure
// throws JobFailed("cannot draw figure 'PATH': <PLplot's message>"). PLplot is given error
// handlers so that it prints nothing itself.
#ifndef LOOPWRIGHT_IO_FIGURE_H_
#define LOOPWRIGHT_IO_FIGURE_H_

#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace lw {

enum class Ink { kText, kMeasured, kModel, kInput, kResidual, kBand, kRegion, kLimit, kMuted };

// The hex colour "#RRGGBB" of an ink (as it appears in an SVG's stroke/fill attributes).
std::string InkHex(Ink ink);

enum class Dash { kSolid, kDashed, kDotted, kDashDot };

enum class Marker { kCircle, kCross, kSquare, kTriangle, kDiamond };

struct Axis {
  std::string label;          // with its unit, e.g. "time t (s)"
  double lo = 0.0, hi = 1.0;  // lo < hi, finite (and > 0 on a log axis)
  bool log = false;
  // Major tick interval in data units on a linear axis, ticks and grid at its multiples and no
  // minor ticks (e.g. 1 for a count); 0 leaves the ticks to PLplot.
  double tick = 0.0;
};

struct Stroke {
  Ink ink = Ink::kText;
  Dash dash = Dash::kSolid;
  double width = 1.5;  // in PLplot pen widths (about 1 px at the default page)
};

struct LegendEntry {
  std::string text;
  Stroke stroke;
  bool filled_box = false;           // a shaded square instead of a line sample
  std::vector<Marker> markers = {};  // marker samples (outlined) instead of a line, when not empty
};

enum class FigureFormat { kSvg, kPng, kPdf };

// The format chosen by a path's extension (case-insensitive); UsageError naming the path for
// any other extension.
FigureFormat FigureFormatOf(const std::string& path);

class Figure {
 public:
  // Opens the output. `width` and `height` are in pixels for PNG and points for SVG/PDF;
  // `panel_heights` are the relative heights of the stacked panels (>= 1 panel, each > 0);
  // `caption_lines` reserves room below the panels for that many caption lines.
  Figure(const std::string& path, int width, int height, std::vector<double> panel_heights,
         int caption_lines = 0);
  ~Figure();
  Figure(const Figure&) = delete;
  Figure& operator=(const Figure&) = delete;

  // Selects panel `index` (0 = top) and draws its frame, grid, ticks and axis labels; `title`
  // goes above it (may be empty). Later calls draw into this panel, clipped to it. An empty
  // x.label leaves the x tick labels off (for panels sharing the x axis of the one below).
  void BeginPanel(int index, const Axis& x, const Axis& y, const std::string& title = "");

  void Line(const std::vector<double>& x, const std::vector<double>& y, const Stroke& stroke);
  // Points as markers of `size` (relative, 1 = normal text height).
  void Markers(const std::vector<double>& x, const std::vector<double>& y, Ink ink, Marker marker,
               double size = 1.0);
  // Filled (`filled`) or outlined markers: a cross and a circle outline are one <polyline> each in
  // an SVG, filled shapes one <polygon> each.
  void FilledMarkers(const std::vector<double>& x, const std::vector<double>& y, Ink ink,
                     Marker marker, double size = 1.0);
  // A filled arrow head at (x, y) pointing along the data-space direction (dx, dy), e.g. the
  // direction of increasing gain along a locus branch.
  void Arrow(double x, double y, double dx, double dy, Ink ink, double size = 1.0);
  // A filled polygon (>= 3 corners) of `ink` with opacity `alpha` in (0, 1].
  void Fill(const std::vector<double>& x, const std::vector<double>& y, Ink ink, double alpha);
  // The area between lower(x) and upper(x) (same x for both), e.g. an uncertainty envelope.
  void FillBetween(const std::vector<double>& x, const std::vector<double>& lower,
                   const std::vector<double>& upper, Ink ink, double alpha);
  // A shaded vertical strip x in [x_lo, x_hi] over the panel's height (a gain band, say).
  void VerticalSpan(double x_lo, double x_hi, Ink ink, double alpha);
  void HorizontalLine(double y, const Stroke& stroke);
  void VerticalLine(double x, const Stroke& stroke);
  // Text at a data point; `align` 0 = left end at x, 0.5 = centred, 1 = right end; `angle_deg`
  // counter-clockwise; `size` relative to the normal text height.
  void Text(double x, double y, const std::string& text, Ink ink = Ink::kText, double align = 0.0,
            double angle_deg = 0.0, double size = 0.85);
  // A legend box in the panel's corner: 0 top right, 1 top left, 2 bottom right, 3 bottom left.
  void Legend(const std::vector<LegendEntry>& entries, int corner = 0);
  // The caption lines under the panels (as many as reserved in the constructor).
  void Caption(const std::vector<std::string>& lines);

  // Finishes the page and renames the file onto its path. Must be called once; a Figure
  // destroyed without Save() leaves no file.
  void Save();

  // The panel's plot area width in pixel columns at the page size (for ReduceForDrawing).
  int PanelColumns() const;

 private:
  void DrawMarkers(const std::vector<double>& x, const std::vector<double>& y, Ink ink,
                   Marker marker, double size, bool filled);
  struct State;
  std::unique_ptr<State> state_;
};

// Pads [lo, hi] by `fraction` of its width on each side; a degenerate range becomes a unit-wide
// one around its value. Ignores NaN values. For choosing axis limits from data.
struct DataRange {
  double lo = 0.0, hi = 1.0;
};
DataRange RangeOf(const std::vector<std::vector<double>>& series, double fraction = 0.05);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_FIGURE_H_
