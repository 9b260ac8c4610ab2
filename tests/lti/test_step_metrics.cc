// Step-response metrics against closed-form responses.
//
// Outside references:
//   - Underdamped second order G = wn^2 / (s^2 + 2 zeta wn s + wn^2): step response
//       y(t) = 1 - exp(-zeta wn t) (cos wd t + zeta / sqrt(1 - zeta^2) sin wd t), wd = wn
//       sqrt(1-zeta^2),
//     peak time pi / wd and overshoot exp(-zeta pi / sqrt(1 - zeta^2)) (Ogata, Modern Control
//     Engineering, section on transient-response specifications; from memory; the same in any
//     standard control textbook).
//   - 10-90 % rise time ~ 1.8 / wn near zeta = 0.5 (common practice; the rule is known to be good
//     to about 10 % there).
//   - Overdamped second order (zeta > 1), poles s1,2 = (zeta -+ sqrt(zeta^2 - 1)) wn: step response
//       y(t) = 1 + wn / (2 sqrt(zeta^2 - 1)) (exp(-s1 t) / s1 - exp(-s2 t) / s2),
//     monotone, no overshoot (Ogata, Modern Control Engineering, same section; from memory).
//   - First order K / (tau s + 1): 10-90 % rise time tau ln 9 and 2 % settling time tau ln 50
//     (exact, from y = K (1 - exp(-t / tau))).
//   - Non-minimum-phase (1 - b s) / ((s + 1)(2 s + 1)): y = 1 + (1 + b) e^-t - (2 + b) e^(-t/2),
//     minimum 1 - (2 + b)^2 / (4 (1 + b)) (partial fractions, worked out by hand).
#include "lti/step_metrics.h"

#include <doctest/doctest.h>

#include <cmath>
#include <functional>
#include <numbers>
#include <random>
#include <vector>

#include "lti/error.h"

namespace {

using Response = std::function<double(double)>;

struct Sampled {
  std::vector<double> t, y;
};

// Samples f on [t0, t1] with step dt; times before t_step give f's value at the step start.
Sampled Sample(const Response& f, double t0, double t1, double dt, double t_step = 0.0) {
  Sampled s;
  const int n = static_cast<int>(std::round((t1 - t0) / dt));
  for (int i = 0; i <= n; ++i) {
    const double t = t0 + dt * i;
    s.t.push_back(t);
    s.y.push_back(t < t_step ? f(0.0) : f(t - t_step));
  }
  return s;
}

Response SecondOrder(double zeta, double wn) {
  return [=](double t) {
    const double wd = wn * std::sqrt(1 - zeta * zeta);
    return 1.0 - std::exp(-zeta * wn * t) *
                     (std::cos(wd * t) + zeta / std::sqrt(1 - zeta * zeta) * std::sin(wd * t));
  };
}

// First time in [a, b] where f - level changes sign, by bisection (f(a) < level <= f(b)).
double Bisect(const Response& f, double level, double a, double b) {
  for (int i = 0; i < 200; ++i) {
    const double m = 0.5 * (a + b);
    (f(m) < level ? a : b) = m;
  }
  return 0.5 * (a + b);
}

// Exact 10-90 % rise time of f: scan finely for the first bracket, then bisect.
double ExactCrossing(const Response& f, double level, double scan_dt) {
  double a = 0.0;
  while (f(a + scan_dt) < level) a += scan_dt;
  return Bisect(f, level, a, a + scan_dt);
}

// Exact 2 % settling time of f (final value 1) on [0, t_end]: the last band exit, by a fine scan
// backwards then bisection on the band distance.
double ExactSettling(const Response& f, double band, double t_end, double scan_dt) {
  double b = t_end;
  while (std::abs(f(b - scan_dt) - 1.0) <= band) b -= scan_dt;
  const Response distance = [&](double t) { return -std::abs(f(t) - 1.0); };
  return Bisect(distance, -band, b, b - scan_dt);
}

Response Overdamped(double zeta, double wn) {
  return [=](double t) {
    const double r = std::sqrt(zeta * zeta - 1);
    const double s1 = (zeta + r) * wn, s2 = (zeta - r) * wn;
    return 1.0 + wn / (2 * r) * (std::exp(-s1 * t) / s1 - std::exp(-s2 * t) / s2);
  };
}

std::vector<double> AddNoise(std::vector<double> y, double sd, unsigned seed) {
  std::mt19937 rng(seed);
  std::normal_distribution<double> noise(0.0, sd);
  for (double& v : y) v += noise(rng);
  return y;
}

}  // namespace

