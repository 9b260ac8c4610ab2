#include "io/figure.h"

#include <plplot/plplot.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstring>
#include <numbers>
#include <optional>

#include "io/atomic_file.h"
#include "io/figure_reduce.h"
#include "lti/error.h"

namespace lw {
namespace {

struct Rgb {
  int r, g, b;
};

// Okabe & Ito (2008) palette plus the text grey; order matches enum Ink.
constexpr Rgb kInkRgb[] = {
    {0x33, 0x33, 0x33},  // kText
    {0x00, 0x72, 0xB2},  // kMeasured
    {0xD5, 0x5E, 0x00},  // kModel
    {0x00, 0x9E, 0x73},  // kInput
    {0xCC, 0x79, 0xA7},  // kResidual
    {0xE6, 0x9F, 0x00},  // kBand
    {0x56, 0xB4, 0xE9},  // kRegion
    {0x00, 0x00, 0x00},  // kLimit
    {0x7F, 0x7F, 0x7F},  // kMuted
};
constexpr int kInkCount = sizeof(kInkRgb) / sizeof(kInkRgb[0]);
constexpr int kGridIndex = 13;     // colour map 0 slot of the grid
constexpr int kFrameIndex = 14;    // frame and tick labels
constexpr int kScratchIndex = 15;  // translucent fills

int InkIndex(Ink ink) { return 1 + static_cast<int>(ink); }

// PLplot calls this instead of printing and exiting (plsexit): we turn it into an exception.
int ExitHandler(const char* message) {
  throw JobFailed(std::string("PLplot stopped: ") + (message ? message : "unknown error"));
}
// plabort reports through plsError's buffer; printing is suppressed by this handler.
void AbortHandler(const char*) {}

std::string Escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    out += c;
    if (c == '#') out += '#';
  }
  return out;
}

}  // namespace

std::string InkHex(Ink ink) {
  const Rgb& c = kInkRgb[static_cast<int>(ink)];
  char buf[8];
  std::snprintf(buf, sizeof buf, "#%02X%02X%02X", c.r, c.g, c.b);
  return buf;
}

FigureFormat FigureFormatOf(const std::string& path) {
  auto dot = path.find_last_of('.');
  std::string ext = dot == std::string::npos ? "" : path.substr(dot + 1);
  for (char& c : ext) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (ext == "svg") return FigureFormat::kSvg;
  if (ext == "png") return FigureFormat::kPng;
  if (ext == "pdf") return FigureFormat::kPdf;
  throw UsageError("figure '" + path + "': the file name must end in .svg, .png or .pdf");
}

struct Figure::State {
  std::string path;
  std::optional<AtomicFile> file;
  PLINT stream = -1;
  PLINT error_code = 0;
  char error_message[1024] = {0};
  bool broken = false;  // PLplot stopped; its stream must not be touched again
  bool saved = false;
  int width = 0, height = 0;
  std::vector<double> panel_heights;
  int caption_lines = 0;
  // The current panel: viewport (normalised page coordinates) and window (transformed data).
  int panel = -1;
  double vx0 = 0, vx1 = 1, vy0 = 0, vy1 = 1;
  double wx0 = 0, wx1 = 1, wy0 = 0, wy1 = 1;
  bool xlog = false, ylog = false;

