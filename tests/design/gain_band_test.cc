// Exact locus band: textbook and Routh-Hurwitz checks, then plants of our own.
#include <cmath>
#include <limits>
#include <numbers>

#include <doctest/doctest.h>

#include "design/gain_band.h"
#include "design/locus.h"
#include "lti/controller.h"
#include "lti/transfer_function.h"

namespace lw {
namespace {

LoopPolynomials Loop(std::vector<double> num, std::vector<double> den) {
  return LoopPolynomials::FromPolynomials(Polynomial(std::move(den)), Polynomial(std::move(num)));
}

// L = 1/(s(s+1)(s+2)) under P control.
LoopPolynomials OgataLoop() { return Loop({1.0}, {1.0, 3.0, 2.0, 0.0}); }

TEST_CASE("Ogata, Modern Control Engineering (from memory): 1/(s(s+1)(s+2)) breakaway") {
  auto pts = BreakawayPoints(OgataLoop());
  REQUIRE(pts.size() == 1);
  // s = -1 + 1/sqrt(3) from 3 s^2 + 6 s + 2 = 0; K = -s(s+1)(s+2) there = 2 sqrt(3)/9.
  CHECK(pts[0].s == doctest::Approx(-1.0 + 1.0 / std::sqrt(3.0)).epsilon(1e-12));
  CHECK(pts[0].s == doctest::Approx(-0.4226).epsilon(1e-4));
  CHECK(pts[0].gain == doctest::Approx(2.0 * std::sqrt(3.0) / 9.0).epsilon(1e-12));
  CHECK(pts[0].gain == doctest::Approx(0.3849).epsilon(1e-4));
  Asymptotes as = AsymptotesOf(OgataLoop());
  CHECK(as.centroid == doctest::Approx(-1.0));
  REQUIRE(as.angles_deg.size() == 3);
  CHECK(as.angles_deg[0] == doctest::Approx(60.0));
}

TEST_CASE("Routh-Hurwitz: 1/(s(s+1)(s+2)) crosses the imaginary axis at K = 6, w = sqrt(2)") {
  // s^3 + 3 s^2 + 2 s + K: the s^1 row 2 - K/3 vanishes at K = 6; auxiliary 3 s^2 + 6 = 0.
  auto c = ImaginaryAxisCrossings(OgataLoop());
  REQUIRE(c.size() == 1);
  CHECK(c[0].gain == doctest::Approx(6.0).epsilon(1e-12));
  CHECK(c[0].pole.real() == doctest::Approx(0.0).epsilon(1e-12));
  CHECK(c[0].pole.imag() == doctest::Approx(std::sqrt(2.0)).epsilon(1e-12));
}

TEST_CASE("Routh-Hurwitz: 1/(s+1)^3 has ultimate gain 8 at w = sqrt(3)") {
  // s^3 + 3 s^2 + 3 s + 1 + K: 9 = 1 + K at the s^1 row; auxiliary 3 s^2 + 9 = 0.
  auto c = ImaginaryAxisCrossings(Loop({1.0}, {1.0, 3.0, 3.0, 1.0}));
  REQUIRE(c.size() == 1);
  CHECK(c[0].gain == doctest::Approx(8.0).epsilon(1e-12));
  CHECK(c[0].pole.imag() == doctest::Approx(std::sqrt(3.0)).epsilon(1e-12));
  LocusBand band = FindLocusBand(Loop({1.0}, {1.0, 3.0, 3.0, 1.0}), Region{});
  REQUIRE(band.intervals.size() == 1);
  CHECK(band.intervals[0].lo.gain == 0.0);
  CHECK(band.intervals[0].hi.gain == doctest::Approx(8.0).epsilon(1e-12));
  CHECK(band.intervals[0].hi.boundary == Boundary::kImaginaryAxis);
}

TEST_CASE("Ogata (from memory): zeta = 0.5 at s = -1/3 +/- j0.5774, K = 28/27 exactly") {
  // On the ray s = r(-1/2 + j sqrt(3)/2): Im of s^3 + 3 s^2 + 2 s = 0 gives r = 2/3, so
  // s = -1/3 + j/sqrt(3), and K = -s(s+1)(s+2) = 28/27. The book reads about 1.04 graphically.
  Region region;
  region.zeta_min = 0.5;
  auto c = CrossingsOf(OgataLoop(), Boundary::kZetaRay, 0.5);
  REQUIRE(c.size() == 1);
  CHECK(c[0].gain == doctest::Approx(28.0 / 27.0).epsilon(1e-12));
  CHECK(c[0].pole.real() == doctest::Approx(-1.0 / 3.0).epsilon(1e-12));
  CHECK(c[0].pole.imag() == doctest::Approx(1.0 / std::sqrt(3.0)).epsilon(1e-12));
  CHECK(c[0].pole.imag() == doctest::Approx(0.5774).epsilon(1e-4));
  // The band: real dominant pole (zeta 1) up to the breakaway, a pair with zeta > 0.5 up to
  // 28/27, then zeta < 0.5.
  LocusBand band = FindLocusBand(OgataLoop(), region);
  REQUIRE(band.intervals.size() == 1);
  CHECK(band.intervals[0].lo.gain == 0.0);
  CHECK(band.intervals[0].hi.gain == doctest::Approx(28.0 / 27.0).epsilon(1e-12));
  CHECK(band.intervals[0].hi.boundary == Boundary::kZetaRay);
  CHECK(ShapeOf(band.intervals[0].hi.dominant).zeta == doctest::Approx(0.5).epsilon(1e-9));
}

// Our own plants from here on.

TEST_CASE("a wn floor and a zeta floor together give a band with two boundary edges") {
  // 4/((s+0.5)(s+2)(s+6)) under P control, zeta >= 0.45 and wn >= 1.4.
  Region region;
  region.zeta_min = 0.45;
  region.wn_min = 1.4;
  LoopPolynomials loop = Loop({4.0}, Polynomial::FromRoots({-0.5, -2.0, -6.0}).coefficients());
  LocusBand band = FindLocusBand(loop, region);
  REQUIRE(band.intervals.size() == 1);
  const BandInterval& iv = band.intervals[0];
  CHECK(iv.lo.boundary == Boundary::kWnCircle);
  CHECK(iv.hi.boundary == Boundary::kZetaRay);
  CHECK(std::abs(iv.lo.pole) == doctest::Approx(1.4).epsilon(1e-12));
  CHECK(ShapeOf(iv.hi.pole).zeta == doctest::Approx(0.45).epsilon(1e-12));
  // Each edge is a closed-loop pole at its gain to rounding.
  for (const BandEdge* e : {&iv.lo, &iv.hi}) {
    std::complex<double> r = loop.a(e->pole) + e->gain * loop.b(e->pole);
    double size = std::abs(loop.a(e->pole)) + e->gain * std::abs(loop.b(e->pole));
    CHECK(std::abs(r) <= 1e-12 * size);
  }
  // Just inside meets, just outside does not.
  CHECK(JudgeGain(loop, region, iv.lo.gain * 1.001).meets);
  CHECK_FALSE(JudgeGain(loop, region, iv.lo.gain * 0.999).meets);
  CHECK(JudgeGain(loop, region, iv.hi.gain * 0.999).meets);
  CHECK_FALSE(JudgeGain(loop, region, iv.hi.gain * 1.001).meets);
}

TEST_CASE("a conditionally stable loop has two separate stable bands") {
  // Our own: poles 0.3, -0.4, -0.6, -2.5, zeros -1, -1.8. Unstable for small K (the pole at 0.3),
  // stable, unstable again while a pair is in the right half plane, stable for large K.
  LoopPolynomials loop = Loop(Polynomial::FromRoots({-1.0, -1.8}).coefficients(),
                              Polynomial::FromRoots({0.3, -0.4, -0.6, -2.5}).coefficients());
  LocusBand band = FindLocusBand(loop, Region{});
  REQUIRE(band.intervals.size() == 2);
  for (const auto& iv : band.intervals) {
    CHECK(iv.lo.boundary == Boundary::kImaginaryAxis);
    std::complex<double> p = iv.lo.pole;
    CHECK(std::abs(p.real()) <= 1e-12 * std::max(1.0, std::abs(p)));
  }
  CHECK(band.intervals[1].hi.boundary == Boundary::kUnbounded);
  // Cross-check against the poles themselves on a grid of gains away from the edges.
  auto crossings = ImaginaryAxisCrossings(loop);
  GainSet g = band.gains();
  int checked = 0;
  for (double k = 1e-3; k < 1e4; k *= 1.05) {
    bool near_edge = false;
    for (const auto& c : crossings) near_edge |= std::abs(k / c.gain - 1.0) < 1e-6;
    if (near_edge) continue;
    CHECK(JudgeGain(loop, Region{}, k).meets == Contains(g, k));
    ++checked;
  }
  CHECK(checked > 100);
}

TEST_CASE("a slow real pole overtaken by a pair gives a dominance-switch edge") {
  // a = (s + 0.8)(s^2 + s + 9), b = (s + 0.75)(s^2 + 8 s + 17): the real pole is pinned between
  // -0.8 and -0.75 while the lightly damped pair (zeta 0.17 at K = 0) moves left past it; with
  // zeta >= 0.3 the verdict flips where the real pole takes over as the dominant one.
  LoopPolynomials loop =
      Loop(Polynomial::FromRoots({-0.75, {-4.0, 1.0}, {-4.0, -1.0}}).coefficients(),
           (Polynomial::FromRoots({-0.8}) * Polynomial({1.0, 1.0, 9.0})).coefficients());
  Region region;
  region.zeta_min = 0.3;
  LocusBand band = FindLocusBand(loop, region);
  // Independent check on a fine grid.
  GainSet g = band.gains();
  std::vector<double> edges;
  for (const auto& iv : band.intervals) edges.insert(edges.end(), {iv.lo.gain, iv.hi.gain});
  for (const auto& c : band.crossings) edges.push_back(c.gain);
  int mismatches = 0;
  for (double k = 1e-3; k < 1e3; k *= 1.01) {
    bool near_edge = false;
    for (double e : edges) near_edge |= std::abs(k / e - 1.0) < 1e-3;
    if (near_edge) continue;
    if (JudgeGain(loop, region, k).meets != Contains(g, k)) ++mismatches;
  }
  CHECK(mismatches == 0);
  REQUIRE_FALSE(band.empty());
  CHECK(band.intervals[0].lo.boundary == Boundary::kDominanceSwitch);
  // At the switch the real pole and the pair have the same real part.
  auto poles = loop.PolesAt(band.intervals[0].lo.gain);
  double re_pair = 0.0, re_real = 0.0;
  for (auto p : poles) (std::abs(p.imag()) > 1e-6 ? re_pair : re_real) = p.real();
  CHECK(re_pair == doctest::Approx(re_real).epsilon(1e-9));
}

}  // namespace
}  // namespace lw

