// The sampled loop's step (design/sampled_step.h) and the sampled response band, against the
// zero-order-hold equations of a first-order plant worked by hand (the sampled first-order
// plant and its modified z-transform for a fractional delay: Åström & Wittenmark,
// Computer-Controlled Systems, chapter 2, from memory). Plants of our own.
#include <cmath>
#include <vector>

#include <doctest/doctest.h>

#include "design/response_band.h"
#include "design/sampled_step.h"
#include "lti/error.h"
#include "lti/simulate.h"

namespace lw {
namespace {

// y' = (kp u - y) / tau with u = K e[k] held over [kT, (k+1)T), e[k] = 1 - y(kT).
TEST_CASE(
    "sampled P loop on kp/(tau s + 1): the samples follow y[k+1] = a y[k] + (1 - a) kp K e[k]") {
  const double kp = 2.0, tau = 3.0, T = 0.4, K = 1.3;
  const TransferFunction plant({kp}, {tau, 1.0});
  std::vector<double> t;
  for (int i = 0; i <= 200; ++i) t.push_back(0.037 * i);  // between samples too
  ClosedLoopResponse r = SimulateSampledStep(plant, Controller(), K, T, t);
  REQUIRE(r.y.size() == t.size());
  for (size_t i = 0; i < t.size(); ++i) {
    // The held input and the state at the last sample instant, then the exact exponential.
    const int k = static_cast<int>(std::floor(t[i] / T + 1e-12));
    double y = 0.0, e = 1.0;
    const double a = std::exp(-T / tau);
    for (int j = 0; j < k; ++j) {
      e = 1.0 - y;
      y = a * y + (1.0 - a) * kp * K * e;
    }
    e = 1.0 - y;
    const double s = t[i] - k * T;
    const double want = kp * K * e + (y - kp * K * e) * std::exp(-s / tau);
    CHECK(r.y[i] == doctest::Approx(want).epsilon(1e-11));
    CHECK(r.u[i] == doctest::Approx(K * e).epsilon(1e-11));
  }
}

TEST_CASE("sampled P loop with a fractional dead time: the modified z-transform recursion") {
  // Dead time (m + f) T: y[k+1] = a y[k] + kp K (g_late e[k-m] + g_early e[k-m-1]),
  // g_late = 1 - exp(-(1-f) T / tau), g_early = exp(-(1-f) T / tau) (1 - exp(-f T / tau)).
  const double kp = 0.8, tau = 2.0, T = 0.5, K = 0.9, m = 2, f = 0.3;
  const TransferFunction plant({kp}, {tau, 1.0}, (m + f) * T);
  std::vector<double> t;
  for (int k = 0; k < 60; ++k) t.push_back(k * T);
  ClosedLoopResponse r = SimulateSampledStep(plant, Controller(), K, T, t);
  const double a = std::exp(-T / tau), late = 1.0 - std::exp(-(1.0 - f) * T / tau);
  const double early = std::exp(-(1.0 - f) * T / tau) * (1.0 - std::exp(-f * T / tau));
  std::vector<double> y(t.size(), 0.0), e(t.size(), 0.0);
  auto at = [&](int j) { return j >= 0 ? e[static_cast<size_t>(j)] : 0.0; };
  for (int k = 0; k + 1 < static_cast<int>(t.size()); ++k) {
    e[static_cast<size_t>(k)] = 1.0 - y[static_cast<size_t>(k)];
    y[static_cast<size_t>(k + 1)] =
        a * y[static_cast<size_t>(k)] + kp * K * (late * at(k - 2) + early * at(k - 3));
  }
  for (size_t k = 0; k < t.size(); ++k) CHECK(r.y[k] == doctest::Approx(y[k]).epsilon(1e-10));
  CHECK(r.y.back() == doctest::Approx(kp * K / (1.0 + kp * K)).epsilon(1e-6));
}

TEST_CASE("sampled PI loop approaches the continuous loop as the period shrinks") {
  const TransferFunction plant({1.5}, {4.0, 5.0, 1.0}, 0.3);  // 1.5 e^{-0.3 s}/((4s+1)(s+1))
  const Controller pi = Controller::Parse("pi:0.4");
  std::vector<double> t;
  for (int i = 0; i <= 300; ++i) t.push_back(0.1 * i);
  const std::vector<double> r(t.size(), 1.0);
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  const ClosedLoopResponse c = SimulateClosedLoop(plant, pi, 0.7, t, r, so);
  double err_coarse = 0.0, err_fine = 0.0;
  const ClosedLoopResponse coarse = SimulateSampledStep(plant, pi, 0.7, 0.02, t);
  const ClosedLoopResponse fine = SimulateSampledStep(plant, pi, 0.7, 0.002, t);
  for (size_t i = 0; i < t.size(); ++i) {
    err_coarse = std::max(err_coarse, std::abs(coarse.y[i] - c.y[i]));
    err_fine = std::max(err_fine, std::abs(fine.y[i] - c.y[i]));
  }
  // The hold lags by half a period: the error is first order in T.
  CHECK(err_fine < 2e-3);
  CHECK(err_coarse / err_fine == doctest::Approx(10.0).epsilon(0.15));
  CHECK(fine.y.back() == doctest::Approx(1.0).epsilon(1e-3));  // the integrator removes the error
}

TEST_CASE("sampled response band of P on kp/(tau s + 1): overshoot -100 p caps K") {
  // From rest y[1] = (1 - a) kp K and the final value kp K/(1 + kp K); with the pole
  // p = a - (1 - a) kp K < 0 the samples alternate about it and the first is the peak (the
  // response is monotone between samples): overshoot = -100 p. An overshoot cap of 10 % gives
  // kp K = (a + 0.1)/(1 - a); the continuous loop (first order) never overshoots.
  const double kp = 2.0, tau = 3.0, T = 0.4, a = std::exp(-T / tau);
  const TransferFunction plant({kp}, {tau, 1.0});
  Specs specs;
  specs.overshoot_max = 10.0;
  ResponseBandOptions opt;
  const ResponseBand continuous = FindResponseBand(plant, Controller(), specs, opt);
  REQUIRE(continuous.ranges.size() == 1);
  CHECK(std::isinf(continuous.ranges[0].hi.gain));
  opt.sample_time = T;
  const ResponseBand sampled = FindResponseBand(plant, Controller(), specs, opt);
  REQUIRE(sampled.ranges.size() == 1);
  CHECK(sampled.ranges[0].lo.gain == 0.0);
  CHECK(sampled.ranges[0].hi.gain == doctest::Approx((a + 0.1) / (1.0 - a) / kp).epsilon(1e-5));
  CHECK(sampled.ranges[0].hi.limiting == "overshoot");
  // Just inside and outside that edge, one gain at a time.
  const double edge = (a + 0.1) / (1.0 - a) / kp;
  CHECK(CheckResponse(plant, Controller(), edge * 0.999, specs, opt).meets);
  const ResponseCheck out = CheckResponse(plant, Controller(), edge * 1.001, specs, opt);
  CHECK_FALSE(out.meets);
  // The record ends when the slowest mode is down to e^-12 (its final sample that close to the
  // final value), hence 1e-4 and not rounding.
  CHECK(out.metrics.overshoot_percent ==
        doctest::Approx(100.0 * ((1.0 - a) * kp * edge * 1.001 - a)).epsilon(1e-4));
}

TEST_CASE("sampled response band: unstable beyond the sampled loop's limit (1 + a)/((1 - a) kp)") {
  const double kp = 0.5, tau = 1.2, T = 0.9, a = std::exp(-T / tau);
  const TransferFunction plant({kp}, {tau, 1.0});
  Specs specs;  // stability and settling only
  ResponseBandOptions opt;
  opt.sample_time = T;
  const double limit = (1.0 + a) / ((1.0 - a) * kp);
  CHECK(CheckResponse(plant, Controller(), limit * 1.01, specs, opt).failed == "unstable");
  CHECK(CheckResponse(plant, Controller(), limit * 0.5, specs, opt).meets);
  const ResponseBand band = FindResponseBand(plant, Controller(), specs, opt);
  REQUIRE(band.ranges.size() == 1);
  // "Settles within 2 %" needs a record long enough; near the limit the loop is still stable but
  // slow to settle, so the edge is at or just below it.
  CHECK(band.ranges[0].hi.gain <= limit * (1.0 + 1e-6));
  CHECK(band.ranges[0].hi.gain > limit * 0.99);
}

TEST_CASE("SimulateSampledStep refuses a non-positive period or gain") {
  const TransferFunction plant({1.0}, {2.0, 1.0});
  const std::vector<double> t{0.0, 1.0};
  CHECK_THROWS_AS(SimulateSampledStep(plant, Controller(), 1.0, 0.0, t), UsageError);
  CHECK_THROWS_AS(SimulateSampledStep(plant, Controller(), -1.0, 0.1, t), UsageError);
  ResponseBandOptions opt;
  opt.sample_time = -0.1;
  CHECK_THROWS_AS(opt.Validate(), UsageError);
}

}  // namespace
}  // namespace lw
