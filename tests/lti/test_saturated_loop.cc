// The clipped closed loop against closed-form first-order responses (while the actuator sits at
// its limit the plant sees a constant input, so y is the exact first-order step response
// K u_max (1 - exp(-(t - t0 - T)/tau)), any control textbook) and against the exact unclipped
// loop when the limits are never reached.
#include <cmath>
#include <vector>

#include <doctest/doctest.h>

#include "lti/saturated_loop.h"
#include "lti/error.h"
#include "lti/input_signal.h"

namespace lw {
namespace {

std::vector<double> StepAt(const std::vector<double>& t, double at, double from, double to) {
  std::vector<double> r(t.size());
  for (size_t k = 0; k < t.size(); ++k) r[k] = t[k] >= at ? to : from;
  return r;
}

TEST_CASE("limits never reached: the exact unclipped loop is returned") {
  TransferFunction plant({1.8}, {30.0, 1.0}, 4.0);
  Controller pi = Controller::Parse("pi:0.04");
  std::vector<double> t = UniformGrid(2.0, 200.0);
  std::vector<double> r = StepAt(t, 10.0, 0.0, 1.0);
  SaturatedLoopResponse out = SimulateSaturatedLoop(plant, pi, 0.9, t, r, {-100.0, 100.0});
  ClosedLoopResponse exact = SimulateClosedLoop(plant, pi, 0.9, t, r);
  CHECK(!out.limits_reached);
  CHECK(out.internal_steps == 0);
  CHECK(out.response.y == exact.y);
  CHECK(out.response.u == exact.u);
}

TEST_CASE("P loop held at the upper limit follows the first-order step response") {
  // G = 2/(5 s + 1), K = 10, r: 0 -> 1 at t = 1, u limited to [-1, 1]. At the step the
  // unclipped u would be 10; clipped to 1, y = 2 (1 - exp(-(t - 1)/5)) until 10 (1 - y) < 1, i.e.
  // y > 0.9, t = 1 - 5 ln(0.55) = 3.989 s. Afterwards the loop is linear again and settles at the
  // type-0 P-loop steady state K G(0) / (1 + K G(0)) = 20/21.
  TransferFunction plant({2.0}, {5.0, 1.0});
  Controller p;
  std::vector<double> t = UniformGrid(100.0, 12.0);
  std::vector<double> r = StepAt(t, 1.0, 0.0, 1.0);
  SaturatedLoopResponse out = SimulateSaturatedLoop(plant, p, 10.0, t, r, {-1.0, 1.0});
  CHECK(out.limits_reached);
  CHECK(out.internal_steps > 0);
  const double t_leave = 1.0 - 5.0 * std::log(0.55);
  for (size_t k = 0; k < t.size(); ++k) {
    if (t[k] < 1.0) {
      CHECK(std::abs(out.response.y[k]) < 1e-12);
    } else if (t[k] <= t_leave - 0.01) {
      CHECK(out.response.u[k] == 1.0);
      CHECK(std::abs(out.response.y[k] - 2.0 * (1.0 - std::exp(-(t[k] - 1.0) / 5.0))) < 1e-7);
    }
  }
  CHECK(out.response.u.back() < 1.0);
  CHECK(std::abs(out.response.y.back() - 20.0 / 21.0) < 1e-4);
}

TEST_CASE("with dead time the clipped actuator reaches the output T later") {
  // G = 2 exp(-0.5 s)/(5 s + 1), same loop: y stays 0 until 1.5 s, then follows
  // 2 (1 - exp(-(t - 1.5)/5)) while u is held at 1 (u leaves the limit once 10 (1 - y) < 1).
  TransferFunction plant({2.0}, {5.0, 1.0}, 0.5);
  Controller p;
  std::vector<double> t = UniformGrid(100.0, 30.0);
  std::vector<double> r = StepAt(t, 1.0, 0.0, 1.0);
  SaturatedLoopResponse out = SimulateSaturatedLoop(plant, p, 10.0, t, r, {-1.0, 1.0});
  REQUIRE(out.limits_reached);
  double t_leave = 1.5 - 5.0 * std::log(0.55);
  for (size_t k = 0; k < t.size(); ++k) {
    if (t[k] <= 1.5) {
      CHECK(std::abs(out.response.y[k]) < 1e-12);
    } else if (t[k] <= t_leave - 0.01) {
      CHECK(std::abs(out.response.y[k] - 2.0 * (1.0 - std::exp(-(t[k] - 1.5) / 5.0))) < 1e-7);
    }
  }
  // Between 1 s and the first time y moves, the loop sees no output yet: u stays at the limit.
  for (size_t k = 0; k < t.size(); ++k) {
    if (t[k] >= 1.0 && t[k] <= 1.5) CHECK(out.response.u[k] == 1.0);
  }
}

TEST_CASE("PI loop winds up while clipped: the integral keeps growing") {
  // A plain PI without anti-windup: with the actuator held at its limit, the error stays
  // positive, so the controller's own output keeps rising past the limit and the response
  // overshoots more than the unclipped loop does.
  TransferFunction plant({1.0}, {10.0, 1.0}, 1.0);
  Controller pi = Controller::Parse("pi:0.2");
  std::vector<double> t = UniformGrid(10.0, 120.0);
  std::vector<double> r = StepAt(t, 1.0, 0.0, 1.0);
  SaturatedLoopResponse clipped = SimulateSaturatedLoop(plant, pi, 2.0, t, r, {0.0, 1.3});
  ClosedLoopResponse free = SimulateClosedLoop(plant, pi, 2.0, t, r);
  REQUIRE(clipped.limits_reached);
  double peak_clipped = 0.0, peak_free = 0.0;
  for (size_t k = 0; k < t.size(); ++k) {
    peak_clipped = std::max(peak_clipped, clipped.response.y[k]);
    peak_free = std::max(peak_free, free.y[k]);
    CHECK(clipped.response.u[k] <= 1.3);
    CHECK(clipped.response.u[k] >= 0.0);
  }
  CHECK(peak_clipped > peak_free);
  // Integral action removes the steady-state error either way.
  CHECK(std::abs(clipped.response.y.back() - 1.0) < 1e-3);
}

TEST_CASE("refusals") {
  Controller p;
  std::vector<double> t = UniformGrid(10.0, 5.0);
  std::vector<double> r = StepAt(t, 1.0, 0.0, 1.0);
  // A biproper plant without dead time passes u straight to y: no unique clipped solution.
  TransferFunction biproper({1.0, 2.0}, {1.0, 1.0});
  CHECK_THROWS_AS(SimulateSaturatedLoop(biproper, p, 5.0, t, r, {-0.1, 0.1}), UsageError);
  TransferFunction plant({1.0}, {1.0, 1.0});
  CHECK_THROWS_AS(SimulateSaturatedLoop(plant, p, 5.0, t, r, {1.0, -1.0}), UsageError);
}

}  // namespace
}  // namespace lw