  void Select() const { plsstrm(stream); }
  void Check() {
    if (error_code != 0) {
      std::string message = error_message;
      while (!message.empty() && (message.back() == '\n' || message.back() == ' '))
        message.pop_back();
      error_code = 0;
      throw JobFailed("cannot draw figure '" + path + "': " + message);
    }
  }
  double Tx(double x) const { return xlog ? std::log10(x) : x; }
  double Ty(double y) const { return ylog ? std::log10(y) : y; }
  // Data-per-pixel scales of the current panel (transformed coordinates).
  double XPerPx() const { return (wx1 - wx0) / ((vx1 - vx0) * width); }
  double YPerPx() const { return (wy1 - wy0) / ((vy1 - vy0) * height); }
  void SetInk(Ink ink) const { plcol0(InkIndex(ink)); }
  void SetTranslucent(Ink ink, double alpha) const {
    const Rgb& c = kInkRgb[static_cast<int>(ink)];
    plscol0a(kScratchIndex, c.r, c.g, c.b, alpha);
    plcol0(kScratchIndex);
  }
  void SetStroke(const Stroke& s) const {
    SetInk(s.ink);
    plwidth(s.width);
    PLINT mark[2], space[2];
    switch (s.dash) {
      case Dash::kSolid:
        plstyl(0, nullptr, nullptr);
        return;
      case Dash::kDashed:
        mark[0] = 3000, space[0] = 1800;
        plstyl(1, mark, space);
        return;
      case Dash::kDotted:
        mark[0] = 500, space[0] = 1100;
        plstyl(1, mark, space);
        return;
      case Dash::kDashDot:
        mark[0] = 3000, space[0] = 1100, mark[1] = 500, space[1] = 1100;
        plstyl(2, mark, space);
        return;
    }
  }
  void RequirePanel(const char* what) const {
    if (panel < 0) throw UsageError(std::string("Figure::") + what + " before BeginPanel");
  }
};

Figure::Figure(const std::string& path, int width, int height, std::vector<double> panel_heights,
               int caption_lines)
    : state_(std::make_unique<State>()) {
  FigureFormat format = FigureFormatOf(path);
  if (width < 200 || height < 150 || width > 20000 || height > 20000)
    throw UsageError("figure '" + path + "': the page must be 200..20000 by 150..20000 units");
  if (panel_heights.empty()) throw UsageError("figure '" + path + "': needs at least one panel");
  for (double h : panel_heights)
    if (!(h > 0)) throw UsageError("figure '" + path + "': panel heights must be > 0");
  if (caption_lines < 0) throw UsageError("figure '" + path + "': caption_lines must be >= 0");
  State& s = *state_;
  s.path = path;
  s.width = width;
  s.height = height;
  s.panel_heights = std::move(panel_heights);
  s.caption_lines = caption_lines;
  s.file.emplace(path);  // creates the temporary file PLplot will write into

  plmkstrm(&s.stream);
  s.Select();
  plsError(&s.error_code, s.error_message);
  plsabort(AbortHandler);
  plsexit(ExitHandler);
  const char* device = format == FigureFormat::kSvg   ? "svg"
                       : format == FigureFormat::kPng ? "pngcairo"
                                                      : "pdfcairo";
  plsdev(device);
  plsfnam(s.file->temporary_path().c_str());
  plspage(0, 0, width, height, 0, 0);
  plscmap0n(16);
  plscolbg(255, 255, 255);
  for (int i = 0; i < kInkCount; ++i) plscol0(1 + i, kInkRgb[i].r, kInkRgb[i].g, kInkRgb[i].b);
  plscol0(kGridIndex, 0xD9, 0xD9, 0xD9);
  plscol0(kFrameIndex, 0x40, 0x40, 0x40);
  plfontld(1);
  try {
    plinit();
  } catch (...) {
    s.broken = true;
    throw;
  }
  pladv(0);
  plschr(0, 0.72);
  s.Check();
}

Figure::~Figure() {
  if (state_ && !state_->broken && !state_->saved && state_->stream >= 0) {
    state_->Select();
    plend1();
  }
}

namespace {

// Page layout in pixels, turned into normalised coordinates by the page size.
constexpr double kLeftPx = 84, kRightPx = 26, kTopPx = 30, kTitlePx = 26, kBottomPx = 50;
constexpr double kGapPx = 16;  // below a panel without x labels
constexpr double kCaptionLinePx = 19;

}  // namespace