TEST_CASE("Second order: overshoot and peak time against the exact formulas") {
  for (double zeta : {0.2, 0.45, 0.5, 0.7}) {
    CAPTURE(zeta);
    const double wn = 2.5;
    const Response f = SecondOrder(zeta, wn);
    const Sampled s = Sample(f, 0.0, 14.0 / (zeta * wn), 1e-3);
    const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, 0.0);
    const double root = std::sqrt(1 - zeta * zeta);
    const double exact_overshoot = 100.0 * std::exp(-zeta * std::numbers::pi / root);
    const double exact_peak_time = std::numbers::pi / (wn * root);
    CHECK(m.overshoot_percent == doctest::Approx(exact_overshoot).epsilon(1e-4));
    CHECK(m.peak_time == doctest::Approx(exact_peak_time).epsilon(1e-6));
    CHECK(m.peak == doctest::Approx(1.0 + exact_overshoot / 100).epsilon(1e-6));
    CHECK(m.initial == 0.0);
    CHECK(m.final_value == doctest::Approx(1.0).epsilon(1e-5));
    CHECK(m.undershoot_percent == 0.0);
    CHECK(m.settled);
    // Rise and settling against the same closed form solved by bisection.
    const double t10 = ExactCrossing(f, 0.1, 1e-3), t90 = ExactCrossing(f, 0.9, 1e-3);
    CHECK(m.rise_time == doctest::Approx(t90 - t10).epsilon(1e-5));
    CHECK(m.settling_time ==
          doctest::Approx(ExactSettling(f, 0.02, 14.0 / (zeta * wn), 1e-3)).epsilon(1e-3));
  }
}

TEST_CASE("A peak only where the response overshoots, before the tail (Ogata closed forms)") {
  const double wn = 0.8;
  SUBCASE("underdamped: a peak at pi / wd, numbers as before") {
    const double zeta = 0.5, root = std::sqrt(1 - zeta * zeta);
    const Sampled s = Sample(SecondOrder(zeta, wn), 0.0, 14.0 / (zeta * wn), 1e-3);
    const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, 0.0);
    CHECK(m.has_peak);
    CHECK(m.no_peak.empty());
    CHECK(m.peak_time == doctest::Approx(std::numbers::pi / (wn * root)).epsilon(1e-6));
    CHECK(m.overshoot_percent ==
          doctest::Approx(100.0 * std::exp(-zeta * std::numbers::pi / root)).epsilon(1e-4));
  }
  SUBCASE("overdamped: no overshoot, no peak; the peak time stays that of the largest value") {
    const double zeta = 1.6, t_end = 60.0;
    const Sampled s = Sample(Overdamped(zeta, wn), 0.0, t_end, 1e-2);
    const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, 0.0);
    CHECK(m.overshoot_percent == 0.0);
    CHECK_FALSE(m.has_peak);
    CHECK(m.no_peak.rfind("no peak: the response rises 0 % of the step above its final value", 0) ==
          0);
    CHECK(m.peak_time == doctest::Approx(t_end));  // monotone: the last sample is the largest
    CHECK(m.settled);
  }
  SUBCASE("an overshoot below peak_min (0.1 % of the step) is no peak unless peak_min allows it") {
    // zeta 0.95 overshoots by exp(-0.95 pi / sqrt(1 - 0.95^2)) = 0.0071 %, zeta 0.9 by 0.15 %.
    for (double zeta : {0.9, 0.95}) {
      CAPTURE(zeta);
      const double root = std::sqrt(1 - zeta * zeta);
      const double exact = 100.0 * std::exp(-zeta * std::numbers::pi / root);
      const Sampled s = Sample(SecondOrder(zeta, wn), 0.0, 20.0 / (zeta * wn), 1e-3);
      const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, 0.0);
      CHECK(m.overshoot_percent == doctest::Approx(exact).epsilon(1e-3));
      CHECK(m.has_peak == (exact > 0.1));
      lw::StepMetricsOptions any;
      any.peak_min = 0.0;
      const lw::StepMetrics a = lw::MeasureStep(s.t, s.y, 0.0, any);
      CHECK(a.has_peak);
      CHECK(a.peak_time == doctest::Approx(std::numbers::pi / (wn * root)).epsilon(1e-4));
    }
  }
  SUBCASE("measured overdamped plateau, flat or still creeping: no peak") {
    const double zeta = 1.6, t_end = 60.0;
    const Response f = Overdamped(zeta, wn);
    const Sampled s = Sample(f, 0.0, t_end, 1e-2);
    lw::StepMetricsOptions noisy;
    noisy.noisy = true;
    for (unsigned seed : {1u, 2u, 3u}) {
      CAPTURE(seed);
      const lw::StepMetrics flat = lw::MeasureStep(s.t, AddNoise(s.y, 0.004, seed), 0.0, noisy);
      CHECK_FALSE(flat.has_peak);
      CHECK(flat.no_peak.rfind("no peak: ", 0) == 0);
      // A creep of 10 % of the step over the record: the tail's average is below its last
      // samples, so the largest value overshoots that average, but in the tail.
      std::vector<double> creeping = s.y;
      for (size_t i = 0; i < creeping.size(); ++i) creeping[i] += 0.1 * s.t[i] / t_end;
      const lw::StepMetrics c = lw::MeasureStep(s.t, AddNoise(creeping, 0.004, seed), 0.0, noisy);
      CHECK(c.overshoot_percent > 0.0);
      CHECK(c.peak_time > 0.8 * t_end);
      CHECK_FALSE(c.has_peak);
      CHECK(c.no_peak.find("is in the last 20 % of the record") != std::string::npos);
    }
  }
}

