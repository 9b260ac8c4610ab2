// Open- and closed-loop simulation against closed forms and independent routes:
//   - first-order lag and integrator step responses with a fractional dead time (solutions of
//     the linear ODE written by hand);
//   - a non-uniform grid reproduces the uniform result at the shared times;
//   - the closed loop with T = 0 equals the rational closed loop N/(D+N) simulated open loop;
//   - with dead time: the method of steps for a first-order P loop over two delay intervals
//     and its series over fifty (Bellman & Cooke, Differential-Difference Equations, from
//     memory), a Padé [8/8] closed loop, and the type-0 steady state K G(0) / (1 + K G(0)).
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <future>
#include <random>
#include <string>
#include <utility>
#include <vector>

#include <doctest/doctest.h>

#include "lti/controller.h"
#include "lti/error.h"
#include "lti/input_signal.h"
#include "lti/pade.h"
#include "lti/simulate.h"
#include "lti/transfer_function.h"

namespace {

std::vector<double> Grid(double h, int n) {
  std::vector<double> t(n);
  for (int k = 0; k < n; ++k) t[k] = k * h;
  return t;
}

// A step from 0 to `level` at t_step (held input sampled on t).
std::vector<double> StepOn(const std::vector<double>& t, double t_step, double level) {
  std::vector<double> u(t.size());
  for (size_t k = 0; k < t.size(); ++k) u[k] = t[k] >= t_step ? level : 0.0;
  return u;
}

// A jittered grid on [0, end]: intervals uniform in [0.3 h, 1.7 h].
std::vector<double> Jittered(double h, double end, unsigned seed) {
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> d(0.3 * h, 1.7 * h);
  std::vector<double> t{0.0};
  while (t.back() < end) t.push_back(t.back() + d(rng));
  return t;
}

// t (uniform, period h) with an extra time inside every `every`-th interval, holding the same
// value, so the held signal is unchanged; shared[k] is the index of t[k] in the new grid.
struct Refined {
  std::vector<double> t, v;
  std::vector<size_t> shared;
};
Refined InsertHeldPoints(const std::vector<double>& t, const std::vector<double>& v, double h,
                         size_t every, unsigned seed) {
  std::mt19937 rng(seed);
  std::uniform_real_distribution<double> frac(0.05, 0.95);
  Refined out;
  for (size_t k = 0; k < t.size(); ++k) {
    out.shared.push_back(out.t.size());
    out.t.push_back(t[k]);
    out.v.push_back(v[k]);
    if (k % every == 1 && k + 1 < t.size()) {
      out.t.push_back(t[k] + frac(rng) * h);
      out.v.push_back(v[k]);
    }
  }
  return out;
}

double MaxAbsDiff(const std::vector<double>& a, const std::vector<double>& b) {
  double m = 0.0;
  for (size_t i = 0; i < a.size(); ++i) m = std::max(m, std::abs(a[i] - b[i]));
  return m;
}

}  // namespace

TEST_CASE("First-order lag with fractional dead time: K (1 - exp(-(t - t1 - T) / tau))") {
  const double k = 2.5, tau = 0.7, delay = 0.234, h = 0.05, t1 = 0.5;
  const lw::TransferFunction g({k}, {tau, 1.0}, delay);
  for (int pass = 0; pass < 2; ++pass) {
    const std::vector<double> t = pass == 0 ? Grid(h, 120) : Jittered(h, 6.0, 7);
    std::vector<double> u = StepOn(t, t1, 1.0);
    const std::vector<double> y = lw::Simulate(g, t, u);
    // The held input switches at the first sample time >= t1.
    const double ts = *std::find_if(t.begin(), t.end(), [&](double x) { return x >= t1; });
    for (size_t i = 0; i < t.size(); ++i) {
      const double s = t[i] - ts - delay;
      const double want = s > 0 ? k * (1 - std::exp(-s / tau)) : 0.0;
      CHECK(y[i] == doctest::Approx(want).epsilon(1e-12).scale(k));
    }
  }
}

