#include "design/gain_band.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace lw {
namespace {

using Complex = std::complex<double>;
constexpr double kInf = std::numeric_limits<double>::infinity();
const double kNaN = std::numeric_limits<double>::quiet_NaN();

// A stretch of gains with one verdict; lo_edge/hi_edge describe what bounds it.
struct Piece {
  double lo, hi;
  bool meets;
  BandEdge lo_edge, hi_edge;
};

// Bisection in log K between a gain with verdict `va` and one with the opposite verdict.
double LocateSwitch(const std::function<PoleVerdict(double)>& judge, double a, double b, bool va) {
  for (int it = 0; it < 200 && b / a - 1.0 > 1e-10; ++it) {
    double m = std::sqrt(a * b);
    if (judge(m).meets == va)
      a = m;
    else
      b = m;
  }
  return std::sqrt(a * b);
}

BandEdge EdgeAt(const std::function<PoleVerdict(double)>& judge, double gain, Boundary b,
                Complex pole) {
  BandEdge e{gain, b, pole, Complex(kNaN, kNaN)};
  if (gain > 0.0 && std::isfinite(gain)) e.dominant = judge(gain).dominant;
  return e;
}

}  // namespace

PoleVerdict JudgeGain(const LoopPolynomials& loop, const Region& region, double gain) {
  return JudgePoles(loop.PolesAt(gain), region);
}

GainSet LocusBand::gains() const {
  GainSet g;
  for (const auto& i : intervals) g.push_back({i.lo.gain, i.hi.gain});
  return g;
}

LocusBand FindLocusBand(const LoopPolynomials& loop, const Region& region) {
  Complex s(0.0, loop.FrequencyScale());
  double ref = std::abs(loop.a(s)) / std::max(std::abs(loop.b(s)), 1e-300);
  return BandFromCrossings(
      AllCrossings(loop, region), [&](double k) { return JudgeGain(loop, region, k); }, ref, region,
      loop.pade_order);
}

LocusBand BandFromCrossings(std::vector<BoundaryCrossing> crossings,
                            const std::function<PoleVerdict(double)>& judge, double ref,
                            const Region& region, int pade_order) {
  LocusBand band;
  band.region = region;
  band.pade_order = pade_order;
  std::sort(crossings.begin(), crossings.end(),
            [](const BoundaryCrossing& x, const BoundaryCrossing& y) { return x.gain < y.gain; });
  band.crossings = std::move(crossings);
  // Unique gains (1e-10 relative), each with the first crossing found there.
  std::vector<BoundaryCrossing> cuts;
  for (const auto& c : band.crossings) {
    if (!cuts.empty() && c.gain <= cuts.back().gain * (1.0 + 1e-10)) continue;
    cuts.push_back(c);
  }
  const Complex nan_pole(kNaN, kNaN);
  // Interval bounds: 0, cuts..., inf.
  std::vector<BandEdge> bounds;
  bounds.push_back({0.0, Boundary::kGainZero, nan_pole, nan_pole});
  for (const auto& c : cuts) bounds.push_back(EdgeAt(judge, c.gain, c.boundary, c.pole));
  bounds.push_back({kInf, Boundary::kUnbounded, nan_pole, nan_pole});

  std::vector<Piece> pieces;
  for (size_t i = 0; i + 1 < bounds.size(); ++i) {
    double lo = bounds[i].gain, hi = bounds[i + 1].gain;
    double jl = lo > 0.0 ? lo : (std::isfinite(hi) ? hi * 1e-3 : ref * 1e-3);
    double jh = std::isfinite(hi) ? hi : (lo > 0.0 ? lo * 1e3 : ref * 1e3);
    // March through the interval in log K, with steps small enough that the gap between the
    // dominant pole and the next one cannot close unseen (secant prediction of the gap, a third
    // of the way to zero, at most a factor 2 in K), and split it where the verdict changes.
    const double x_end = std::log(jh), span = x_end - std::log(jl);
    double x = std::log(jl) + 1e-7 * span;
    const double x_stop = x_end - 1e-7 * span;
    PoleVerdict prev = judge(std::exp(x));
    std::vector<Piece> local;
    local.push_back({lo, hi, prev.meets, bounds[i], bounds[i + 1]});
    double step = std::min(0.05, x_stop - x), slope = 0.0;
    // Early exit: when the verdict does not depend on which pole dominates (pole_verdict.h),
    // it holds over the whole interval.
    if (prev.uniform) x = x_stop;
    for (int it = 0; it < 4000 && x < x_stop; ++it) {
      double x1 = std::min(x + step, x_stop);
      PoleVerdict cur = judge(std::exp(x1));
      if (cur.meets != prev.meets) {
        double sw = LocateSwitch(judge, std::exp(x), std::exp(x1), prev.meets);
        BandEdge e = EdgeAt(judge, sw, Boundary::kDominanceSwitch, nan_pole);
        local.back().hi = sw;
        local.back().hi_edge = e;
        local.push_back({sw, hi, cur.meets, e, bounds[i + 1]});
      }
      const bool opening = std::isfinite(cur.gap) && std::isfinite(prev.gap) &&
                           cur.gap > prev.gap && cur.meets == prev.meets;
      if (std::isfinite(cur.gap) && std::isfinite(prev.gap)) {
        slope = std::abs(cur.gap - prev.gap) / (x1 - x);
      } else {
        slope = 0.0;
      }
      double scale = std::max(1e-12, std::abs(cur.dominant.real()));
      if (opening) {
        // The gap grows: its secant predicts no closing, so the step may double (a later
        // closing is again seen by the secant rule below before the cap of 0.7).
        step = std::min(0.7, std::max(2.0 * step, cur.gap / (3.0 * slope)));
      } else {
        step = 0.7;
        if (std::isfinite(cur.gap) && slope > 0.0) {
          step = std::clamp(cur.gap / (3.0 * slope), 1e-5, 0.7);
        }
      }
      if (std::isfinite(cur.gap) && cur.gap < 1e-9 * scale) step = 1e-5;
      x = x1;
      prev = cur;
    }
    pieces.insert(pieces.end(), local.begin(), local.end());
  }
  for (const Piece& p : pieces) {
    if (!p.meets) continue;
    if (!band.intervals.empty() && band.intervals.back().hi.gain == p.lo) {
      band.intervals.back().hi = p.hi_edge;
    } else {
      band.intervals.push_back({p.lo_edge, p.hi_edge});
    }
  }
  return band;
}

}  // namespace lw