namespace lw {
namespace {

TEST_CASE("a real pole overtakes a pair and is overtaken back inside one interval") {
  // Our own: 2/(s (0.5 s + 1)(0.05 s + 1)) with lead:3:15; the closed-loop real pole held near
  // the zero at -3 becomes dominant near K = 18.8 and gives the role back near K = 27.3 (found
  // by a numpy.roots sweep in tests/reference/design_sweep.py). With wd >= pi/3 the real pole
  // fails, so both switches are edges.
  LoopPolynomials loop = Loop((Polynomial({2.0}) * Polynomial({1.0, 3.0})).coefficients(),
                              (Polynomial({1.0, 0.0}) * Polynomial({0.5, 1.0}) *
                               Polynomial({0.05, 1.0}) * Polynomial({1.0, 15.0}))
                                  .coefficients());
  Region region;
  region.wn_min = 1.5;
  region.zeta_min = ZetaForOvershoot(30.0);
  region.wd_min = std::numbers::pi / 3.0;
  LocusBand band = FindLocusBand(loop, region);
  REQUIRE(band.intervals.size() == 2);
  CHECK(band.intervals[0].hi.boundary == Boundary::kDominanceSwitch);
  CHECK(band.intervals[1].lo.boundary == Boundary::kDominanceSwitch);
  CHECK(band.intervals[0].hi.gain == doctest::Approx(18.77).epsilon(2e-3));
  CHECK(band.intervals[1].lo.gain == doctest::Approx(27.33).epsilon(2e-3));
}

}  // namespace
}  // namespace lw