TEST_CASE("Starting at rest: a constant input keeps the steady state") {
  const lw::TransferFunction g({0.5, 2.0}, {1.0, 1.2, 4.0}, 0.13);
  const std::vector<double> t = Grid(0.01, 1500);
  const std::vector<double> u(t.size(), 3.0);
  for (double y : lw::Simulate(g, t, u)) CHECK(y == doctest::Approx(3.0 * 0.5).epsilon(1e-12));
  // From the zero state the same input gives the zero output until the dead time has passed.
  lw::SimulateOptions zero;
  zero.initial = lw::SimulateOptions::Initial::kZero;
  const std::vector<double> y0 = lw::Simulate(g, t, u, zero);
  for (size_t i = 0; i < t.size(); ++i) {
    if (t[i] <= 0.13) CHECK(y0[i] == 0.0);
  }
  CHECK(y0.back() == doctest::Approx(1.5).epsilon(1e-3));
}

TEST_CASE("Integrating plants: ramp of K/s and K/(s (tau s + 1)) after the dead time") {
  const double k = 0.8, tau = 0.45, delay = 0.317, t1 = 0.2;
  const lw::TransferFunction gi({k}, {1.0, 0.0}, delay);
  const lw::TransferFunction gl({k}, {tau, 1.0, 0.0}, delay);
  for (int pass = 0; pass < 2; ++pass) {
    const std::vector<double> t = pass == 0 ? Grid(0.02, 250) : Jittered(0.02, 5.0, 11);
    const std::vector<double> u = StepOn(t, t1, 1.0);
    const double ts = *std::find_if(t.begin(), t.end(), [&](double x) { return x >= t1; });
    const std::vector<double> yi = lw::Simulate(gi, t, u);
    const std::vector<double> yl = lw::Simulate(gl, t, u);
    for (size_t i = 0; i < t.size(); ++i) {
      const double s = std::max(0.0, t[i] - ts - delay);
      CHECK(yi[i] == doctest::Approx(k * s).epsilon(1e-11).scale(1.0));
      CHECK(yl[i] ==
            doctest::Approx(k * (s - tau * (1 - std::exp(-s / tau)))).epsilon(1e-11).scale(1.0));
    }
  }
}

TEST_CASE("A non-uniform grid gives the uniform result at the shared times") {
  // Third order, complex pair and a zero; dead time 4.37 samples; PRBS input.
  const lw::TransferFunction g({1.5, 3.0}, {1.0, 2.2, 5.3, 4.1}, 0.0437);
  const double h = 0.01;
  const std::vector<double> t = Grid(h, 800);
  const std::vector<double> u = lw::InputSignal::Parse("prbs:-1:2:0.07").Sample(t, 5);
  const Refined fine = InsertHeldPoints(t, u, h, 3, 3);
  const std::vector<double> y = lw::Simulate(g, t, u);
  const std::vector<double> yn = lw::Simulate(g, fine.t, fine.v);
  double worst = 0.0;
  for (size_t k = 0; k < t.size(); ++k)
    worst = std::max(worst, std::abs(y[k] - yn[fine.shared[k]]));
  CHECK(worst <= 1e-11);
}

TEST_CASE("Simulate refuses bad grids") {
  const lw::TransferFunction g({1.0}, {1.0, 1.0});
  const std::vector<double> t{0.0, 0.1, 0.1}, u{0.0, 1.0, 1.0}, u2{0.0};
  CHECK_THROWS_AS(lw::Simulate(g, t, u), lw::UsageError);
  CHECK_THROWS_AS(lw::Simulate(g, std::vector<double>{0.0, 0.1}, u2), lw::UsageError);
  CHECK_THROWS_AS(
      lw::Simulate(lw::TransferFunction({1.0, 0.0, 0.0}, {1.0, 1.0}), std::vector<double>{0.0}, u2),
      lw::UsageError);
}