void Figure::BeginPanel(int index, const Axis& x, const Axis& y, const std::string& title) {
  State& s = *state_;
  if (index < 0 || index >= static_cast<int>(s.panel_heights.size()))
    throw UsageError("figure '" + s.path + "': no panel " + std::to_string(index));
  for (const Axis* a : {&x, &y}) {
    if (!(std::isfinite(a->lo) && std::isfinite(a->hi) && a->lo < a->hi))
      throw UsageError("figure '" + s.path + "': axis '" + a->label + "' needs finite lo < hi");
    if (a->log && !(a->lo > 0))
      throw UsageError("figure '" + s.path + "': log axis '" + a->label + "' needs lo > 0");
    if (!(std::isfinite(a->tick) && a->tick >= 0.0) || (a->log && a->tick > 0.0))
      throw UsageError("figure '" + s.path + "': axis '" + a->label +
                       "' tick must be 0 or, on a linear axis, a finite interval > 0");
  }
  s.Select();
  // Stack the panels between the caption area and the top margin; only the bottom panel
  // carries the x tick labels and axis label, the others a small gap.
  const double h = s.height, w = s.width;
  const double bottom = (s.caption_lines > 0 ? s.caption_lines * kCaptionLinePx + 12 : 0);
  const double n = static_cast<double>(s.panel_heights.size());
  const double usable = h - bottom - kTopPx - kBottomPx - (n - 1) * (kTitlePx + kGapPx);
  if (usable < 40 * n) throw UsageError("figure '" + s.path + "': page too small for its panels");
  double total = 0;
  for (double ph : s.panel_heights) total += ph;
  double top = h - kTopPx;  // pixels from the bottom of the page
  for (int i = 0; i < index; ++i) top -= s.panel_heights[i] / total * usable + kGapPx + kTitlePx;
  double panel_h = s.panel_heights[index] / total * usable;
  s.vx0 = kLeftPx / w;
  s.vx1 = 1 - kRightPx / w;
  s.vy1 = top / h;
  s.vy0 = (top - panel_h) / h;
  s.xlog = x.log;
  s.ylog = y.log;
  s.wx0 = s.Tx(x.lo), s.wx1 = s.Tx(x.hi), s.wy0 = s.Ty(y.lo), s.wy1 = s.Ty(y.hi);
  s.panel = index;

  plvpor(s.vx0, s.vx1, s.vy0, s.vy1);
  plwind(s.wx0, s.wx1, s.wy0, s.wy1);
  // Grid first (faint, dotted), then the frame with ticks and labels on top of it.
  plcol0(kGridIndex);
  plwidth(0.8);
  PLINT mark = 400, space = 900;
  plstyl(1, &mark, &space);
  // A given tick interval has no minor ticks (one subinterval); 0 lets PLplot choose both.
  const PLINT x_sub = x.tick > 0.0 ? 1 : 0, y_sub = y.tick > 0.0 ? 1 : 0;
  plbox(x.log ? "gl" : "g", x.tick, x_sub, y.log ? "gl" : "g", y.tick, y_sub);
  plstyl(0, nullptr, nullptr);
  plcol0(kFrameIndex);
  plwidth(1.0);
  std::string xopt = std::string("bcst") + (x.label.empty() ? "" : "n") + (x.log ? "l" : "");
  std::string yopt = std::string("bcnstv") + (y.log ? "l" : "");
  plbox(xopt.c_str(), x.tick, x_sub, yopt.c_str(), y.tick, y_sub);
  plcol0(InkIndex(Ink::kText));
  if (!x.label.empty()) plmtex("b", 2.9, 0.5, 0.5, Escape(x.label).c_str());
  plmtex("l", 4.6, 0.5, 0.5, Escape(y.label).c_str());
  if (!title.empty()) {
    plschr(0, 0.82);
    plmtex("t", 0.7, 0.0, 0.0, Escape(title).c_str());
    plschr(0, 0.72);
  }
  s.Check();
}

int Figure::PanelColumns() const {
  const State& s = *state_;
  return std::max(1, static_cast<int>(std::lround((s.vx1 - s.vx0) * s.width)));
}

