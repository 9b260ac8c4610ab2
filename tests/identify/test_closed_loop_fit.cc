// Closed-loop identification (identify/closed_loop_fit.h). The data come from a closed form, not
// from the library's loop simulator: a first-order plant Kp / (tau s + 1) under proportional
// control K with unity feedback is the first-order loop
//   dy(t) = dr Kc (1 - exp(-t / tc)),   Kc = K Kp / (1 + K Kp),   tc = tau / (1 + K Kp)
// after a set-point step dr (any control textbook, e.g. Ogata, Modern Control Engineering, ch. 5;
// from memory), and du = K (dr - dy). The recovery with dead time inside the loop is checked
// against scipy in tests/reference/closed_loop_fit.py.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <random>
#include <string>
#include <vector>

#include "identify/closed_loop_fit.h"
#include "lti/error.h"

namespace {

struct LoopData {
  lw::ClosedLoopRecording rec;
};

// Plant 1.8 / (12 s + 1), P control K = 2.5, at rest at y = 40 with a manual bias u = 10, the
// set point raised by 5 at t = 5 s; sampled every 0.2 s for 40 s; Gaussian noise sd_y on y and
// sd_u on u.
lw::ClosedLoopRecording FirstOrderLoop(double sd_y, double sd_u, unsigned seed) {
  const double kp = 1.8, tau = 12.0, k = 2.5, y0 = 40.0, u0 = 10.0, dr = 5.0, ts = 5.0;
  const double kc = k * kp / (1.0 + k * kp), tc = tau / (1.0 + k * kp);
  std::mt19937_64 gen(seed);
  std::normal_distribution<double> normal(0.0, 1.0);
  lw::ClosedLoopRecording rec;
  for (int i = 0; i <= 200; ++i) {
    const double t = 0.2 * i;
    const double step = t >= ts ? dr : 0.0;
    const double dy = t > ts ? dr * kc * (1.0 - std::exp(-(t - ts) / tc)) : 0.0;
    rec.t.push_back(t);
    rec.r.push_back(y0 + step);
    rec.y.push_back(y0 + dy + sd_y * normal(gen));
    rec.u.push_back(u0 + k * (step - dy) + sd_u * normal(gen));
  }
  return rec;
}

lw::ClosedLoopFitOptions Options(double gain) {
  lw::ClosedLoopFitOptions o;
  o.structure = "fopdt";
  o.gain = gain;
  return o;
}

// The largest |yhat - closed form| of the fitted loop (noise-free truth of FirstOrderLoop).
double WorstOutputError(const lw::ClosedLoopFit& fit, const lw::ClosedLoopRecording& rec) {
  const lw::ClosedLoopResponse pred =
      lw::ClosedLoopPrediction(fit.model.tf, lw::Controller(), 2.5, rec.t, rec.r,
                               fit.model.output_offset.value, fit.model.input_baseline);
  const double kc = 2.5 * 1.8 / (1.0 + 2.5 * 1.8), tc = 12.0 / (1.0 + 2.5 * 1.8);
  double worst = 0.0;
  for (size_t k = 0; k < rec.t.size(); ++k) {
    const double t = rec.t[k];
    const double truth = t > 5.0 ? 40.0 + 5.0 * kc * (1.0 - std::exp(-(t - 5.0) / tc)) : 40.0;
    worst = std::max(worst, std::abs(pred.y[k] - truth));
  }
  return worst;
}

}  // namespace

TEST_CASE("closed-loop fit recovers a first-order plant under P control (closed form)") {
  lw::ClosedLoopRecording rec = FirstOrderLoop(0.05, 0.02, 7);
  lw::ClosedLoopFit fit = lw::FitClosedLoop(rec, Options(2.5));
  REQUIRE(fit.model.values.size() == 3);
  CHECK(fit.model.values[0] == doctest::Approx(1.8).epsilon(0.05));
  CHECK(fit.model.values[1] == doctest::Approx(12.0).epsilon(0.05));
  CHECK(fit.model.values[2] < 0.2);  // no dead time: below one sample
  CHECK(fit.model.output_offset.value == doctest::Approx(40.0).epsilon(0.001));
  CHECK(fit.model.input_baseline == doctest::Approx(10.0).epsilon(0.01));
  // The intervals cover the truth and the noise estimates are close to the noise added.
  REQUIRE(fit.model.covariance_ok);
  CHECK(fit.model.parameters[0].ci_low < 1.8);
  CHECK(fit.model.parameters[0].ci_high > 1.8);
  CHECK(fit.model.parameters[1].ci_low < 12.0);
  CHECK(fit.model.parameters[1].ci_high > 12.0);
  CHECK(fit.output_sd == doctest::Approx(0.05).epsilon(0.2));
  CHECK(fit.model.fit_percent > 80.0);
  CHECK(fit.input_fit_percent > 80.0);
  // The output is reproduced by the fitted loop.
  CHECK(WorstOutputError(fit, rec) < 0.05);
}