TEST_CASE("Closed loop without dead time equals the rational closed loop N/(D+N)") {
  struct Case {
    lw::TransferFunction plant;
    const char* controller;
    double gain;
  };
  const std::vector<Case> cases = {
      {lw::TransferFunction({2.0}, {1.0, 3.0, 2.0}), "pi:0.8", 1.7},
      {lw::TransferFunction({1.0, 2.0}, {1.0, 1.0, 0.0}), "lead:1.5:9", 3.0},
      {lw::TransferFunction({0.6}, {0.5, 1.0}), "pid:0.4:2:20", 2.2},
      {lw::TransferFunction({0.4, 1.0}, {1.0, 2.0}), "p", 0.9},  // biproper plant
  };
  for (const Case& c : cases) {
    const lw::Controller ctrl = lw::Controller::Parse(c.controller);
    const lw::TransferFunction open = ctrl.WithGain(c.gain) * c.plant;
    const lw::TransferFunction closed = lw::UnityFeedback(open).Exact();
    // u / r = C / (1 + C G) = N_c D_p / (D_c D_p + N_c N_p).
    const lw::TransferFunction cg = ctrl.WithGain(c.gain);
    const lw::TransferFunction to_u(cg.num() * c.plant.den(),
                                    cg.den() * c.plant.den() + cg.num() * c.plant.num());
    for (int pass = 0; pass < 2; ++pass) {
      const std::vector<double> t = pass == 0 ? Grid(0.02, 400) : Jittered(0.02, 8.0, 5);
      const std::vector<double> r = lw::InputSignal::Parse("step:0.5:1.5:1,step:1.5:1:4").Sample(t);
      const lw::ClosedLoopResponse cl = lw::SimulateClosedLoop(c.plant, ctrl, c.gain, t, r);
      CHECK(MaxAbsDiff(cl.y, lw::Simulate(closed, t, r)) <= 1e-9);
      CHECK(MaxAbsDiff(cl.u, lw::Simulate(to_u, t, r)) <= 1e-9 * std::max(1.0, c.gain * 20));
    }
  }
}

// Plant K/(tau s + 1) e^{-T s}, u = Kp (r - y), r = 1 from t = 0, zero state and u = 0 before.
// With g = K Kp, y(t) solves tau y' = -y + g (1 - y(t - T)) ... by steps:
//   t <= T:        y = 0
//   T <= t <= 2T:  y = g (1 - e^{-(t-T)/tau})                        (u = Kp on [0, T])
//   2T <= t <= 3T: with s = t - 2T and y2 = y(2T),
//                  y = g (1 - g) + (y2 - g (1 - g)) e^{-s/tau} + (g^2 / tau) s e^{-s/tau}.
double FirstOrderPLoopByMethodOfSteps(double k, double tau, double delay, double kp, double t) {
  const double g = k * kp;
  const double y2 = g * (1 - std::exp(-delay / tau));
  if (t > 2 * delay) {
    const double s = t - 2 * delay;
    return g * (1 - g) + (y2 - g * (1 - g)) * std::exp(-s / tau) +
           g * g / tau * s * std::exp(-s / tau);
  }
  if (t > delay) return g * (1 - std::exp(-(t - delay) / tau));
  return 0.0;
}

// The largest |y - closed form| over t (t <= 3T), checking u = Kp (1 - y) on the way.
double MethodOfStepsError(double k, double tau, double delay, double kp,
                          const std::vector<double>& t) {
  const lw::TransferFunction plant({k}, {tau, 1.0}, delay);
  const std::vector<double> r(t.size(), 1.0);
  lw::SimulateOptions zero;
  zero.initial = lw::SimulateOptions::Initial::kZero;
  const lw::ClosedLoopResponse cl = lw::SimulateClosedLoop(plant, lw::Controller(), kp, t, r, zero);
  double worst = 0.0;
  for (size_t i = 0; i < t.size(); ++i) {
    worst = std::max(worst,
                     std::abs(cl.y[i] - FirstOrderPLoopByMethodOfSteps(k, tau, delay, kp, t[i])));
    CHECK(cl.u[i] == doctest::Approx(kp * (r[i] - cl.y[i])).epsilon(1e-12));
  }
  return worst;
}

