// Robust band: zero spread reproduces the nominal band; a spread shrinks it, and the count of
// meeting draws straddles 95 % at its edges (checked by judging each draw directly).
#include <cmath>
#include <random>

#include <doctest/doctest.h>

#include "design/gain_band.h"
#include "design/robust_band.h"
#include "lti/error.h"

namespace lw {
namespace {

// Our own plant: 1.6 exp(-0.4 s) / ((3 s + 1)(0.7 s + 1)).
TransferFunction Plant(double k, double t1, double t2, double delay) {
  return TransferFunction(Polynomial({k}), Polynomial({t1, 1.0}) * Polynomial({t2, 1.0}), delay);
}

std::vector<TransferFunction> Draws(int n, double rel_sd, unsigned seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> z(0.0, 1.0);
  std::vector<TransferFunction> out;
  for (int i = 0; i < n; ++i) {
    out.push_back(Plant(1.6 * (1 + rel_sd * z(rng)), 3.0 * (1 + rel_sd * z(rng)),
                        0.7 * (1 + rel_sd * z(rng)), 0.4 * (1 + rel_sd * z(rng))));
  }
  return out;
}

Region TestRegion() {
  Region r;
  r.zeta_min = ZetaForOvershoot(15.0);
  r.sigma_min = 4.0 / 12.0;
  return r;
}

TEST_CASE("with zero spread the robust band equals the nominal band") {
  Controller c = Controller::Parse("pi:0.4");
  auto draws = Draws(500, 0.0, 7);
  RobustBand rb = FindRobustBand(draws, c, TestRegion());
  GainSet nominal =
      FindLocusBand(LoopPolynomials::ForGain(Plant(1.6, 3.0, 0.7, 0.4), c, 3), TestRegion())
          .gains();
  REQUIRE(!nominal.empty());
  REQUIRE(rb.gains.size() == nominal.size());
  for (size_t i = 0; i < nominal.size(); ++i) {
    CHECK(rb.gains[i].lo == doctest::Approx(nominal[i].lo).epsilon(1e-12));
    CHECK(rb.gains[i].hi == doctest::Approx(nominal[i].hi).epsilon(1e-12));
  }
  CHECK(rb.draws == 500);
}

TEST_CASE("with a spread the robust band lies inside the nominal band and its edges are 95 %") {
  Controller c = Controller::Parse("pi:0.4");
  auto draws = Draws(500, 0.05, 11);
  RobustBand rb = FindRobustBand(draws, c, TestRegion());
  GainSet nominal =
      FindLocusBand(LoopPolynomials::ForGain(Plant(1.6, 3.0, 0.7, 0.4), c, 3), TestRegion())
          .gains();
  REQUIRE(!rb.gains.empty());
  for (const GainRange& r : rb.gains) {
    CHECK(Contains(nominal, r.lo));
    CHECK(Contains(nominal, r.hi));
    // Inside: at least 475 of 500 draws meet; just outside: fewer.
    double mid = GeometricMiddle(r);
    CHECK(DrawsMeetingAt(draws, c, TestRegion(), 3, mid) >= 475);
    if (r.lo > 0.0) {
      CHECK(DrawsMeetingAt(draws, c, TestRegion(), 3, r.lo * 1.0001) >= 475);
      CHECK(DrawsMeetingAt(draws, c, TestRegion(), 3, r.lo * 0.9999) < 475);
    }
    CHECK(DrawsMeetingAt(draws, c, TestRegion(), 3, r.hi * 0.9999) >= 475);
    CHECK(DrawsMeetingAt(draws, c, TestRegion(), 3, r.hi * 1.0001) < 475);
  }
  // It is strictly narrower than the nominal band.
  CHECK(DecadeWidth(Widest(rb.gains)) < DecadeWidth(Widest(nominal)) - 1e-3);
  // One thread or two: the same band.
  RobustBandOptions one;
  one.threads = 1;
  RobustBand rb1 = FindRobustBand(draws, c, TestRegion(), one);
  REQUIRE(rb1.gains.size() == rb.gains.size());
  CHECK(rb1.gains[0].lo == rb.gains[0].lo);
}

TEST_CASE("too few draws and bad options are usage errors") {
  Controller c;
  RobustBandOptions o;
  o.min_draws = 500;
  CHECK_THROWS_AS(FindRobustBand(Draws(10, 0.05, 1), c, Region{}, o), UsageError);
  o.fraction = 1.5;
  CHECK_THROWS_AS(o.Validate(), UsageError);
}

}  // namespace
}  // namespace lw
