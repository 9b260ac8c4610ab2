#include "app/band_plot.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <thread>

#include "app/figure_path.h"
#include "app/output.h"

namespace lw::app {
namespace {

using C = std::complex<double>;
constexpr double kInf = std::numeric_limits<double>::infinity();

// The finite gains that matter for the axis ranges: band edges, crossings, the recommendation.
std::vector<double> KeyGains(const BandPlotInput& in) {
  std::vector<double> k;
  auto add = [&](double g) {
    if (std::isfinite(g) && g > 0.0) k.push_back(g);
  };
  for (const auto& c : in.locus.crossings) add(c.gain);
  for (const auto& r : in.locus.gains()) add(r.lo), add(r.hi);
  for (const auto& r : in.response.gains()) add(r.lo), add(r.hi);
  if (in.robust)
    for (const auto& r : *in.robust) add(r.lo), add(r.hi);
  if (in.recommendation.found) add(in.recommendation.gain);
  if (k.empty()) {
    C s(0.0, in.loop.FrequencyScale());
    add(std::abs(in.loop.a(s)) / std::max(std::abs(in.loop.b(s)), 1e-300));
  }
  if (k.empty()) k.push_back(1.0);
  std::sort(k.begin(), k.end());
  return k;
}

std::vector<double> LogSpaced(double lo, double hi, int n) {
  std::vector<double> g(static_cast<size_t>(n));
  for (int i = 0; i < n; ++i) g[static_cast<size_t>(i)] = lo * std::pow(hi / lo, i / (n - 1.0));
  return g;
}

std::string GainText(double k) { return "K = " + FormatNumber(k, 3); }

// The admissible region of the dominant pole in the upper half plane, as one polygon in polar
// form around the origin: angle phi from the negative real axis up to acos(zeta_min), radius
// from the largest of the wn, sigma and wd bounds out to `far`.
ComplexPath UpperRegion(const Region& r, double far) {
  const double phi_max = r.zeta_min > 0.0 ? std::acos(r.zeta_min) : std::numbers::pi / 2;
  ComplexPath inner, poly;
  const int n = 240;
  for (int i = 0; i <= n; ++i) {
    double phi = phi_max * i / n;
    double rad = r.wn_min;
    if (r.sigma_min > 0.0)
      rad = std::max(rad, std::cos(phi) > 1e-12 ? r.sigma_min / std::cos(phi) : kInf);
    if (r.wd_min > 0.0)
      rad = std::max(rad, std::sin(phi) > 1e-12 ? r.wd_min / std::sin(phi) : kInf);
    rad = std::min(rad, far);
    inner.push_back(rad * C(-std::cos(phi), std::sin(phi)));
  }
  poly = inner;
  for (int i = n; i >= 0; --i) {
    double phi = phi_max * i / n;
    poly.push_back(far * C(-std::cos(phi), std::sin(phi)));
  }
  return poly;
}

ComplexPath Conjugated(const ComplexPath& p) {
  ComplexPath q;
  for (const C& z : p) q.push_back(std::conj(z));
  return q;
}

void AddBoundaries(const Region& r, double far, const LocusFigureData& d,
                   std::vector<RegionBoundaryCurve>& out) {
  const double w = d.re_hi - d.re_lo, h = d.im_hi - d.im_lo;
  if (r.zeta_min > 0.0) {
    C dir(-r.zeta_min, std::sqrt(1.0 - r.zeta_min * r.zeta_min));
    double at = 0.8 * std::min(-d.re_lo / std::max(r.zeta_min, 1e-9), d.im_hi / dir.imag());
    out.push_back({"ζ ≥ " + FormatNumber(r.zeta_min, 3),
                   {far * std::conj(dir), C(0.0, 0.0), far * dir},
                   at * dir + C(0.0, 0.03 * h)});
  }
  if (r.sigma_min > 0.0) {
    out.push_back({"σ ≥ " + FormatNumber(r.sigma_min, 3) + " 1/s",
                   {C(-r.sigma_min, -far), C(-r.sigma_min, far)},
                   C(-r.sigma_min - 0.02 * w, 0.9 * d.im_hi)});
  }
  if (r.wn_min > 0.0) {
    ComplexPath arc;
    for (int i = 0; i <= 180; ++i) {
      double a = std::numbers::pi / 2 + std::numbers::pi * i / 180.0;
      arc.push_back(std::polar(r.wn_min, a));
    }
    out.push_back({"ωn ≥ " + FormatNumber(r.wn_min, 3) + " rad/s", arc,
                   std::polar(r.wn_min, 0.8 * std::numbers::pi) + C(-0.02 * w, 0.0)});
  }
  if (r.wd_min > 0.0) {
    std::string label = "ωd ≥ " + FormatNumber(r.wd_min, 3) + " rad/s";
    out.push_back(
        {label, {C(-far, r.wd_min), C(0.0, r.wd_min)}, C(d.re_lo + 0.15 * w, r.wd_min + 0.03 * h)});
    out.push_back({label,
                   {C(-far, -r.wd_min), C(0.0, -r.wd_min)},
                   C(d.re_lo + 0.15 * w, -r.wd_min - 0.03 * h)});
  }
  if (r.decay_min > 0.0) {
    out.push_back({"other poles σ ≥ " + FormatNumber(r.decay_min, 3) + " 1/s",
                   {C(-r.decay_min, -far), C(-r.decay_min, far)},
                   C(-r.decay_min - 0.02 * w, 0.8 * d.im_lo)});
  }
}

// Pieces of the branches where the gain lies in `band`.
std::vector<ComplexPath> InBand(const std::vector<ComplexPath>& branches,
                                const std::vector<double>& gains, const GainSet& band) {
  std::vector<ComplexPath> pieces;
  for (const auto& b : branches) {
    ComplexPath piece;
    for (size_t i = 0; i < b.size(); ++i) {
      double k = i == 0 ? 0.0 : gains[i - 1];  // b[0] is K = 0
      if (i > 0 && Contains(band, k)) {
        piece.push_back(b[i]);
      } else if (!piece.empty()) {
        if (piece.size() >= 2) pieces.push_back(piece);
        piece.clear();
      }
    }
    if (piece.size() >= 2) pieces.push_back(piece);
  }
  return pieces;
}

}  // namespace

std::vector<ComplexPath> TraceBranches(const LoopPolynomials& loop,
                                       const std::vector<double>& gains) {
  std::vector<C> prev = loop.a.roots();
  std::vector<ComplexPath> branches;
  for (const C& p : prev) branches.push_back({p});
  for (double k : gains) {
    std::vector<C> now = loop.PolesAt(k);
    // Greedy matching by distance: the closest pair first.
    std::vector<std::pair<double, std::pair<size_t, size_t>>> pairs;
    for (size_t i = 0; i < prev.size(); ++i)
      for (size_t j = 0; j < now.size(); ++j) pairs.push_back({std::abs(prev[i] - now[j]), {i, j}});
    std::sort(pairs.begin(), pairs.end());
    std::vector<bool> used_i(prev.size(), false), used_j(now.size(), false);
    std::vector<C> next = prev;
    for (const auto& [dist, ij] : pairs) {
      auto [i, j] = ij;
      if (used_i[i] || used_j[j]) continue;
      used_i[i] = used_j[j] = true;
      next[i] = now[j];
    }
    // A pole that left through infinity (degree drop) stays where it was last seen.
    for (size_t i = 0; i < next.size(); ++i) branches[i].push_back(next[i]);
    prev = next;
  }
  return branches;
}

LocusFigureData BuildLocusFigure(const BandPlotInput& in) {
  LocusFigureData d;
  d.title = in.title;
  std::vector<double> key = KeyGains(in);
  std::vector<double> gains = LogSpaced(key.front() * 1e-3, key.back() * 1e3, 600);
  for (const auto& r : in.locus.gains()) {
    if (std::isfinite(r.lo) && r.lo > 0.0) gains.push_back(r.lo);
    if (std::isfinite(r.hi)) gains.push_back(r.hi);
  }
  std::sort(gains.begin(), gains.end());
  d.branches = TraceBranches(in.loop, gains);
  d.open_loop_poles = in.loop.a.roots();
  d.open_loop_zeros = in.loop.b.roots();
  GainSet band = in.locus.gains();
  if (band.empty()) {
    band = in.response.gains();
    d.band_label = "in response band";
  } else {
    d.band_label = "in locus band";
  }
  d.in_band = InBand(d.branches, gains, band);
  for (const auto& iv : in.locus.intervals) {
    for (const BandEdge* e : {&iv.lo, &iv.hi}) {
      if (std::isfinite(e->gain) && e->gain > 0.0 && std::isfinite(e->pole.real()))
        d.edge_labels.push_back({e->pole, GainText(e->gain)});
    }
  }
  if (in.recommendation.found) {
    d.recommended_poles = in.loop.PolesAt(in.recommendation.gain);
    d.recommended_label = "recommended " + GainText(in.recommendation.gain);
  }

  // The view: the plant's and controller's own poles and zeros (not the Padé approximant's,
  // which sit far out), the highlighted parts, the edge poles, the recommended poles and the
  // region's corner points.
  std::vector<C> pts = {C(0.0, 0.0)};
  auto add = [&](const std::vector<C>& v) {
    for (const C& z : v)
      if (std::isfinite(z.real()) && std::isfinite(z.imag())) pts.push_back(z);
  };
  TransferFunction own = in.controller.Shape() * in.plant.Rational();
  add(own.poles());
  add(own.zeros());
  add(d.recommended_poles);
  for (const auto& p : d.in_band) add(p);
  for (const auto& g : d.edge_labels) add({g.at});
  add({C(-in.region.wn_min, 0.0), C(-in.region.sigma_min, in.region.wd_min)});
  double re_lo = 0, re_hi = 0, im_hi = 0;
  for (const C& z : pts) {
    re_lo = std::min(re_lo, z.real());
    re_hi = std::max(re_hi, z.real());
    im_hi = std::max(im_hi, std::abs(z.imag()));
  }
  double span = std::max({re_hi - re_lo, 2 * im_hi, 1e-6});
  double pad = 0.2 * span;
  d.re_lo = re_lo - pad;
  d.re_hi = re_hi + pad;
  d.im_hi = std::max(im_hi + pad, 0.5 * (d.re_hi - d.re_lo));
  d.im_lo = -d.im_hi;
  const double far = 4.0 * std::max({std::abs(d.re_lo), std::abs(d.re_hi), d.im_hi});
  d.region = {UpperRegion(in.region, far), Conjugated(UpperRegion(in.region, far))};
  AddBoundaries(in.region, far, d, d.boundaries);
  if (in.loop.pade_order > 0) {
    d.caption.push_back("Dead time " + FormatQuantity(in.loop.delay, "s") +
                        " through its Padé approximant of order " +
                        std::to_string(in.loop.pade_order) +
                        " (its far poles and zeros may lie "
                        "outside the view).");
  }
  d.caption.push_back("Locus band " + ToString(in.locus.gains()) +
                      "; the region is where the "
                      "dominant pole (nearest the imaginary axis) must lie.");
  return d;
}

MetricsFigureData BuildMetricsFigure(const BandPlotInput& in) {
  MetricsFigureData d;
  d.title = in.title;
  std::vector<double> key = KeyGains(in);
  const double lo = key.front() / 10.0, hi = key.back() * 10.0;
  d.gains = LogSpaced(lo, hi, 48);
  const size_t n = d.gains.size();
  d.rise_time.assign(n, NAN);
  d.overshoot_percent.assign(n, NAN);
  d.settling_time.assign(n, NAN);
  auto work = [&](size_t first) {
    for (size_t i = first; i < n; i += 2) {
      ResponseCheck c =
          CheckResponse(in.plant, in.controller, d.gains[i], in.specs, in.response_options);
      if (c.failed == "unstable" || c.failed == "too slow") continue;
      d.rise_time[i] = c.metrics.rise_time;
      d.overshoot_percent[i] = c.metrics.overshoot_percent;
      d.settling_time[i] = c.metrics.settling_time;
    }
  };
  std::thread other(work, 1);
  work(0);
  other.join();

  if (in.specs.rise_max) d.rise_limit = *in.specs.rise_max;
  if (in.specs.wn_min)
    d.rise_limit =
        std::min(std::isnan(d.rise_limit) ? kInf : d.rise_limit, kRiseConstant / *in.specs.wn_min);
  if (in.specs.overshoot_max) d.overshoot_limit = *in.specs.overshoot_max;
  if (in.specs.zeta_min) {
    double os = OvershootForZeta(*in.specs.zeta_min);
    d.overshoot_limit = std::isnan(d.overshoot_limit) ? os : std::min(d.overshoot_limit, os);
  }
  if (in.specs.settle_max) d.settling_limit = *in.specs.settle_max;
  auto ranges = [&](const GainSet& set) {
    GainRanges out;
    for (const auto& r : set) {
      double a = std::max(r.lo, lo), b = std::min(r.hi, hi);
      if (a < b) out.push_back({a, b});
    }
    return out;
  };
  d.locus_band = ranges(in.locus.gains());
  d.response_band = ranges(in.response.gains());
  if (in.robust) d.robust_band = ranges(*in.robust);
  if (in.recommendation.found) d.recommended_gain = in.recommendation.gain;
  d.caption.push_back("Unit step, exact dead time, at " + std::to_string(n) +
                      " gains; gaps: unstable or creeping loop.");
  return d;
}

std::vector<std::string> WriteBandFigures(const std::string& path, const BandPlotInput& in) {
  std::string metrics = SiblingFigurePath(path, "metrics");
  WriteLocusFigure(path, BuildLocusFigure(in));
  WriteMetricsFigure(metrics, BuildMetricsFigure(in));
  return {path, metrics};
}

}  // namespace lw::app