TEST_CASE("Closed loop with dead time: method of steps for a first-order P loop") {
  const double k = 1.6, tau = 0.8, delay = 0.45, kp = 0.9;
  const double worst = MethodOfStepsError(k, tau, delay, kp, Grid(0.01, 136));  // 0 .. 3T
  MESSAGE("method-of-steps max error " << worst);
  CHECK(worst <= 1e-7 * k * kp);
}

TEST_CASE("Closed loop with a dead time a hair off a whole number of samples") {
  // T = 44 s - 5.2e-8 s on a 1 s grid: the delayed image of a piece ends a few rounding units
  // from a sample time, which once made a segment of length 0 and the stepping loop endless.
  // The same method-of-steps closed form; a watchdog turns a hang into a failure.
  const double k = 1.6, tau = 80.0, kp = 0.9;
  const std::vector<double> t = Grid(1.0, 133);  // 0 .. 3T
  for (const double delay : {44.0 - 5.2e-8, 44.0, 44.0 + 5.2e-8, 44.0 - 1e-11}) {
    CAPTURE(delay);
    auto run =
        std::async(std::launch::async, [&] { return MethodOfStepsError(k, tau, delay, kp, t); });
    if (run.wait_for(std::chrono::seconds(60)) != std::future_status::ready) {
      std::fprintf(stderr, "closed loop with T = %.17g s did not finish within 60 s\n", delay);
      std::_Exit(1);  // the stuck simulation cannot be stopped
    }
    const double worst = run.get();
    MESSAGE("method-of-steps max error " << worst);
    CHECK(worst <= 1e-7 * k * kp);
  }
}

TEST_CASE("Closed loop with dead time: the delay series of a first-order P loop, many delays") {
  // Plant K/(tau s + 1) e^{-T s} under u = Kp (r - y), r = 1 from t = 0, zero state: with
  // g = K Kp, Y = sum_{n >= 1} (-1)^{n+1} (g / (tau s + 1))^n e^{-n T s} / s, so
  //   y(t) = sum_{n <= t/T} (-1)^{n+1} g^n P(n, (t - n T) / tau),
  //   P(n, x) = 1 - e^{-x} sum_{j < n} x^j / j!   (the Erlang distribution function),
  // the method of steps written out over every delay interval (Bellman & Cooke,
  // Differential-Difference Equations, from memory). Over 50 delays most of the record runs on
  // the steady step map (steady_delayed_loop.h); the grids give a split step (T / h
  // fractional), a whole number of steps per delay, and three internal steps per sample.
  const double k = 0.8, tau = 1.3, kp = 1.1, g = k * kp;
  struct Case {
    double delay, period;
    int samples;
  };
  for (const Case c : {Case{0.55, 0.01, 3001}, Case{0.5, 0.01, 3001}, Case{0.55, 0.2, 151}}) {
    const lw::TransferFunction plant({k}, {tau, 1.0}, c.delay);
    const std::vector<double> t = Grid(c.period, c.samples);
    const std::vector<double> r(t.size(), 1.0);
    lw::SimulateOptions zero;
    zero.initial = lw::SimulateOptions::Initial::kZero;
    const lw::ClosedLoopResponse cl =
        lw::SimulateClosedLoop(plant, lw::Controller(), kp, t, r, zero);
    double worst = 0.0;
    for (size_t i = 0; i < t.size(); ++i) {
      double want = 0.0, gn = 1.0, sign = 1.0;
      for (int n = 1; n * c.delay < t[i]; ++n) {
        gn *= g;
        const double x = (t[i] - n * c.delay) / tau;
        double term = std::exp(-x), head = 0.0;
        for (int j = 0; j < n; ++j) {
          head += term;
          term *= x / (j + 1);
        }
        want += sign * gn * (1.0 - head);
        sign = -sign;
      }
      worst = std::max(worst, std::abs(cl.y[i] - want));
      CHECK(cl.u[i] == doctest::Approx(kp * (r[i] - cl.y[i])).epsilon(1e-12));
    }
    CAPTURE(c.delay);
    CAPTURE(c.period);
    MESSAGE("delay-series max error " << worst);
    CHECK(worst <= 1e-7 * g);
    CHECK(cl.y.back() == doctest::Approx(g / (1.0 + g)).epsilon(1e-6));
  }
}