void Figure::Line(const std::vector<double>& x, const std::vector<double>& y,
                  const Stroke& stroke) {
  State& s = *state_;
  s.RequirePanel("Line");
  if (x.size() != y.size())
    throw UsageError("figure '" + s.path + "': line x and y differ in size");
  s.Select();
  const std::vector<double>* px = &x;
  const std::vector<double>* py = &y;
  ReducedTrace reduced;
  const int columns = PanelColumns();
  if (x.size() > 4 * static_cast<size_t>(columns) && !s.xlog &&
      std::is_sorted(x.begin(), x.end())) {
    reduced = ReduceForDrawing(x, y, s.wx0, s.wx1, columns);
    px = &reduced.x;
    py = &reduced.y;
  }
  s.SetStroke(stroke);
  std::vector<PLFLT> bx, by;
  auto flush = [&] {
    if (bx.size() >= 2) plline(static_cast<PLINT>(bx.size()), bx.data(), by.data());
    bx.clear();
    by.clear();
  };
  for (size_t i = 0; i < px->size(); ++i) {
    double xi = (*px)[i], yi = (*py)[i];
    bool ok = std::isfinite(xi) && std::isfinite(yi) && (!s.xlog || xi > 0) && (!s.ylog || yi > 0);
    if (!ok) {
      flush();
      continue;
    }
    bx.push_back(s.Tx(xi));
    by.push_back(s.Ty(yi));
  }
  flush();
  plstyl(0, nullptr, nullptr);
  plwidth(1.0);
  s.Check();
}

namespace {

// A marker's outline around (0, 0) in pixels, radius about r.
std::vector<std::pair<double, double>> MarkerShape(Marker marker, double r) {
  std::vector<std::pair<double, double>> p;
  switch (marker) {
    case Marker::kCircle:
      for (int k = 0; k <= 20; ++k) {
        double a = 2 * std::numbers::pi * k / 20;
        p.push_back({r * std::cos(a), r * std::sin(a)});
      }
      break;
    case Marker::kCross:  // drawn as one polyline: \ then up the other stroke
      p = {{-r, -r}, {r, r}, {0, 0}, {-r, r}, {r, -r}};
      break;
    case Marker::kSquare:
      r *= 0.85;
      p = {{-r, -r}, {r, -r}, {r, r}, {-r, r}, {-r, -r}};
      break;
    case Marker::kTriangle:
      p = {{0, 1.15 * r}, {-r, -0.7 * r}, {r, -0.7 * r}, {0, 1.15 * r}};
      break;
    case Marker::kDiamond:
      p = {{0, 1.2 * r}, {r, 0}, {0, -1.2 * r}, {-r, 0}, {0, 1.2 * r}};
      break;
  }
  return p;
}

}  // namespace

void Figure::Markers(const std::vector<double>& x, const std::vector<double>& y, Ink ink,
                     Marker marker, double size) {
  DrawMarkers(x, y, ink, marker, size, false);
}

void Figure::FilledMarkers(const std::vector<double>& x, const std::vector<double>& y, Ink ink,
                           Marker marker, double size) {
  DrawMarkers(x, y, ink, marker == Marker::kCross ? Marker::kDiamond : marker, size, true);
}

void Figure::DrawMarkers(const std::vector<double>& x, const std::vector<double>& y, Ink ink,
                         Marker marker, double size, bool filled) {
  State& s = *state_;
  s.RequirePanel("Markers");
  if (x.size() != y.size()) throw UsageError("figure '" + s.path + "': marker x and y differ");
  s.Select();
  s.SetInk(ink);
  plwidth(1.6);
  auto shape = MarkerShape(marker, 5.0 * size);
  if (filled) shape.pop_back();  // the closing corner: plfill closes by itself
  std::vector<PLFLT> bx(shape.size()), by(shape.size());
  for (size_t i = 0; i < x.size(); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) continue;
    double cx = s.Tx(x[i]), cy = s.Ty(y[i]);
    for (size_t k = 0; k < shape.size(); ++k) {
      bx[k] = cx + shape[k].first * s.XPerPx();
      by[k] = cy + shape[k].second * s.YPerPx();
    }
    if (filled)
      plfill(static_cast<PLINT>(bx.size()), bx.data(), by.data());
    else
      plline(static_cast<PLINT>(bx.size()), bx.data(), by.data());
  }
  plwidth(1.0);
  s.Check();
}