namespace lw {
namespace {

TEST_CASE("the verdict's lead: passing poles minus failing ones, by hand") {
  // zeta >= 0.5 and every non-dominant pole with -Re s >= 1. Poles: -0.4 (real, zeta 1, slow),
  // -2 +/- 1j (zeta 0.89), -3 +/- 6j (zeta 0.45, fails zeta). -0.4 passes only if everything
  // else decays by 1: yes. The pair -2 +/- 1j would pass as dominant only if -0.4 decayed: no.
  // So the passing set is {-0.4}; the others' largest real part is -2: lead = -0.4 - (-2) = 1.6.
  Region region;
  region.zeta_min = 0.5;
  region.decay_min = 1.0;
  using C = std::complex<double>;
  PoleVerdict v = JudgePoles({C(-3, -6), C(-3, 6), C(-2, -1), C(-2, 1), C(-0.4, 0)}, region);
  CHECK(v.meets);
  CHECK(v.lead == doctest::Approx(1.6).epsilon(1e-15));
  CHECK_FALSE(v.uniform);
  // A second slow pole, -0.6: whichever pole dominates, a non-dominant one is slow, so nothing
  // passes: lead -inf, and the verdict fails on decay (-0.4 dominant, -0.6 slow). Not uniform:
  // the two slow real poles may meet and leave as a pair, which would then pass.
  v = JudgePoles({C(-3, -6), C(-3, 6), C(-2, -1), C(-2, 1), C(-0.6, 0), C(-0.4, 0)}, region);
  CHECK_FALSE(v.meets);
  CHECK(v.failure == Failure::kDecay);
  CHECK(v.lead == -std::numeric_limits<double>::infinity());
  CHECK_FALSE(v.uniform);
  // They have met: the pair -0.5 +/- 0.1j (zeta 0.98) passes, its conjugate being exempt.
  v = JudgePoles({C(-3, -6), C(-3, 6), C(-2, -1), C(-2, 1), C(-0.5, -0.1), C(-0.5, 0.1)}, region);
  CHECK(v.meets);
  CHECK(v.lead == doctest::Approx(1.5).epsilon(1e-15));
  // Without the decay floor every pole but the zeta-0.45 pair passes: lead = -2 - (-3) = 1 with
  // the pair -2 +/- 1j dominant; move the failing pair right of it and the lead turns negative.
  region.decay_min = 0.0;
  v = JudgePoles({C(-3, -6), C(-3, 6), C(-2, -1), C(-2, 1), C(-2.5, 0)}, region);
  CHECK(v.meets);
  CHECK(v.lead == doctest::Approx(1.0).epsilon(1e-15));
  v = JudgePoles({C(-1, -2.5), C(-1, 2.5), C(-2, -1), C(-2, 1), C(-2.5, 0)}, region);
  CHECK_FALSE(v.meets);
  CHECK(v.failure == Failure::kZeta);
  CHECK(v.lead == doctest::Approx(-1.0).epsilon(1e-15));
}

TEST_CASE("the band with poles followed along K equals the band with poles solved at each gain") {
  // FindLocusBand follows the poles (lti/root_tracker.h) and skips intervals known unstable;
  // BandFromCrossings with JudgeGain solves the companion eigenvalues at every judged gain and
  // judges every interval. Our own loops with dead time (Pade 3), several specs each.
  struct Case {
    TransferFunction plant;
    const char* controller;
  };
  const Polynomial lag2 = Polynomial({0.0625, 0.15, 1.0});
  const Case cases[] = {
      {TransferFunction(Polynomial({2.0}),
                        lag2 * Polynomial({0.5, 1.0}) * Polynomial({0.3, 1.0}) *
                            Polynomial({0.2, 1.0}) * Polynomial({0.1, 1.0}),
                        0.3),
       "pi:0.3"},
      {TransferFunction(
           Polynomial({0.36, 1.2}),
           Polynomial({0.6, 1.0}) * Polynomial({0.09, 0.36, 1.0}) * Polynomial({1.0, 1.0}), 0.1),
       "pid:0.5:2:20"},
      {TransferFunction(Polynomial({1.5}), Polynomial({2.0, 1.0, 0.0}) * Polynomial({0.4, 1.0}),
                        0.2),
       "lead:1:6"},
  };
  Region regions[4];
  regions[0].zeta_min = 0.45;
  regions[1].zeta_min = 0.3;
  regions[1].wn_min = 0.5;
  regions[1].decay_min = 0.2;
  regions[2].sigma_min = 0.3;
  regions[2].wd_min = 0.4;
  int edges = 0;
  for (const Case& c : cases) {
    LoopPolynomials loop = LoopPolynomials::ForGain(c.plant, Controller::Parse(c.controller), 3);
    for (const Region& region : regions) {
      LocusBand fast = FindLocusBand(loop, region);
      LocusBand slow = BandFromCrossings(
          AllCrossings(loop, region), [&](double k) { return JudgeGain(loop, region, k); }, 1.0,
          region, 3);
      REQUIRE(fast.intervals.size() == slow.intervals.size());
      for (size_t i = 0; i < fast.intervals.size(); ++i) {
        for (auto side : {&BandInterval::lo, &BandInterval::hi}) {
          const BandEdge& f = fast.intervals[i].*side;
          const BandEdge& s = slow.intervals[i].*side;
          CHECK(f.boundary == s.boundary);
          if (std::isfinite(s.gain) && s.gain > 0.0) {
            CHECK(f.gain == doctest::Approx(s.gain).epsilon(1e-9));
            CHECK(std::abs(f.dominant - s.dominant) <= 1e-7 * std::abs(s.dominant));
            ++edges;
          } else {
            CHECK(f.gain == s.gain);
          }
        }
      }
    }
  }
  CHECK(edges >= 8);
}

}  // namespace
}  // namespace lw