TEST_CASE("Closed loop with dead time vs Padé closed loops and the type-0 steady state") {
  // A Padé approximant rings near the delayed step (its error there shrinks only slowly with
  // the order), so the check is loose and asks for convergence: order 8 closer than order 4.
  const lw::TransferFunction plant({1.5}, {0.5, 1.5, 1.0}, 0.3);  // 1.5/((s+1)(0.5s+1)) e^-0.3s
  const std::vector<double> t = Grid(0.01, 3001);
  const std::vector<double> r = lw::InputSignal::Parse("step:0:1:0.5").Sample(t);
  const std::vector<std::pair<const char*, double>> loops = {
      {"p", 0.6}, {"pi:0.7", 0.6}, {"lead:2:8", 0.6}, {"pid:1:1.5:10", 1.2}};
  for (const auto& [spec, kgain] : loops) {
    const lw::Controller ctrl = lw::Controller::Parse(spec);
    const lw::ClosedLoopResponse cl = lw::SimulateClosedLoop(plant, ctrl, kgain, t, r);
    const lw::UnityFeedback loop(ctrl.WithGain(kgain) * plant);
    const double d8 = MaxAbsDiff(cl.y, lw::Simulate(loop.WithPade(8), t, r));
    const double d4 = MaxAbsDiff(cl.y, lw::Simulate(loop.WithPade(4), t, r));
    const std::string name = spec;
    CAPTURE(name);
    MESSAGE("Padé order 4 / 8 max difference " << d4 << " / " << d8);
    CHECK(d8 <= 5e-4);
    CHECK(d8 < 0.5 * d4);
    if (ctrl.kind() == lw::Controller::Kind::kProportional) {
      const double g0 = kgain * 1.5;
      CHECK(cl.y.back() == doctest::Approx(g0 / (1 + g0)).epsilon(1e-6));
    } else if (ctrl.kind() != lw::Controller::Kind::kLead) {
      CHECK(cl.y.back() == doctest::Approx(1.0).epsilon(1e-3));
    }
  }
}

TEST_CASE("Closed loop with dead time: integrating plant under PI and PID settles on r") {
  const lw::TransferFunction plant({0.9}, {1.0, 1.0, 0.0}, 0.2);  // 0.9 / (s (s + 1)) e^-0.2s
  const std::vector<double> t = Grid(0.02, 5001);
  const std::vector<double> r = lw::InputSignal::Parse("step:0:2:1").Sample(t);
  const std::vector<std::pair<const char*, double>> loops = {{"pi:0.1", 0.5},
                                                             {"pid:0.3:1.2:12", 3.0}};
  for (const auto& [spec, kgain] : loops) {
    const lw::Controller ctrl = lw::Controller::Parse(spec);
    const lw::ClosedLoopResponse cl = lw::SimulateClosedLoop(plant, ctrl, kgain, t, r);
    const std::string name = spec;
    CAPTURE(name);
    CHECK(cl.y.front() == doctest::Approx(0.0).scale(1.0));
    CHECK(cl.y.back() == doctest::Approx(2.0).epsilon(1e-3));
    CHECK(std::abs(cl.u.back()) <= 1e-3);
    const lw::TransferFunction pade = lw::UnityFeedback(ctrl.WithGain(kgain) * plant).WithPade(8);
    CHECK(MaxAbsDiff(cl.y, lw::Simulate(pade, t, r)) <= 5e-4 * 2.0);
  }
}