void Figure::Arrow(double x, double y, double dx, double dy, Ink ink, double size) {
  State& s = *state_;
  s.RequirePanel("Arrow");
  if (!std::isfinite(x) || !std::isfinite(y)) return;
  s.Select();
  // Direction in pixels (data direction scaled by the panel's pixel sizes).
  double px = dx / s.XPerPx(), py = dy / s.YPerPx();
  double len = std::hypot(px, py);
  if (!(len > 0) || !std::isfinite(len)) return;
  px /= len, py /= len;
  double r = 7.0 * size;
  double cx = s.Tx(x), cy = s.Ty(y);
  // Tip ahead of the point, two barbs behind it.
  double tip[2] = {r * px, r * py};
  double b1[2] = {-0.6 * r * px - 0.5 * r * py, -0.6 * r * py + 0.5 * r * px};
  double b2[2] = {-0.6 * r * px + 0.5 * r * py, -0.6 * r * py - 0.5 * r * px};
  PLFLT ax[3] = {cx + tip[0] * s.XPerPx(), cx + b1[0] * s.XPerPx(), cx + b2[0] * s.XPerPx()};
  PLFLT ay[3] = {cy + tip[1] * s.YPerPx(), cy + b1[1] * s.YPerPx(), cy + b2[1] * s.YPerPx()};
  s.SetInk(ink);
  plfill(3, ax, ay);
  s.Check();
}

void Figure::Fill(const std::vector<double>& x, const std::vector<double>& y, Ink ink,
                  double alpha) {
  State& s = *state_;
  s.RequirePanel("Fill");
  if (x.size() != y.size()) throw UsageError("figure '" + s.path + "': fill x and y differ");
  if (!(alpha > 0 && alpha <= 1))
    throw UsageError("figure '" + s.path + "': alpha must be in (0, 1]");
  std::vector<PLFLT> bx, by;
  for (size_t i = 0; i < x.size(); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) continue;
    bx.push_back(s.Tx(x[i]));
    by.push_back(s.Ty(y[i]));
  }
  if (bx.size() < 3) return;
  s.Select();
  s.SetTranslucent(ink, alpha);
  plfill(static_cast<PLINT>(bx.size()), bx.data(), by.data());
  s.Check();
}

void Figure::FillBetween(const std::vector<double>& x, const std::vector<double>& lower,
                         const std::vector<double>& upper, Ink ink, double alpha) {
  State& s = *state_;
  if (x.size() != lower.size() || x.size() != upper.size())
    throw UsageError("figure '" + s.path + "': envelope x, lower and upper differ in size");
  // Reduce long envelopes: lower by its minima, upper by its maxima, per pixel column.
  std::vector<double> px, py;
  const int columns = PanelColumns();
  auto side = [&](const std::vector<double>& v, bool take_max) {
    std::vector<double> sx, sy;
    if (x.size() > 4 * static_cast<size_t>(columns) && std::is_sorted(x.begin(), x.end()) &&
        !s.xlog) {
      ReducedTrace r = ReduceForDrawing(x, v, s.wx0, s.wx1, columns);
      // Keep only the extreme of each adjacent pair that lies on the outer side.
      for (size_t i = 0; i < r.x.size(); ++i) {
        if (i + 1 < r.x.size() && r.x[i] != r.x[i + 1] &&
            std::floor((r.x[i] - s.wx0) / (s.wx1 - s.wx0) * columns) ==
                std::floor((r.x[i + 1] - s.wx0) / (s.wx1 - s.wx0) * columns)) {
          bool first = take_max ? r.y[i] >= r.y[i + 1] : r.y[i] <= r.y[i + 1];
          sx.push_back(first ? r.x[i] : r.x[i + 1]);
          sy.push_back(first ? r.y[i] : r.y[i + 1]);
          ++i;
        } else {
          sx.push_back(r.x[i]);
          sy.push_back(r.y[i]);
        }
      }
    } else {
      sx = x;
      sy = v;
    }
    return std::make_pair(sx, sy);
  };
  auto [lx, ly] = side(lower, false);
  auto [ux, uy] = side(upper, true);
  px = lx;
  py = ly;
  for (size_t i = ux.size(); i-- > 0;) {
    px.push_back(ux[i]);
    py.push_back(uy[i]);
  }
  Fill(px, py, ink, alpha);
}