TEST_CASE("Rise time near zeta = 0.5 is about 1.8 / wn (common practice, within ~10 %)") {
  for (double wn : {0.4, 1.0, 7.0}) {
    const Response f = SecondOrder(0.5, wn);
    const Sampled s = Sample(f, 0.0, 30.0 / wn, 1e-3 / wn);
    const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, 0.0);
    CHECK(std::abs(m.rise_time * wn - 1.8) / 1.8 < 0.10);
  }
}

TEST_CASE("First order: rise time tau ln 9 and settling time tau ln 50 (exact)") {
  const double tau = 0.8, gain = -3.0, y0 = 1.5, t_step = 2.0;
  const Response f = [=](double t) { return y0 + gain * (1 - std::exp(-t / tau)); };
  const Sampled s = Sample(f, 0.0, t_step + 20 * tau, 1e-4, t_step);
  const std::vector<double> u(s.t.size(), 0.0);
  std::vector<double> u2 = u;
  u2[5] = -9.0;  // before the step: not counted
  u2[s.t.size() - 3] = -4.25;
  const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, t_step, {}, y0 + gain + 0.01, u2);
  CHECK(m.initial == y0);
  CHECK(m.final_value == doctest::Approx(y0 + gain).epsilon(1e-8));
  CHECK(m.rise_time == doctest::Approx(tau * std::log(9.0)).epsilon(1e-6));
  CHECK(m.settling_time == doctest::Approx(tau * std::log(50.0)).epsilon(1e-6));
  CHECK(m.overshoot_percent == 0.0);
  CHECK(m.undershoot_percent == 0.0);
  CHECK(m.steady_state_error == doctest::Approx(0.01).epsilon(1e-5));
  CHECK(m.peak_actuator == 4.25);
  CHECK(m.settled);

  // Configurable levels: 5-95 % rise is tau ln 19; a 5 % band settles at tau ln 20.
  lw::StepMetricsOptions o;
  o.rise_low = 0.05;
  o.rise_high = 0.95;
  o.settle_band = 0.05;
  const lw::StepMetrics m2 = lw::MeasureStep(s.t, s.y, t_step, o);
  CHECK(m2.rise_time == doctest::Approx(tau * std::log(19.0)).epsilon(1e-6));
  CHECK(m2.settling_time == doctest::Approx(tau * std::log(20.0)).epsilon(1e-6));
}

TEST_CASE("Undershoot of a non-minimum-phase response (partial fractions)") {
  const double b = 3.0;
  const Response f = [=](double t) {
    return 1 + (1 + b) * std::exp(-t) - (2 + b) * std::exp(-t / 2);
  };
  const Sampled s = Sample(f, 0.0, 40.0, 1e-3);
  const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, 0.0);
  const double exact_min = 1 - (2 + b) * (2 + b) / (4 * (1 + b));
  CHECK(m.undershoot_percent == doctest::Approx(-100 * exact_min).epsilon(1e-5));
  CHECK(m.overshoot_percent == 0.0);
}

TEST_CASE("A record that ends before settling is reported as not settled") {
  const Response f = [](double t) { return 1 - std::exp(-t); };
  const Sampled s = Sample(f, 0.0, 3.0, 1e-3);  // still 5 % short of the final value at the end
  const lw::StepMetrics m = lw::MeasureStep(s.t, s.y, 0.0, {}, 1.0);
  CHECK_FALSE(m.settled);
  CHECK(m.steady_state_error == doctest::Approx(std::exp(-3.0)).epsilon(1e-6));
  // A response that never reaches 90 % of its final value within the record: the final value
  // is the last sample, so it does reach it; a flat record has no step at all.
  const std::vector<double> t = {0, 1, 2, 3}, flat = {2, 2, 2, 2};
  const lw::StepMetrics none = lw::MeasureStep(t, flat, 0.0);
  CHECK(std::isnan(none.rise_time));
  CHECK(std::isnan(none.settling_time));
  CHECK_FALSE(none.settled);
  CHECK_FALSE(none.has_peak);
}