TEST_CASE("Closed loop: a non-uniform grid agrees with the uniform one at shared times") {
  const lw::TransferFunction plant({2.0, 1.0}, {1.0, 2.0, 3.0, 1.5}, 0.137);
  const lw::Controller ctrl = lw::Controller::Parse("pi:0.6");
  const std::vector<double> t = Grid(0.01, 1501);
  const std::vector<double> r = lw::InputSignal::Parse("step:0:1:0.3,step:1:-0.5:7").Sample(t);
  std::vector<double> tc, rc;  // every other sample: the internal steps differ
  for (size_t k = 0; k < t.size(); k += 2) {
    tc.push_back(t[k]);
    rc.push_back(r[k]);
  }
  const lw::ClosedLoopResponse fine = lw::SimulateClosedLoop(plant, ctrl, 0.8, t, r);
  const lw::ClosedLoopResponse coarse = lw::SimulateClosedLoop(plant, ctrl, 0.8, tc, rc);
  double worst = 0.0;
  for (size_t k = 0; k < tc.size(); ++k)
    worst = std::max(worst, std::abs(coarse.y[k] - fine.y[2 * k]));
  MESSAGE("coarse vs fine closed-loop grid max difference " << worst);
  CHECK(worst <= 1e-6);
}

TEST_CASE("Closed loop refuses an algebraic loop with direct gains multiplying to -1") {
  const lw::TransferFunction plant({-1.0, 0.0}, {1.0, 1.0});  // direct gain -1
  const std::vector<double> t{0.0, 0.1}, r{0.0, 1.0};
  CHECK_THROWS_AS(lw::SimulateClosedLoop(plant, lw::Controller(), 1.0, t, r), lw::UsageError);
  const std::vector<double> tl = Grid(0.01, 10000);
  const std::vector<double> rl = lw::InputSignal::Parse("step:0:1:0.1").Sample(tl);
  // Below 1e-9 of the sample interval the dead time is negligible and treated as zero.
  const lw::ClosedLoopResponse tiny = lw::SimulateClosedLoop(
      lw::TransferFunction({1.0}, {1.0, 1.0}, 1e-12), lw::Controller(), 1.0, tl, rl);
  const lw::ClosedLoopResponse none = lw::SimulateClosedLoop(
      lw::TransferFunction({1.0}, {1.0, 1.0}), lw::Controller(), 1.0, tl, rl);
  CHECK(tiny.y == none.y);
}

TEST_CASE("Closed loop with a dead time shorter than the sample period (implicit steps)") {
  // Steps longer than T need their own u: solved by fixed-point iteration. Checked against the
  // same loop on a grid 8 times finer, whose steps (T / 1.28) need only stored history.
  const lw::TransferFunction plant({1.3}, {0.2, 1.1, 1.0}, 0.004);
  const double h = 0.025;
  for (const char* spec : {"p", "pi:1.5", "pid:0.7:3:8"}) {
    const lw::Controller ctrl = lw::Controller::Parse(spec);
    const std::vector<double> coarse = Grid(h, 241), fine = Grid(h / 8, 1921);
    const lw::InputSignal steps = lw::InputSignal::Parse("step:0:1:0.5,step:1:0.2:3");
    const lw::ClosedLoopResponse a =
        lw::SimulateClosedLoop(plant, ctrl, 0.9, coarse, steps.Sample(coarse));
    const lw::ClosedLoopResponse b =
        lw::SimulateClosedLoop(plant, ctrl, 0.9, fine, steps.Sample(fine));
    double worst = 0.0;
    for (size_t k = 0; k < coarse.size(); ++k)
      worst = std::max(worst, std::abs(a.y[k] - b.y[8 * k]));
    const std::string name = spec;
    CAPTURE(name);
    MESSAGE("implicit vs explicit stepping max difference " << worst);
    CHECK(worst <= 1e-7);
  }
  // A dead time of 1e-7 s on a 0.01 s grid: within T |y'| of the delay-free loop.
  const std::vector<double> t = Grid(0.01, 1000);
  const std::vector<double> r = lw::InputSignal::Parse("step:0:1:0.1").Sample(t);
  const lw::ClosedLoopResponse tiny =
      lw::SimulateClosedLoop(plant.WithDelay(1e-7), lw::Controller(), 2.0, t, r);
  const lw::ClosedLoopResponse none =
      lw::SimulateClosedLoop(plant.WithDelay(0.0), lw::Controller(), 2.0, t, r);
  CHECK(MaxAbsDiff(tiny.y, none.y) <= 1e-6);
}