void Figure::VerticalSpan(double x_lo, double x_hi, Ink ink, double alpha) {
  State& s = *state_;
  s.RequirePanel("VerticalSpan");
  if (s.xlog) {
    x_lo = std::max(x_lo, std::pow(10.0, s.wx0));
    x_hi = std::min(x_hi, std::pow(10.0, s.wx1));
  } else {
    x_lo = std::max(x_lo, s.wx0);
    x_hi = std::min(x_hi, s.wx1);
  }
  if (!(x_lo < x_hi)) return;
  double y0 = s.ylog ? std::pow(10.0, s.wy0) : s.wy0, y1 = s.ylog ? std::pow(10.0, s.wy1) : s.wy1;
  Fill({x_lo, x_hi, x_hi, x_lo}, {y0, y0, y1, y1}, ink, alpha);
}

void Figure::HorizontalLine(double y, const Stroke& stroke) {
  State& s = *state_;
  s.RequirePanel("HorizontalLine");
  double x0 = s.xlog ? std::pow(10.0, s.wx0) : s.wx0, x1 = s.xlog ? std::pow(10.0, s.wx1) : s.wx1;
  Line({x0, x1}, {y, y}, stroke);
}

void Figure::VerticalLine(double x, const Stroke& stroke) {
  State& s = *state_;
  s.RequirePanel("VerticalLine");
  double y0 = s.ylog ? std::pow(10.0, s.wy0) : s.wy0, y1 = s.ylog ? std::pow(10.0, s.wy1) : s.wy1;
  Line({x, x}, {y0, y1}, stroke);
}

void Figure::Text(double x, double y, const std::string& text, Ink ink, double align,
                  double angle_deg, double size) {
  State& s = *state_;
  s.RequirePanel("Text");
  if (!std::isfinite(x) || !std::isfinite(y) || text.empty()) return;
  s.Select();
  double a = angle_deg * std::numbers::pi / 180;
  s.SetInk(ink);
  plschr(0, 0.72 * size / 0.85);
  plptex(s.Tx(x), s.Ty(y), std::cos(a) * s.XPerPx(), std::sin(a) * s.YPerPx(), align,
         Escape(text).c_str());
  plschr(0, 0.72);
  s.Check();
}

