// The rest test of identify/steady_state.h on responses with closed forms: a first-order lag
// y = K (1 - exp(-(t - L) / tau)) for t >= L (any control textbook, e.g. Ogata, Modern Control
// Engineering, ch. 5: the 2 % settling time of a first-order lag is 4 tau). The test must never
// call such a response at rest before its 2 % settling time, and should call it at rest within a
// few more time constants, with and without measurement noise.
#include "identify/steady_state.h"

#include <cmath>
#include <random>
#include <vector>

#include <doctest/doctest.h>

#include "lti/error.h"

namespace lw {
namespace {

// The first time (s) at which the test says "at rest", feeding samples one by one, or -1.
double FirstRest(double gain, double tau, double dead, double dt, double noise_sd, double t_max,
                 bool require_change, unsigned seed = 7) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> n(0.0, 1.0);
  SteadyStateOptions o;
  o.require_change = require_change;
  std::vector<double> y;
  for (double t = 0.0; t <= t_max; t += dt) {
    double clean = t < dead ? 0.0 : gain * (1.0 - std::exp(-(t - dead) / tau));
    y.push_back(10.0 + clean + noise_sd * n(rng));
    if (TestSteadyState(y, 0, 10.0, o).at_rest) return t;
  }
  return -1.0;
}

TEST_CASE("steady state: a noise-free first-order lag rests after its 2 % settling time") {
  for (double tau : {0.85, 5.0, 240.0}) {
    double dt = tau / 50.0;
    double t = FirstRest(3.0, tau, 0.0, dt, 0.0, 40 * tau, true);
    CAPTURE(tau);
    CHECK(t >= 4.0 * tau);
    CHECK(t <= 7.0 * tau);
  }
}

TEST_CASE("steady state: the dead time is not taken for rest when a change is required") {
  double tau = 2.0, dead = 6.0;
  double t = FirstRest(-1.5, tau, dead, 0.04, 0.0, 60.0, true);
  CHECK(t >= dead + 4.0 * tau);
  CHECK(t <= dead + 7.0 * tau);
}

TEST_CASE("steady state: noisy responses (sd 2 % of the step) over many seeds") {
  double tau = 1.0;
  for (unsigned seed = 1; seed <= 40; ++seed) {
    double t = FirstRest(1.0, tau, 0.3, 0.01, 0.02, 40.0, true, seed);
    CAPTURE(seed);
    CHECK(t >= 0.3 + 3.0 * tau);  // noise may end it a little before the noise-free 4 tau
    CHECK(t > 0.0);
    CHECK(t <= 0.3 + 12.0 * tau);
  }
}

TEST_CASE("steady state: a flat noisy hold rests as soon as the window is full; a ramp never") {
  std::mt19937_64 rng(3);
  std::normal_distribution<double> n(0.0, 0.5);
  std::vector<double> flat, ramp;
  for (int k = 0; k < 40; ++k) {
    flat.push_back(20.0 + n(rng));
    ramp.push_back(20.0 + 0.2 * k + n(rng));
  }
  CHECK(TestSteadyState(flat, 0, flat.front()).at_rest);
  for (int k = 40; k < 2000; ++k) ramp.push_back(20.0 + 0.2 * k + n(rng));
  CHECK_FALSE(TestSteadyState(ramp, 0, 20.0).at_rest);
  CHECK_FALSE(TestSteadyState(std::vector<double>(39, 1.0), 0, 1.0).at_rest);  // too few
  SteadyStateOptions bad;
  bad.band = 1.5;
  CHECK_THROWS_AS(bad.Validate(), UsageError);
}

}  // namespace
}  // namespace lw