TEST_CASE("Closed loop with zero gain leaves the plant alone") {
  const lw::TransferFunction plant({1.0}, {1.0, 2.0, 1.0}, 0.05);
  const std::vector<double> t = Grid(0.01, 200);
  const std::vector<double> r(t.size(), 1.0);
  lw::SimulateOptions zero;
  zero.initial = lw::SimulateOptions::Initial::kZero;
  for (const char* spec : {"p", "pi:0.5", "pid:1:2:10"}) {
    const lw::ClosedLoopResponse cl =
        lw::SimulateClosedLoop(plant, lw::Controller::Parse(spec), 0.0, t, r, zero);
    for (size_t k = 0; k < t.size(); ++k) {
      CHECK(cl.y[k] == 0.0);
      CHECK(cl.u[k] == 0.0);
    }
  }
}

TEST_CASE("A static gain with dead time is the shifted, scaled input") {
  const lw::TransferFunction g({3.0}, {2.0}, 0.25);  // 1.5 exp(-0.25 s)
  for (int pass = 0; pass < 2; ++pass) {
    const std::vector<double> t = pass == 0 ? Grid(0.1, 40) : Jittered(0.1, 4.0, 2);
    const std::vector<double> u = lw::InputSignal::Parse("step:1:2:0.5,step:2:-1:2").Sample(t);
    const std::vector<double> y = lw::Simulate(g, t, u);
    // y(t) = 1.5 u(t - 0.25) with u held: the last input sample at or before t - 0.25.
    for (size_t i = 0; i < t.size(); ++i) {
      double held = u[0];
      for (size_t j = 0; j < t.size() && t[j] <= t[i] - 0.25 + 1e-12; ++j) held = u[j];
      CHECK(y[i] == doctest::Approx(1.5 * held));
    }
  }
}

TEST_CASE("Closed loop starting at rest for r[0] stays there until r changes") {
  // Type-0 P loop: y = K G(0) / (1 + K G(0)) r; integrating plant under PI: y = r, u = 0.
  const std::vector<double> t = Grid(0.01, 400);
  std::vector<double> r(t.size(), 1.5);
  const lw::TransferFunction lag({2.0}, {0.3, 1.0}, 0.07);
  const lw::ClosedLoopResponse p = lw::SimulateClosedLoop(lag, lw::Controller(), 0.8, t, r);
  const lw::TransferFunction tank({0.5}, {1.0, 0.0}, 0.07);
  const lw::ClosedLoopResponse pi =
      lw::SimulateClosedLoop(tank, lw::Controller::Parse("pi:0.4"), 1.2, t, r);
  for (size_t k = 0; k < t.size(); ++k) {
    CHECK(p.y[k] == doctest::Approx(1.6 / 2.6 * 1.5).epsilon(1e-12));
    CHECK(p.u[k] == doctest::Approx(0.8 * (1.5 - p.y[k])).epsilon(1e-12));
    CHECK(pi.y[k] == doctest::Approx(1.5).epsilon(1e-12));
    CHECK(pi.u[k] == doctest::Approx(0.0).scale(1.0).epsilon(1e-12));
  }
}

