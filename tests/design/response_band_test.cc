// Response band: at every edge the simulated metric just inside meets its spec and just outside
// breaks it (plants of our own).
#include <cmath>
#include <string>
#include <vector>

#include <doctest/doctest.h>

#include "design/gain_band.h"
#include "design/infeasibility.h"
#include "design/response_band.h"
#include "lti/error.h"

namespace lw {
namespace {

double MetricFor(const std::string& name, const StepMetrics& m) {
  if (name == "rise") return m.rise_time;
  if (name == "overshoot") return m.overshoot_percent;
  if (name == "settling") return m.settling_time;
  return m.peak_time;
}

// Returns the edges' limiting requirements, lower edge first.
std::vector<std::string> CheckEdgesStraddle(const TransferFunction& plant, const Controller& c,
                                            const Specs& specs) {
  ResponseBandOptions opt;
  ResponseBand band = FindResponseBand(plant, c, specs, opt);
  REQUIRE_FALSE(band.empty());
  std::vector<std::string> limits;
  int finite_edges = 0;
  for (const ResponseRange& r : band.ranges) {
    for (int side = 0; side < 2; ++side) {
      const ResponseEdge& e = side == 0 ? r.lo : r.hi;
      if (e.gain == 0.0 || std::isinf(e.gain)) continue;
      ++finite_edges;
      limits.push_back(e.limiting);
      double inward = side == 0 ? 1.0 + 4e-6 : 1.0 - 4e-6;
      double outward = side == 0 ? 1.0 - 4e-6 : 1.0 + 4e-6;
      ResponseCheck in = CheckResponse(plant, c, e.gain * inward, specs, opt);
      ResponseCheck out = CheckResponse(plant, c, e.gain * outward, specs, opt);
      CHECK(in.meets);
      CHECK_FALSE(out.meets);
      CHECK(out.failed == e.limiting);
      // "unstable", "too slow" (both from the poles) and "not settled" have no metric cap.
      if (e.limiting == "rise" || e.limiting == "overshoot" || e.limiting == "settling" ||
          e.limiting == "peak time") {
        const double cap = e.limiting == "rise"        ? *specs.rise_max
                           : e.limiting == "overshoot" ? *specs.overshoot_max
                           : e.limiting == "settling"  ? *specs.settle_max
                                                       : *specs.peak_max;
        CHECK(MetricFor(e.limiting, in.metrics) <= cap);
        CHECK(MetricFor(e.limiting, out.metrics) > cap);
      }
    }
  }
  CHECK(finite_edges >= 1);
  return limits;
}

TEST_CASE("response band edges straddle the overshoot and settling specs (dead time exact)") {
  // 2 exp(-0.3 s) / ((2 s + 1)(0.5 s + 1)) under PI control with its zero at 0.6 rad/s.
  TransferFunction plant(Polynomial({2.0}), Polynomial({2.0, 1.0}) * Polynomial({0.5, 1.0}), 0.3);
  Specs specs;
  specs.overshoot_max = 12.0;
  specs.settle_max = 9.0;
  CheckEdgesStraddle(plant, Controller::Parse("pi:0.6"), specs);
}

TEST_CASE("response band edges straddle a rise-time spec") {
  // 3 / ((s + 1)(0.25 s + 1)(0.1 s + 1)) under P control.
  TransferFunction plant(Polynomial({3.0}),
                         Polynomial({1.0, 1.0}) * Polynomial({0.25, 1.0}) * Polynomial({0.1, 1.0}));
  Specs specs;
  specs.rise_max = 0.6;
  specs.overshoot_max = 20.0;
  CheckEdgesStraddle(plant, Controller(), specs);
}

TEST_CASE("response band edges straddle a pole-screened lower edge and an overshoot edge") {
  // 1.5 exp(-0.4 s) / ((3 s + 1)(s + 1)(0.4 s + 1)) under PI control with its zero at 0.25
  // rad/s: at low gain the integral mode is so slow that the loop is judged too slow from its
  // poles (that edge is found on the pole screen, then confirmed by simulating just inside);
  // the upper edge is the overshoot spec.
  TransferFunction plant(Polynomial({1.5}),
                         Polynomial({3.0, 1.0}) * Polynomial({1.0, 1.0}) * Polynomial({0.4, 1.0}),
                         0.4);
  Specs specs;
  specs.overshoot_max = 15.0;
  const Controller c = Controller::Parse("pi:0.25");
  const std::vector<std::string> limits = CheckEdgesStraddle(plant, c, specs);
  REQUIRE(limits.size() == 2);
  CHECK(limits[0] == "too slow");
  CHECK(limits[1] == "overshoot");
  // The same edge by plain bisection that simulates every middle the poles pass, from another
  // bracket: within the two bisections' tolerances (1e-6 relative each).
  const ResponseBandOptions opt;
  const double edge = FindResponseBand(plant, c, specs, opt).ranges.front().lo.gain;
  double in = edge * 1.5, out = edge / 1.5;
  REQUIRE(CheckResponse(plant, c, in, specs, opt).meets);
  REQUIRE(CheckResponse(plant, c, out, specs, opt).failed == "too slow");
  while (in / out - 1.0 > opt.rel_tol) {
    const double m = std::sqrt(in * out);
    (CheckResponse(plant, c, m, specs, opt).meets ? in : out) = m;
  }
  CHECK(std::sqrt(in * out) == doctest::Approx(edge).epsilon(2e-6));
}

TEST_CASE("a first-order loop fast next to its settling spec is not judged too slow") {
  // 2/(5 s + 1) under P control: y(t) = y_final (1 - exp(-sigma t)), sigma = (1 + 2 K)/5, so the
  // 2 % settling time is ln(50)/sigma (first-order step response, any control text; from
  // memory) and settling within 2 s needs K >= (5 ln(50)/2 - 1)/2 = 4.390; every larger gain is
  // faster still, so the band has no upper edge. (A record stretched to twice the settling spec
  // once made a very fast loop look like a creeping one: an upper edge near K = 1.25e4.)
  const TransferFunction plant(Polynomial({2.0}), Polynomial({5.0, 1.0}), 0.0);
  Specs specs;
  specs.settle_max = 2.0;
  const Controller c = Controller::Parse("p");
  const ResponseBandOptions opt;
  const ResponseBand band = FindResponseBand(plant, c, specs, opt);
  REQUIRE(band.ranges.size() == 1);
  CHECK(band.ranges[0].lo.gain ==
        doctest::Approx((5.0 * std::log(50.0) / 2.0 - 1.0) / 2.0).epsilon(1e-3));
  CHECK(band.ranges[0].lo.limiting == "settling");
  CHECK(std::isinf(band.ranges[0].hi.gain));
  // At K = 10 the record (4 s, 1500 samples) resolves the settling time: ln(50)/4.2 = 0.931 s.
  const ResponseCheck at10 = CheckResponse(plant, c, 10.0, specs, opt);
  CHECK(at10.meets);
  CHECK(at10.metrics.settling_time == doctest::Approx(std::log(50.0) / 4.2).epsilon(1e-2));
  for (double k : {1e3, 1e4, 1e5, 1e6}) {
    const ResponseCheck check = CheckResponse(plant, c, k, specs, opt);
    CHECK_MESSAGE(check.meets, "K = " << k << " failed: " << check.failed);
    CHECK(check.metrics.settling_time <= 2.0);
  }
}

TEST_CASE("the response band does not depend on how many threads share the search") {
  // 0.8 exp(-0.25 s) / ((1.5 s + 1)(0.6 s + 1)(0.2 s + 1)) under PI control (zero at 0.5 rad/s).
  TransferFunction plant(Polynomial({0.8}),
                         Polynomial({1.5, 1.0}) * Polynomial({0.6, 1.0}) * Polynomial({0.2, 1.0}),
                         0.25);
  const Controller c = Controller::Parse("pi:0.5");
  Specs specs;
  specs.overshoot_max = 10.0;
  specs.settle_max = 12.0;
  ResponseBandOptions two;
  const ResponseBand reference = FindResponseBand(plant, c, specs, two);
  REQUIRE_FALSE(reference.empty());
  for (int threads : {1, 3}) {
    ResponseBandOptions o;
    o.threads = threads;
    const ResponseBand band = FindResponseBand(plant, c, specs, o);
    CAPTURE(threads);
    REQUIRE(band.ranges.size() == reference.ranges.size());
    for (size_t i = 0; i < band.ranges.size(); ++i) {
      CHECK(band.ranges[i].lo.gain == reference.ranges[i].lo.gain);
      CHECK(band.ranges[i].hi.gain == reference.ranges[i].hi.gain);
      CHECK(band.ranges[i].lo.limiting == reference.ranges[i].lo.limiting);
      CHECK(band.ranges[i].hi.limiting == reference.ranges[i].hi.limiting);
    }
    CHECK(band.simulations == reference.simulations);
  }
  ResponseBandOptions none;
  none.threads = 0;
  CHECK_THROWS_AS(none.Validate(), UsageError);
}

TEST_CASE("infeasible pair: the sentence names both and the best value is the true maximum") {
  // 4 / ((s + 0.5)(s + 2)(s + 6)): zeta >= 0.8 and wn >= 1.8 cannot hold together.
  LoopPolynomials loop = LoopPolynomials::FromPolynomials(Polynomial::FromRoots({-0.5, -2.0, -6.0}),
                                                          Polynomial({4.0}));
  Region region;
  region.zeta_min = 0.8;
  region.wn_min = 1.8;
  REQUIRE(FindLocusBand(loop, region).empty());
  Infeasibility why = DiagnoseInfeasible(loop, region);
  CHECK(why.requirement == "zeta");
  CHECK(why.with == "wn");
  CHECK(why.sentence.find("zeta >= 0.8") != std::string::npos);
  CHECK(why.sentence.find("wn >= 1.8") != std::string::npos);
  // Brute force: the largest dominant zeta over gains whose dominant wn >= 1.8.
  double best = 0.0;
  for (double k = 1e-3; k < 1e3; k *= 1.0005) {
    PoleVerdict v = JudgeGain(loop, Region{}, k);
    if (v.meets && v.shape.wn >= 1.8) best = std::max(best, v.shape.zeta);
  }
  CHECK(why.best < 0.8);
  CHECK(why.best == doctest::Approx(best).epsilon(1e-3));
  CHECK(ShapeOf(JudgeGain(loop, Region{}, why.best_gain).dominant).wn >= 1.8 - 1e-9);
}

TEST_CASE("infeasible alone: wn beyond anything a stable loop reaches") {
  // 1/(s(s+1)(s+2)): the dominant pole never leaves |s| < sqrt(2) while the loop is stable.
  LoopPolynomials loop =
      LoopPolynomials::FromPolynomials(Polynomial({1.0, 3.0, 2.0, 0.0}), Polynomial({1.0}));
  Region region;
  region.wn_min = 3.0;
  Infeasibility why = DiagnoseInfeasible(loop, region);
  CHECK(why.requirement == "wn");
  CHECK(why.with.empty());
  CHECK(why.best == doctest::Approx(std::sqrt(2.0)).epsilon(1e-3));
}

TEST_CASE("no stable gain at all: a finite closest approach, also when the search is unbounded") {
  // P control of 1/s^2: s^2 + K has the roots +-j sqrt(K), on the imaginary axis for every K.
  // PI control of it: s^3 + K s + K Z lacks the s^2 term, so it is never Hurwitz (Routh-Hurwitz:
  // every coefficient of a stable polynomial is positive); its dominant root stays in the right
  // half-plane. The search over [0, inf) used to sample inf * 1e-4 and fail on a NaN.
  LoopPolynomials p =
      LoopPolynomials::FromPolynomials(Polynomial({1.0, 0.0, 0.0}), Polynomial({1.0}));
  Infeasibility why = DiagnoseInfeasible(p, Region{});
  CHECK(why.requirement == "stability");
  CHECK(why.best == doctest::Approx(0.0).scale(1.0).epsilon(1e-9));
  CHECK(std::isfinite(why.best_gain));
  CHECK(why.sentence.find("no gain K > 0 gives a stable loop") == 0);
  CHECK(why.sentence.find(" nan") == std::string::npos);
  CHECK(why.sentence.find("-nan") == std::string::npos);
  LoopPolynomials pi = LoopPolynomials::ForGain(TransferFunction({1.0}, {1.0, 0.0, 0.0}),
                                                Controller::Parse("pi:1"), 3);
  Infeasibility why_pi = DiagnoseInfeasible(pi, Region{});
  CHECK(why_pi.requirement == "stability");
  // Its dominant real part falls towards 0 only as K -> 0 (the roots tend to those of s^3):
  // the closest approach is that limit, said as such, and no gain does better.
  CHECK(why_pi.best == doctest::Approx(0.0).scale(1.0).epsilon(1e-12));
  CHECK(why_pi.best_gain == 0.0);
  CHECK(why_pi.sentence.find("as K -> 0") != std::string::npos);
  for (double k = 1e-6; k < 1e6; k *= 1.5) {
    CHECK(JudgeGain(pi, Region{}, k).dominant.real() > why_pi.best);
  }
}

}  // namespace
}  // namespace lw