TEST_CASE("Noisy second order: metrics close to the noise-free ones, no false crossings") {
  const double zeta = 0.5, wn = 2.0, dt = 1e-3, t_step = 1.0, t_end = t_step + 12.0;
  const Response f = SecondOrder(zeta, wn);
  const Sampled s = Sample(f, 0.0, t_end, dt, t_step);
  const lw::StepMetrics clean = lw::MeasureStep(s.t, s.y, t_step);
  lw::StepMetricsOptions noisy;
  noisy.noisy = true;
  for (unsigned seed : {1u, 2u, 3u, 4u, 5u}) {
    CAPTURE(seed);
    const std::vector<double> y = AddNoise(s.y, 0.01, seed);  // 1 % of the step
    const lw::StepMetrics m = lw::MeasureStep(s.t, y, t_step, noisy);
    CHECK(m.noise_sd == doctest::Approx(0.01).epsilon(0.05));
    CHECK(m.initial == doctest::Approx(0.0).epsilon(0.002));
    CHECK(std::abs(m.final_value - 1.0) < 0.002);
    CHECK(m.overshoot_percent == doctest::Approx(clean.overshoot_percent).epsilon(0.05));
    CHECK(m.peak_time == doctest::Approx(clean.peak_time).epsilon(0.02));
    CHECK(m.rise_time == doctest::Approx(clean.rise_time).epsilon(0.02));
    CHECK(m.settling_time == doctest::Approx(clean.settling_time).epsilon(0.05));
    CHECK(m.settled);
    // The check above means something: on the raw samples the noise leaves the 2 % band again
    // and again until the very end, so a naive last exit would be near t_end.
    double last_raw_exit = 0.0;
    for (size_t i = 0; i < y.size(); ++i)
      if (std::abs(y[i] - 1.0) > 0.02) last_raw_exit = s.t[i];
    CHECK(last_raw_exit > t_end - 1.0);
  }
}

TEST_CASE("Noisy first order with dead time: rise and settling close to the exact values") {
  const double tau = 0.5, delay = 0.3, t_step = 0.5, dt = 5e-4;
  const Response f = [=](double t) {
    return t < delay ? 0.0 : 2.0 * (1 - std::exp(-(t - delay) / tau));
  };
  const Sampled s = Sample(f, 0.0, t_step + 10.0, dt, t_step);
  lw::StepMetricsOptions noisy;
  noisy.noisy = true;
  for (unsigned seed : {11u, 12u, 13u}) {
    CAPTURE(seed);
    const lw::StepMetrics m = lw::MeasureStep(s.t, AddNoise(s.y, 0.02, seed), t_step, noisy);
    CHECK(m.rise_time == doctest::Approx(tau * std::log(9.0)).epsilon(0.03));
    CHECK(m.settling_time == doctest::Approx(delay + tau * std::log(50.0)).epsilon(0.05));
    CHECK(m.overshoot_percent == 0.0);
    CHECK(m.undershoot_percent == 0.0);
    CHECK(m.final_value == doctest::Approx(2.0).epsilon(0.002));
  }
}

TEST_CASE("Bad arguments are usage errors naming the rule") {
  const std::vector<double> t = {0, 1, 2, 3}, y = {0, 1, 1, 1};
  lw::StepMetricsOptions o;
  o.rise_high = 0.05;
  CHECK_THROWS_WITH_AS(lw::MeasureStep(t, y, 0.0, o),
                       "step metrics option rise_high = 0.05: must be in (rise_low, 1]",
                       lw::UsageError);
  o = {};
  o.settle_band = 0.0;
  CHECK_THROWS_AS(o.Validate(), lw::UsageError);
  o = {};
  o.peak_min = 1.0;
  CHECK_THROWS_WITH_AS(o.Validate(), "step metrics option peak_min = 1: must be in [0, 1)",
                       lw::UsageError);
  CHECK_THROWS_AS(lw::MeasureStep(t, std::vector<double>{0, 1}, 0.0), lw::UsageError);
  CHECK_THROWS_AS(lw::MeasureStep(t, y, 1.5), lw::UsageError);  // 2 samples after the step
  const std::vector<double> back = {0, 2, 1, 3};
  CHECK_THROWS_AS(lw::MeasureStep(back, y, 0.0), lw::UsageError);
}