TEST_CASE("Closed loop with dead time and a biproper plant vs a Padé [8/8] closed loop") {
  // (0.5 s + 1) / (2 s + 1) e^{-0.2 s}: the direct gain 0.25 echoes every jump of u each T.
  const lw::TransferFunction plant({0.5, 1.0}, {2.0, 1.0}, 0.2);
  const lw::Controller ctrl = lw::Controller::Parse("pi:0.5");
  const std::vector<double> t = Grid(0.01, 2001);
  const std::vector<double> r = lw::InputSignal::Parse("step:0:1:0.5").Sample(t);
  const lw::ClosedLoopResponse cl = lw::SimulateClosedLoop(plant, ctrl, 1.0, t, r);
  // The step of r at 0.5 s makes u jump by K = 1; the plant passes 0.25 of it T later, so y
  // jumps by 0.25 between 0.69 s and 0.70 s (plus the small smooth change over one sample).
  CHECK(cl.y[70] - cl.y[69] == doctest::Approx(0.25).epsilon(0.05));
  CHECK(std::abs(cl.y[69] - cl.y[68]) <= 0.01);
  // A Padé approximant passes such a jump at once instead of T later, so the comparison starts
  // at 2 s, seven round trips after the step (the echoes shrink by 0.25 each: 0.25^7 ~ 6e-5).
  const lw::UnityFeedback loop(ctrl.WithGain(1.0) * plant);
  const std::vector<double> yp = lw::Simulate(loop.WithPade(8), t, r);
  const std::vector<double> late_cl(cl.y.begin() + 200, cl.y.end());
  const std::vector<double> late_p(yp.begin() + 200, yp.end());
  MESSAGE("biproper plant: Padé 8 max difference after 2 s " << MaxAbsDiff(late_cl, late_p));
  CHECK(MaxAbsDiff(late_cl, late_p) <= 1e-4);
  CHECK(cl.y.back() == doctest::Approx(1.0).epsilon(1e-4));
}

TEST_CASE("Closed loop with dead time: inserted grid points holding r change nothing") {
  const lw::TransferFunction plant({1.1}, {0.6, 1.4, 1.0}, 0.083);
  const lw::Controller ctrl = lw::Controller::Parse("pid:0.8:2.5:20");
  const std::vector<double> t = Grid(0.02, 600);
  const std::vector<double> r = lw::InputSignal::Parse("prbs:0:1:0.3").Sample(t, 4);
  const Refined fine = InsertHeldPoints(t, r, 0.02, 4, 8);
  const lw::ClosedLoopResponse a = lw::SimulateClosedLoop(plant, ctrl, 0.7, t, r);
  const lw::ClosedLoopResponse b = lw::SimulateClosedLoop(plant, ctrl, 0.7, fine.t, fine.v);
  double worst = 0.0;
  for (size_t k = 0; k < t.size(); ++k)
    worst = std::max(worst, std::abs(a.y[k] - b.y[fine.shared[k]]));
  MESSAGE("uniform vs non-uniform closed loop max difference " << worst);
  CHECK(worst <= 1e-7);
}

TEST_CASE("Closed loop with dead time stabilising an unstable plant vs Padé [8/8]") {
  // 1 / (s - 0.5) e^{-0.2 s} under P with K = 1.5: the loop pole moves to the left half plane.
  const lw::TransferFunction plant({1.0}, {1.0, -0.5}, 0.2);
  const lw::Controller p;
  for (double h : {0.01, 0.5}) {  // steps shorter and longer than the dead time
    const std::vector<double> t = Grid(h, static_cast<int>(20.0 / h) + 1);
    const std::vector<double> r = lw::InputSignal::Parse("step:0:1:1").Sample(t);
    const lw::ClosedLoopResponse cl = lw::SimulateClosedLoop(plant, p, 1.5, t, r);
    const lw::UnityFeedback loop(p.WithGain(1.5) * plant);
    const double d8 = MaxAbsDiff(cl.y, lw::Simulate(loop.WithPade(8), t, r));
    const double d4 = MaxAbsDiff(cl.y, lw::Simulate(loop.WithPade(4), t, r));
    CAPTURE(h);
    MESSAGE("unstable plant, h = " << h << ": Padé 4 / 8 max difference " << d4 << " / " << d8);
    // Under P control u jumps with r and the Padé loop rings there (error ~ 1/order).
    CHECK(d8 <= 1e-2);
    CHECK(d8 < 0.6 * d4);
    CHECK(cl.y.back() == doctest::Approx(1.5 / (1.5 - 0.5)).epsilon(1e-4));  // K G0 / (1 + K G0)
  }
}