TEST_CASE("closed-loop fit: a wrong loop gain gives a wrong plant gain (the loop matters)") {
  // The same data told the loop ran at K = 5 instead of 2.5: the fitted plant must differ, or
  // the known controller would not be part of the model at all.
  lw::ClosedLoopRecording rec = FirstOrderLoop(0.05, 0.02, 11);
  lw::ClosedLoopFit right = lw::FitClosedLoop(rec, Options(2.5));
  lw::ClosedLoopFit wrong = lw::FitClosedLoop(rec, Options(5.0));
  CHECK(std::abs(wrong.model.values[0] - 1.8) > 0.1);
  CHECK(wrong.model.aicc > right.model.aicc);
}

TEST_CASE("closed-loop fit: noise-free actuator keeps a finite weight (floor K sd_y)") {
  lw::ClosedLoopRecording rec = FirstOrderLoop(0.05, 0.0, 3);
  lw::ClosedLoopFit fit = lw::FitClosedLoop(rec, Options(2.5));
  CHECK(fit.input_sd_floored);
  CHECK(fit.input_sd == doctest::Approx(2.5 * fit.output_sd).epsilon(1e-9));
  CHECK(fit.model.values[0] == doctest::Approx(1.8).epsilon(0.05));
}

TEST_CASE("closed-loop fit: auto fits every structure in the loop and keeps the smallest AICc") {
  lw::ClosedLoopRecording rec = FirstOrderLoop(0.05, 0.02, 13);
  lw::ClosedLoopFitOptions o = Options(2.5);
  o.structure = "auto";
  lw::ClosedLoopFit fit = lw::FitClosedLoop(rec, o);
  CHECK(fit.automatic);
  REQUIRE(fit.candidates.size() == lw::AllStructures().size());
  double smallest = std::numeric_limits<double>::infinity();
  int usable = 0;
  for (const lw::Candidate& c : fit.candidates) {
    if (!c.usable) continue;
    ++usable;
    smallest = std::min(smallest, c.aicc);
    // Each candidate's numbers are those of its own in-loop fit, as if named.
    lw::ClosedLoopFitOptions one = Options(2.5);
    one.structure = std::string(lw::StructureName(c.structure));
    const lw::ClosedLoopFit named = lw::FitClosedLoop(rec, one);
    CAPTURE(one.structure);
    CHECK(c.aicc == doctest::Approx(named.model.aicc).epsilon(1e-9));
    CHECK(c.fit_percent == doctest::Approx(named.model.fit_percent).epsilon(1e-9));
    CHECK(c.delta_aicc == doctest::Approx(c.aicc - fit.model.aicc).epsilon(1e-9));
  }
  CHECK(usable >= 3);
  CHECK(fit.model.aicc == smallest);
  // Whatever was chosen reproduces the closed-form loop.
  CHECK(WorstOutputError(fit, rec) < 0.05);
}

TEST_CASE("closed-loop fit: bad options and data are refused with the rule") {
  lw::ClosedLoopRecording rec = FirstOrderLoop(0.05, 0.02, 5);
  lw::ClosedLoopFitOptions o = Options(2.5);
  o.gain = 0.0;
  CHECK_THROWS_AS(lw::FitClosedLoop(rec, o), lw::UsageError);
  o = Options(2.5);
  o.structure = "fifth-order";
  CHECK_THROWS_AS(lw::FitClosedLoop(rec, o), lw::UsageError);
  o = Options(2.5);
  o.reweight_rounds = 0;
  CHECK_THROWS_AS(o.Validate(), lw::UsageError);
  lw::ClosedLoopRecording flat = rec;
  for (double& r : flat.r) r = 40.0;
  CHECK_THROWS_WITH_AS(lw::FitClosedLoop(flat, Options(2.5)),
                       doctest::Contains("reference never changes"), lw::DataError);
  lw::ClosedLoopRecording short_rec = rec;
  short_rec.u.pop_back();
  CHECK_THROWS_AS(lw::FitClosedLoop(short_rec, Options(2.5)), lw::UsageError);
}
