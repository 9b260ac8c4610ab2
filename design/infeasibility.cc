#include "design/infeasibility.h"

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstdio>
#include <functional>
#include <limits>
#include <vector>

#include "design/gain_band.h"
#include "lti/number_text.h"

namespace lw {
namespace {

struct Requirement {
  std::string name;  // "zeta"
  std::string text;  // "zeta >= 0.8"
  Region alone;      // only this bound
  std::function<double(const LoopPolynomials&, double)> quantity;
};

std::string Num(double v) { return SignificantText(v, 3); }

Region Merge(const Region& a, const Region& b) {
  Region r;
  r.wn_min = std::max(a.wn_min, b.wn_min);
  r.zeta_min = std::max(a.zeta_min, b.zeta_min);
  r.sigma_min = std::max(a.sigma_min, b.sigma_min);
  r.wd_min = std::max(a.wd_min, b.wd_min);
  r.decay_min = std::max(a.decay_min, b.decay_min);
  return r;
}

double SlowestOther(const LoopPolynomials& loop, double k) {
  auto poles = loop.PolesAt(k);
  PoleVerdict v = JudgePoles(poles, Region{});
  double slowest = std::numeric_limits<double>::infinity();
  bool skipped = false, skipped_conj = v.dominant.imag() == 0.0;
  for (const auto& p : poles) {
    if (!skipped && std::abs(p - v.dominant) < 1e-9 * (1 + std::abs(p))) {
      skipped = true;
      continue;
    }
    if (!skipped_conj && std::abs(p - std::conj(v.dominant)) < 1e-9 * (1 + std::abs(p))) {
      skipped_conj = true;
      continue;
    }
    slowest = std::min(slowest, -p.real());
  }
  return slowest;
}

// The dominant-pair bounds of a Region, each with the pole shape it bounds.
struct ShapeBound {
  const char* name;
  double Region::*bound;
  double PoleShape::*shape;
  const char* unit;  // with its leading space, or empty
};
constexpr ShapeBound kShapeBounds[] = {{"wn", &Region::wn_min, &PoleShape::wn, " rad/s"},
                                       {"zeta", &Region::zeta_min, &PoleShape::zeta, ""},
                                       {"sigma", &Region::sigma_min, &PoleShape::sigma, " 1/s"},
                                       {"wd", &Region::wd_min, &PoleShape::wd, " rad/s"}};

std::vector<Requirement> Requirements(const Region& r) {
  std::vector<Requirement> out;
  for (const ShapeBound& b : kShapeBounds) {
    if (!(r.*b.bound > 0)) continue;
    Region a;
    a.*b.bound = r.*b.bound;
    const auto shape = b.shape;
    out.push_back({b.name, std::string(b.name) + " >= " + Num(r.*b.bound) + b.unit, a,
                   [shape](const LoopPolynomials& l, double k) {
                     return JudgeGain(l, Region{}, k).shape.*shape;
                   }});
  }
  if (r.decay_min > 0) {
    Region a;
    a.decay_min = r.decay_min;
    out.push_back({"decay", "other poles decaying >= " + Num(r.decay_min) + " 1/s", a,
                   [](const LoopPolynomials& l, double k) { return SlowestOther(l, k); }});
  }
  return out;
}

// The gain at which a and K b are equally large at the loop's frequency scale: where the
// loop's poles move most, the centre of the search over an unbounded range.
double GainScale(const LoopPolynomials& loop) {
  const std::complex<double> jw(0.0, loop.FrequencyScale());
  const double ratio = std::abs(loop.a(jw)) / std::abs(loop.b(jw));
  return std::isfinite(ratio) && ratio > 0.0 ? ratio : 1.0;
}

// Maximises q over the gains in `set` (sampling plus golden-section refinement); a range
// [0, inf) is searched over four decades either side of `scale`.
std::pair<double, double> Best(const GainSet& set, const std::function<double(double)>& q,
                               double scale) {
  double best = -std::numeric_limits<double>::infinity(), best_k = 0.0;
  for (const GainRange& r : set) {
    const bool open = !(r.lo > 0.0) && !std::isfinite(r.hi);
    double lo = open ? 1e-4 * scale : r.lo > 0.0 ? r.lo : r.hi * 1e-4;
    double hi = open ? 1e4 * scale : std::isfinite(r.hi) ? r.hi : lo * 1e3;
    const int n = 64;
    int bi = -1;
    std::vector<double> ks(n);
    for (int i = 0; i < n; ++i) {
      ks[static_cast<size_t>(i)] = lo * std::pow(hi / lo, (i + 0.5) / n);
      double v = q(ks[static_cast<size_t>(i)]);
      if (v > best) {
        best = v;
        best_k = ks[static_cast<size_t>(i)];
        bi = i;
      }
    }
    if (bi < 0) continue;
    double a = std::log(bi > 0 ? ks[static_cast<size_t>(bi - 1)] : lo);
    double b = std::log(bi + 1 < n ? ks[static_cast<size_t>(bi + 1)] : hi);
    const double g = (std::sqrt(5.0) - 1.0) / 2.0;
    while (b - a > 1e-6) {
      double c = b - g * (b - a), d = a + g * (b - a);
      if (q(std::exp(c)) > q(std::exp(d)))
        b = d;
      else
        a = c;
    }
    double k = std::exp(0.5 * (a + b));
    double v = q(k);
    if (v > best) {
      best = v;
      best_k = k;
    }
  }
  return {best, best_k};
}

}  // namespace

Infeasibility DiagnoseInfeasible(const LoopPolynomials& loop, const Region& region) {
  Infeasibility out;
  const double scale = GainScale(loop);
  GainSet stable = FindLocusBand(loop, Region{}).gains();
  if (stable.empty()) {
    auto [best, k] = Best(
        {{0.0, std::numeric_limits<double>::infinity()}},
        [&](double g) { return -JudgeGain(loop, Region{}, g).dominant.real(); }, scale);
    // As K -> 0 the poles tend to the roots of a (the open loop's own poles): when none of the
    // sampled gains does better, the closest approach is that limit, not a gain.
    double limit = -std::numeric_limits<double>::infinity();
    for (const auto& r : loop.a.roots()) limit = std::max(limit, r.real());
    if (limit <= -best) {
      out = {
          "no gain K > 0 gives a stable loop; its dominant pole comes closest to the left half "
          "plane as K -> 0, where it tends to the open loop's pole at Re s = " +
              Num(limit) + " 1/s",
          "stability", "", limit, 0.0};
      return out;
    }
    out = {
        "no gain K > 0 gives a stable loop; the dominant pole comes closest to the left half "
        "plane at Re s = " +
            Num(-best) + " 1/s, at K = " + Num(k),
        "stability", "", -best, k};
    return out;
  }
  std::vector<Requirement> reqs = Requirements(region);
  for (const Requirement& r : reqs) {
    if (!FindLocusBand(loop, r.alone).empty()) continue;
    auto [best, k] = Best(
        stable, [&](double g) { return r.quantity(loop, g); }, scale);
    out = {"no gain gives " + r.text + " with a stable loop; the best " + r.name + " is " +
               Num(best) + ", at K = " + Num(k),
           r.name, "", best, k};
    return out;
  }
  for (size_t i = 0; i < reqs.size(); ++i) {
    for (size_t j = 0; j < reqs.size(); ++j) {
      if (i == j) continue;
      if (!FindLocusBand(loop, Merge(reqs[i].alone, reqs[j].alone)).empty()) continue;
      GainSet with = FindLocusBand(loop, reqs[i].alone).gains();
      auto [best, k] = Best(
          with, [&](double g) { return reqs[j].quantity(loop, g); }, scale);
      out = {"no gain gives " + reqs[j].text + " with " + reqs[i].text + "; the best " +
                 reqs[j].name + " with " + reqs[i].text + " is " + Num(best) + ", at K = " + Num(k),
             reqs[j].name, reqs[i].name, best, k};
      return out;
    }
  }
  out.sentence = "no gain meets all of " + region.ToString() +
                 " at once, although every pair of them can be met";
  out.requirement = "all";
  return out;
}

}  // namespace lw
