// Prediction at one gain against second-order closed forms (Franklin, Powell & Emami-Naeini,
// Feedback Control of Dynamic Systems, ch. 3; from memory) for a plant of our own.
#include <cmath>
#include <numbers>
#include <string>

#include <doctest/doctest.h>

#include "design/loop_polynomials.h"
#include "design/prediction.h"

namespace lw {
namespace {

// The sign of K G(s) C(s) as s -> 0 decides whether K > 0 is negative feedback; the Padé factor
// of a dead time is 1 there, and an integrator does not change the sign of s -> 0+.
TEST_CASE("low-frequency sign: direct- and reverse-acting plants, integrating, with dead time") {
  const Controller p, pi = Controller::Parse("pi:0.1");
  auto sign = [](const TransferFunction& g, const Controller& c) {
    return LoopPolynomials::ForGain(g, c, 3).LowFrequencySign();
  };
  const TransferFunction direct({2.0}, {1.0, 1.0});
  const TransferFunction reverse({-2.0}, {1.0, 1.0});
  const TransferFunction reverse_delay({-2.0}, {1.0, 1.0}, 0.7);
  const TransferFunction reverse_integrating({-0.8}, {4.0, 1.0, 0.0}, 1.3);
  const TransferFunction inverse_response({-8.0 * 1.5, 1.5}, {100.0, 25.0, 1.0}, 2.0);
  CHECK(sign(direct, p) == 1);
  CHECK(sign(direct, pi) == 1);
  CHECK(sign(reverse, p) == -1);
  CHECK(sign(reverse_delay, pi) == -1);
  CHECK(sign(reverse_integrating, p) == -1);
  CHECK(sign(inverse_response, p) == 1);  // a right-half-plane zero, positive dc gain
  // Open-loop unstable plants. 1/(s - 1) has G(0) = -1, yet K > 1 makes s - 1 + K stable
  // (Routh-Hurwitz) and the closed loop K/(s - 1 + K) has a positive gain K/(K - 1): it follows
  // r. 1/(1 - s) = -1/(s - 1) has G(0) = +1, yet s - 1 - K is unstable for every K > 0.
  const TransferFunction unstable({1.0}, {1.0, -1.0});
  const TransferFunction unstable_reversed({1.0}, {-1.0, 1.0});
  CHECK(sign(unstable, p) == 1);
  CHECK(sign(unstable_reversed, p) == -1);
  CHECK(PositiveFeedbackNote(LoopPolynomials::ForGain(unstable, p, 3), unstable).empty());
  const std::string unstable_note =
      PositiveFeedbackNote(LoopPolynomials::ForGain(unstable_reversed, p, 3), unstable_reversed);
  CHECK(unstable_note.find("the plant is unstable") == 0);
  CHECK(unstable_note.find("no gain K > 0 gives a stable loop") != std::string::npos);
  // A PI zero in the right half-plane reverses a direct-acting plant's loop: K (s - 1)/s has
  // the low-frequency gain -K/s. The sentence blames the controller, not the plant.
  const Controller pi_rhp = Controller::Parse("pi:-1");
  CHECK(sign(direct, pi_rhp) == -1);
  CHECK(sign(reverse, pi_rhp) == 1);  // two reversals: K (s - 1)/s * -2/(s + 1) -> 2K/s
  const std::string controller_note =
      PositiveFeedbackNote(LoopPolynomials::ForGain(direct, pi_rhp, 3), direct);
  CHECK(controller_note.find("the controller's zeros") == 0);
  CHECK(controller_note.find("G(0)") == std::string::npos);
  CHECK(PositiveFeedbackNote(LoopPolynomials::ForGain(direct, p, 3), direct).empty());
  const std::string note = PositiveFeedbackNote(LoopPolynomials::ForGain(reverse_integrating, p, 3),
                                                reverse_integrating);
  CHECK(note.find("G(s) -> -0.8/s as s -> 0") != std::string::npos);
  // Predict still answers, and says so.
  Prediction r = Predict(reverse, p, 0.2);
  CHECK(r.stable);
  CHECK(r.direction_warning.find("positively") != std::string::npos);
  CHECK(Predict(direct, p, 0.2).direction_warning.empty());
}

TEST_CASE("P control of 2/((s+1)(0.5 s+1)) at K = 3: a pure second-order closed loop") {
  // (s+1)(0.5 s+1) + 6 = 0  <=>  s^2 + 3 s + 14 = 0: wn = sqrt(14), zeta = 3 / (2 sqrt(14)).
  TransferFunction plant(Polynomial({2.0}), Polynomial({1.0, 1.0}) * Polynomial({0.5, 1.0}));
  PredictionOptions o;
  o.samples = 6000;
  o.actuator_lo = -2.0;
  o.actuator_hi = 2.0;
  Prediction p = Predict(plant, Controller(), 3.0, o);
  const double wn = std::sqrt(14.0), zeta = 3.0 / (2.0 * std::sqrt(14.0));
  CHECK(p.stable);
  CHECK(p.pade_order == 0);
  CHECK(p.dominant_shape.wn == doctest::Approx(wn).epsilon(1e-12));
  CHECK(p.dominant_shape.zeta == doctest::Approx(zeta).epsilon(1e-12));
  // Steady-state error 1 / (1 + K G(0)) = 1/7, exact and simulated.
  CHECK(p.steady_state_error == doctest::Approx(1.0 / 7.0).epsilon(1e-12));
  // (the automatic record ends at 12 / sigma: the transient is down to about exp(-12) there)
  CHECK(p.metrics.steady_state_error == doctest::Approx(1.0 / 7.0).epsilon(1e-4));
  // Overshoot and peak time of a second-order pair without zeros.
  double mp = 100.0 * std::exp(-std::numbers::pi * zeta / std::sqrt(1 - zeta * zeta));
  CHECK(p.metrics.overshoot_percent == doctest::Approx(mp).epsilon(2e-3));
  double wd = wn * std::sqrt(1 - zeta * zeta);
  CHECK(p.metrics.peak_time == doctest::Approx(std::numbers::pi / wd).epsilon(2e-3));
  // u(0+) = K (r - y(0)) = 3 is the peak: beyond the limit 2.
  CHECK(p.metrics.peak_actuator == doctest::Approx(3.0).epsilon(1e-9));
  CHECK(p.actuator_exceeded);
  CHECK(p.actuator_warning.find("upper limit 2") != std::string::npos);
  // Margins: the loop 6/((s+1)(0.5s+1)) never reaches -180 degrees.
  CHECK(std::isinf(p.margins.gain_margin));
  CHECK(p.margins.phase_margin_deg > 0.0);
}

TEST_CASE("an integrating loop has zero steady-state error; dead time reported through Padé") {
  TransferFunction plant(Polynomial({0.8}), Polynomial({1.0, 0.0}) * Polynomial({1.5, 1.0}), 0.2);
  PredictionOptions o;
  o.pade_order = 4;
  Prediction p = Predict(plant, Controller(), 0.5, o);
  CHECK(p.stable);
  CHECK(p.pade_order == 4);
  CHECK(p.steady_state_error == 0.0);
  CHECK(std::abs(p.metrics.steady_state_error) < 1e-4);
  CHECK(std::isfinite(p.margins.gain_margin));
  CHECK_FALSE(p.actuator_exceeded);
}

}  // namespace
}  // namespace lw