void Figure::Legend(const std::vector<LegendEntry>& entries, int corner) {
  State& s = *state_;
  s.RequirePanel("Legend");
  if (entries.empty()) return;
  s.Select();
  // Work in pixel coordinates of the panel for the legend, then restore the data window.
  const double pw = (s.vx1 - s.vx0) * s.width, ph = (s.vy1 - s.vy0) * s.height;
  plwind(0, pw, 0, ph);
  size_t longest = 0;
  for (const auto& e : entries) {
    size_t chars = 0;  // UTF-8 code points
    for (unsigned char c : e.text) chars += (c & 0xC0) != 0x80;
    longest = std::max(longest, chars);
  }
  const double row = 17, sample = 26, pad = 7;
  const double bw = pad * 3 + sample + 9.2 * static_cast<double>(longest);
  const double bh = pad * 2 + row * static_cast<double>(entries.size());
  double x0 = (corner == 1 || corner == 3) ? 8 : pw - 8 - bw;
  double y0 = (corner == 2 || corner == 3) ? 8 : ph - 8 - bh;
  PLFLT box_x[4] = {x0, x0 + bw, x0 + bw, x0}, box_y[4] = {y0, y0, y0 + bh, y0 + bh};
  plscol0a(kScratchIndex, 255, 255, 255, 0.88);
  plcol0(kScratchIndex);
  plfill(4, box_x, box_y);
  plcol0(kGridIndex);
  plwidth(1.0);
  PLFLT frame_x[5] = {x0, x0 + bw, x0 + bw, x0, x0}, frame_y[5] = {y0, y0, y0 + bh, y0 + bh, y0};
  plline(5, frame_x, frame_y);
  for (size_t i = 0; i < entries.size(); ++i) {
    const auto& e = entries[i];
    double cy = y0 + bh - pad - row * (static_cast<double>(i) + 0.5);
    if (!e.markers.empty()) {
      s.SetInk(e.stroke.ink);
      plwidth(1.4);
      for (size_t m = 0; m < e.markers.size(); ++m) {
        auto shape = MarkerShape(e.markers[m], 4.5);
        std::vector<PLFLT> mx, my;
        double cx = x0 + pad + 6 + 14 * static_cast<double>(m);
        for (const auto& [dx, dy] : shape) mx.push_back(cx + dx), my.push_back(cy + dy);
        plline(static_cast<PLINT>(mx.size()), mx.data(), my.data());
      }
    } else if (e.filled_box) {
      PLFLT fx[4] = {x0 + pad, x0 + pad + sample, x0 + pad + sample, x0 + pad};
      PLFLT fy[4] = {cy - 5, cy - 5, cy + 5, cy + 5};
      s.SetTranslucent(e.stroke.ink, 0.35);
      plfill(4, fx, fy);
    } else {
      PLFLT lx[2] = {x0 + pad, x0 + pad + sample}, ly[2] = {cy, cy};
      s.SetStroke(e.stroke);
      plline(2, lx, ly);
      plstyl(0, nullptr, nullptr);
    }
    plwidth(1.0);
    s.SetInk(Ink::kText);
    plptex(x0 + 2 * pad + sample, cy - 3.5, 1, 0, 0, Escape(e.text).c_str());
  }
  plwind(s.wx0, s.wx1, s.wy0, s.wy1);
  s.Check();
}

void Figure::Caption(const std::vector<std::string>& lines) {
  State& s = *state_;
  if (static_cast<int>(lines.size()) > s.caption_lines)
    throw UsageError("figure '" + s.path + "': " + std::to_string(lines.size()) +
                     " caption lines but room for " + std::to_string(s.caption_lines));
  s.Select();
  const double area = s.caption_lines * kCaptionLinePx + 12;
  plvpor(kLeftPx / s.width, 1 - kRightPx / s.width, 0, area / s.height);
  plwind(0, 1, 0, area);
  s.SetInk(Ink::kText);
  for (size_t i = 0; i < lines.size(); ++i) {
    double y = area - 8 - kCaptionLinePx * (static_cast<double>(i) + 0.75);
    plptex(0, y, 1, 0, 0, Escape(lines[i]).c_str());
  }
  if (s.panel >= 0) {
    plvpor(s.vx0, s.vx1, s.vy0, s.vy1);
    plwind(s.wx0, s.wx1, s.wy0, s.wy1);
  }
  s.Check();
}

void Figure::Save() {
  State& s = *state_;
  if (s.saved || s.broken) throw UsageError("figure '" + s.path + "': saved twice");
  s.Select();
  s.saved = true;
  plend1();
  s.Check();
  s.file->Commit();
}

DataRange RangeOf(const std::vector<std::vector<double>>& series, double fraction) {
  double lo = INFINITY, hi = -INFINITY;
  for (const auto& v : series)
    for (double x : v)
      if (std::isfinite(x)) lo = std::min(lo, x), hi = std::max(hi, x);
  if (!(lo <= hi)) return {0.0, 1.0};
  if (hi - lo <= 1e-12 * std::max(1.0, std::abs(lo))) {
    double half = std::max(0.5, std::abs(lo) * 0.1);
    return {lo - half, hi + half};
  }
  double pad = (hi - lo) * fraction;
  return {lo - pad, hi + pad};
}

}  // namespace lw