namespace lw {
namespace {

TEST_CASE("with a decay floor, two slow real poles meeting start the band at the breakaway") {
  // Our own: 1/((s + 0.3)(s + 0.8)(s + 5)) under P control, zeta >= 0.7, every non-dominant pole
  // with -Re s >= 1. Below the breakaway the two slow real poles each fail as the other's
  // non-dominant neighbour; from it on they are a pair whose conjugate is exempt. The breakaway
  // by hand: a = s^3 + 6.1 s^2 + 5.74 s + 1.2, a' = 3 s^2 + 12.2 s + 5.74 = 0 gives
  // s = (-12.2 + sqrt(79.96)) / 6, and K = -a(s) there.
  LoopPolynomials loop = Loop({1.0}, {1.0, 6.1, 5.74, 1.2});
  Region region;
  region.zeta_min = 0.7;
  region.decay_min = 1.0;
  const double s = (-12.2 + std::sqrt(79.96)) / 6.0;
  const double k = -(((s + 6.1) * s + 5.74) * s + 1.2);
  LocusBand band = FindLocusBand(loop, region);
  REQUIRE(band.intervals.size() == 1);
  const BandInterval& iv = band.intervals[0];
  CHECK(iv.lo.boundary == Boundary::kBreakaway);
  CHECK(iv.lo.gain == doctest::Approx(k).epsilon(1e-12));
  CHECK(iv.lo.pole.real() == doctest::Approx(s).epsilon(1e-12));
  CHECK(iv.hi.boundary == Boundary::kZetaRay);
  CHECK(ShapeOf(iv.hi.pole).zeta == doctest::Approx(0.7).epsilon(1e-12));
  CHECK_FALSE(JudgeGain(loop, region, k * 0.999).meets);
  CHECK(JudgeGain(loop, region, k * 1.001).meets);
  // Without the floor the band starts at K = 0 and ends at the same zeta edge.
  region.decay_min = 0.0;
  LocusBand plain = FindLocusBand(loop, region);
  REQUIRE(plain.intervals.size() == 1);
  CHECK(plain.intervals[0].lo.gain == 0.0);
  CHECK(plain.intervals[0].hi.gain == doctest::Approx(iv.hi.gain).epsilon(1e-12));
}

}  // namespace
}  // namespace lw
