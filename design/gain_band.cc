#include "design/gain_band.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "design/locus.h"
#include "lti/root_tracker.h"

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

// The zero of f in [a, b] (log K), f(a) and f(b) of opposite signs, to an absolute width of
// `tol`: Brent's method (R. P. Brent, Algorithms for Minimization without Derivatives, 1973,
// ch. 4; from memory), inverse quadratic interpolation safeguarded by bisection. Returns the end
// of the final bracket where |f| is smaller; the sign change lies within tol of it.
template <class F>
double Zeroin(const F& f, double a, double b, double fa, double fb, double tol) {
  double c = a, fc = fa, d = b - a, e = d;
  for (int it = 0; it < 200; ++it) {
    if ((fb > 0.0) == (fc > 0.0)) {
      c = a;
      fc = fa;
      d = e = b - a;
    }
    if (std::abs(fc) < std::abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const double tol1 = 2.0 * std::numeric_limits<double>::epsilon() * std::abs(b) + 0.5 * tol;
    const double xm = 0.5 * (c - b);
    if (std::abs(xm) <= tol1 || fb == 0.0) break;
    if (std::abs(e) >= tol1 && std::abs(fa) > std::abs(fb)) {
      double p, q, r;
      const double s = fb / fa;
      if (a == c) {
        p = 2.0 * xm * s;
        q = 1.0 - s;
      } else {
        q = fa / fc;
        r = fb / fc;
        p = s * (2.0 * xm * q * (q - r) - (b - a) * (r - 1.0));
        q = (q - 1.0) * (r - 1.0) * (s - 1.0);
      }
      if (p > 0.0) q = -q;
      p = std::abs(p);
      if (2.0 * p < std::min(3.0 * xm * q - std::abs(tol1 * q), std::abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = xm;
        e = d;
      }
    } else {
      d = xm;
      e = d;
    }
    a = b;
    fa = fb;
    b += std::abs(d) > tol1 ? d : std::copysign(tol1, xm);
    fb = f(b);
  }
  return b;
}

// The signed distance of a verdict from changing: the lead (pole_verdict.h) with the sign of
// the verdict itself, so a bracket is always a sign change even where rounding puts a pole on
// the other side of a boundary it is about to cross; the smallest normal number when the lead
// is not finite (then the root search bisects).
double SignedLead(const PoleVerdict& v) {
  const double m = std::isfinite(v.lead) ? std::abs(v.lead) : 0.0;
  const double tiny = std::numeric_limits<double>::min();
  return v.meets ? std::max(m, tiny) : -std::max(m, tiny);
}

// The gain in [a, b] (a < b) where the verdict changes, to 1e-10 relative; va, vb the verdicts
// at a and b (opposite).
double LocateSwitch(const std::function<PoleVerdict(double)>& judge, double a, double b,
                    const PoleVerdict& va, const PoleVerdict& vb) {
  auto f = [&](double x) { return SignedLead(judge(std::exp(x))); };
  return std::exp(Zeroin(f, std::log(a), std::log(b), SignedLead(va), SignedLead(vb), 1e-10));
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

namespace {

// BandFromCrossings; with `exact_cuts` (the crossings hold every gain where a pole is on the
// imaginary axis or at infinity, as AllCrossings' exact roots do, and with a decay floor every
// breakaway point), an interval that follows an unstable one across any other cut is unstable
// too, and is not judged, and the lead alone sets the steps. Without, with a decay floor, the
// steps also keep the gap between the dominant pole and the next (pole_verdict.h) from closing
// unseen, as two real poles meeting would.
LocusBand Band(std::vector<BoundaryCrossing> crossings,
               const std::function<PoleVerdict(double)>& judge, double ref, const Region& region,
               int pade_order, bool exact_cuts);

}  // namespace

LocusBand FindLocusBand(const LoopPolynomials& loop, const Region& region) {
  std::vector<BoundaryCrossing> crossings = AllCrossings(loop, region);
  if (region.decay_min > 0.0) {
    // With a decay floor the verdict also depends on which pole is the dominant one's conjugate
    // (pole_verdict.h), and that changes where two real poles meet: cut there too.
    for (const LocusPoint& b : BreakawayPoints(loop)) {
      crossings.push_back({b.gain, Boundary::kBreakaway, Complex(b.s, 0.0)});
    }
  }
  double ref = 1.0;  // only used without crossings
  if (crossings.empty()) {
    Complex s(0.0, loop.FrequencyScale());
    ref = std::abs(loop.a(s)) / std::max(std::abs(loop.b(s)), 1e-300);
  }
  // The march judges gains in increasing order, mostly close together: the closed-loop poles
  // are followed along K (lti/root_tracker.h) instead of solved afresh at each gain.
  RootTracker tracker(loop.a, loop.b);
  return Band(
      std::move(crossings), [&](double k) { return JudgePoles(tracker.RootsAt(k), region); }, ref,
      region, loop.pade_order, true);
}

LocusBand BandFromCrossings(std::vector<BoundaryCrossing> crossings,
                            const std::function<PoleVerdict(double)>& judge, double ref,
                            const Region& region, int pade_order) {
  return Band(std::move(crossings), judge, ref, region, pade_order, false);
}

namespace {

LocusBand Band(std::vector<BoundaryCrossing> crossings,
               const std::function<PoleVerdict(double)>& judge, double ref, const Region& region,
               int pade_order, bool exact_cuts) {
  LocusBand band;
  band.region = region;
  band.pade_order = pade_order;
  std::sort(crossings.begin(), crossings.end(),
            [](const BoundaryCrossing& x, const BoundaryCrossing& y) { return x.gain < y.gain; });
  band.crossings = std::move(crossings);
  // Unique gains (1e-10 relative), each with the first crossing found there.
  std::vector<BoundaryCrossing> cuts;
  std::vector<bool> axis;  // some crossing at the cut is on the imaginary axis or at infinity
  for (const auto& c : band.crossings) {
    const bool on_axis =
        c.boundary == Boundary::kImaginaryAxis || c.boundary == Boundary::kPoleAtInfinity;
    if (!cuts.empty() && c.gain <= cuts.back().gain * (1.0 + 1e-10)) {
      if (on_axis) axis.back() = true;
      continue;
    }
    cuts.push_back(c);
    axis.push_back(on_axis);
  }
  const Complex nan_pole(kNaN, kNaN);
  // Interval bounds: 0, cuts..., inf. A cut's dominant pole is found only when a meeting
  // piece ends there (below).
  std::vector<BandEdge> bounds;
  bounds.push_back({0.0, Boundary::kGainZero, nan_pole, nan_pole});
  for (const auto& c : cuts) bounds.push_back({c.gain, c.boundary, c.pole, nan_pole});
  bounds.push_back({kInf, Boundary::kUnbounded, nan_pole, nan_pole});

  std::vector<Piece> pieces;
  bool unstable = false;  // the last judged gain had an unstable pole
  for (size_t i = 0; i + 1 < bounds.size(); ++i) {
    double lo = bounds[i].gain, hi = bounds[i + 1].gain;
    if (exact_cuts && unstable && i > 0 && !axis[i - 1]) {
      // No pole crossed the imaginary axis or infinity at this cut: still unstable.
      pieces.push_back({lo, hi, false, bounds[i], bounds[i + 1]});
      continue;
    }
    double jl = lo > 0.0 ? lo : (std::isfinite(hi) ? hi * 1e-3 : ref * 1e-3);
    double jh = std::isfinite(hi) ? hi : (lo > 0.0 ? lo * 1e3 : ref * 1e3);
    // March through the interval in log K, with steps small enough that the lead (the signed
    // distance of the verdict from a dominance switch, pole_verdict.h) cannot reach zero unseen
    // (its secant prediction, a third of the way, at most a factor 2 in K), and split it where
    // the verdict changes.
    const double x_end = std::log(jh), span = x_end - std::log(jl);
    double x = std::log(jl) + 1e-7 * span;
    const double x_stop = x_end - 1e-7 * span;
    PoleVerdict prev = judge(std::exp(x));
    if (i > 0 && (pieces.back().meets || prev.meets)) {
      // The cut bounds a meeting piece: give its edge the dominant pole there.
      bounds[i].dominant = judge(lo).dominant;
      pieces.back().hi_edge = bounds[i];
    }
    std::vector<Piece> local;
    local.push_back({lo, hi, prev.meets, bounds[i], bounds[i + 1]});
    double step = std::min(0.05, x_stop - x);
    // Approach steps aim past the switch the secant of |lead| predicts, so that one step
    // brackets it. Where such a step finds no switch the lead turned inside it, and the step
    // is marched again, up to `careful_until`, a third of the predicted way at a time.
    double careful_until = -kInf;
    bool expect_switch = false;
    // Early exit: when the verdict does not depend on which pole dominates (pole_verdict.h),
    // it holds over the whole interval.
    if (prev.uniform) x = x_stop;
    for (int it = 0; it < 4000 && x < x_stop; ++it) {
      double x1 = std::min(x + step, x_stop);
      PoleVerdict cur = judge(std::exp(x1));
      if (cur.meets != prev.meets) {
        double sw = LocateSwitch(judge, std::exp(x), std::exp(x1), prev, cur);
        BandEdge e{sw, Boundary::kDominanceSwitch, nan_pole, judge(sw).dominant};
        local.back().hi = sw;
        local.back().hi_edge = e;
        local.push_back({sw, hi, cur.meets, e, bounds[i + 1]});
        // Beyond the switch the lead grows from zero: go on with the same step.
        expect_switch = false;
        x = x1;
        prev = cur;
        continue;
      }
      const double d_prev = std::abs(prev.lead), d_cur = std::abs(cur.lead);
      const bool finite = std::isfinite(d_cur) && std::isfinite(d_prev);
      if (expect_switch) {
        expect_switch = false;
        careful_until = x1;
        step = std::max(1e-5, (x1 - x) / 4.5);  // the step was 1.5 times the predicted way
        continue;                               // from x again
      }
      const double slope = finite ? std::abs(d_cur - d_prev) / (x1 - x) : 0.0;
      if (finite && d_cur > d_prev) {
        // Moving away from a switch: its secant predicts none, so the step may double (a later
        // approach is again seen by the secant rule below before the cap of 0.7).
        step = std::min(0.7, std::max(2.0 * step, d_cur / (3.0 * slope)));
      } else if (finite && slope > 0.0) {
        const double way = d_cur / slope;  // to where the secant of |lead| reaches zero
        if (x1 >= careful_until && 1.5 * way <= 0.7) {
          step = std::max(1.5 * way, 1e-5);
          expect_switch = x1 + step < x_stop;
        } else {
          step = std::clamp(way / 3.0, 1e-5, 0.7);
        }
      } else {
        step = 0.7;
      }
      if (!exact_cuts && region.decay_min > 0.0 && std::isfinite(cur.gap) &&
          std::isfinite(prev.gap)) {
        const double gap_slope = std::abs(cur.gap - prev.gap) / (x1 - x);
        if (cur.gap < prev.gap && gap_slope > 0.0) {
          const double g = std::clamp(cur.gap / (3.0 * gap_slope), 1e-5, 0.7);
          if (g < step) {
            step = g;
            expect_switch = false;
          }
        }
      }
      const double scale = std::max(1e-12, std::abs(cur.dominant.real()));
      if (std::isfinite(d_cur) && d_cur < 1e-9 * scale) {
        step = 1e-5;
        expect_switch = false;
      }
      x = x1;
      prev = cur;
    }
    unstable = prev.failure == Failure::kUnstable;
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

}  // namespace

}  // namespace lw
