// Discrete band against closed forms worked by hand (first-order plants of our own, ZOH).
#include <cmath>

#include <doctest/doctest.h>

#include "design/discrete_band.h"

namespace lw {
namespace {

TEST_CASE("ZOH of 1/(s+1) at T = 0.5: stable for K < (1 + a)/(1 - a), a = exp(-T)") {
  // Gd = (1 - a)/(z - a): the pole a - K (1 - a) reaches z = -1 at K = (1 + a)/(1 - a).
  TransferFunction plant({1.0}, {1.0, 1.0});
  LoopPolynomials loop = SampledLoop(plant, Controller(), 0.5);
  const double a = std::exp(-0.5);
  REQUIRE(loop.a.degree() == 1);
  CHECK(loop.b(0.3) / loop.a(0.3) == doctest::Approx((1 - a) / (0.3 - a)).epsilon(1e-12));
  DiscreteBand d = FindDiscreteBand(plant, Controller(), Region{}, 0.5, {{0.0, INFINITY}});
  REQUIRE(d.band.intervals.size() == 1);
  CHECK(d.band.intervals[0].lo.gain == 0.0);
  CHECK(d.band.intervals[0].hi.gain == doctest::Approx((1 + a) / (1 - a)).epsilon(1e-9));
  CHECK(d.band.intervals[0].hi.boundary == Boundary::kImaginaryAxis);
  CHECK(d.shrink_percent > 0.0);
}

TEST_CASE("ZOH of exp(-0.5 s)/(s+1) at T = 0.5: z^2 - a z + K (1 - a), Jury limit K = 1/(1-a)") {
  TransferFunction plant({1.0}, {1.0, 1.0}, 0.5);
  const double a = std::exp(-0.5);
  DiscreteBand d = FindDiscreteBand(plant, Controller(), Region{}, 0.5, {{0.0, 10.0}});
  REQUIRE(d.band.intervals.size() == 1);
  CHECK(d.band.intervals[0].hi.gain == doctest::Approx(1.0 / (1.0 - a)).epsilon(1e-9));
}

TEST_CASE("a settling floor maps to a circle of radius exp(-sigma T)") {
  // Pole z = a - K (1 - a) of ZOH 1/(s+1), T = 0.2; sigma >= 2 means |z| <= exp(-0.4), i.e.
  // a - K (1 - a) between -exp(-0.4) and exp(-0.4).
  TransferFunction plant({1.0}, {1.0, 1.0});
  const double t = 0.2, a = std::exp(-t), r = std::exp(-2.0 * t);
  Region region;
  region.sigma_min = 2.0;
  DiscreteBand d = FindDiscreteBand(plant, Controller(), region, t, {});
  REQUIRE(d.band.intervals.size() == 1);
  CHECK(d.band.intervals[0].lo.gain == doctest::Approx((a - r) / (1 - a)).epsilon(1e-9));
  // Above K = a / (1 - a) the pole is negative real: s = ln|z|/T + j pi/T, still sigma >= 2
  // until |z| = r.
  CHECK(d.band.intervals[0].hi.gain == doctest::Approx((a + r) / (1 - a)).epsilon(1e-9));
}

}  // namespace
}  // namespace lw
