// The exact response kernel against closed-form step responses and its Jacobian against central
// differences.
#include <doctest/doctest.h>

#include <cmath>
#include <vector>

#include "identify/output_error.h"
#include "identify/response_kernel.h"

namespace {

using lw::Structure;

std::vector<double> Grid(size_t n, double h, double t0 = 0.0) {
  std::vector<double> t(n);
  for (size_t i = 0; i < n; ++i) t[i] = t0 + h * static_cast<double>(i);
  return t;
}

// Unit step at t_step (held input sampled: v = 1 from the first sample at or after t_step).
std::vector<double> StepInput(const std::vector<double>& t, double t_step) {
  std::vector<double> v(t.size());
  for (size_t i = 0; i < t.size(); ++i) v[i] = t[i] >= t_step ? 1.0 : 0.0;
  return v;
}

}  // namespace

// Step responses by partial fractions (any control text, e.g. Ogata, Modern Control
// Engineering, ch. 5; from memory): with the step applied at ts and delay T, s = t - ts - T,
//   fopdt        K (1 - e^{-s/tau})
//   sopdt        K (1 - (tau1 e^{-s/tau1} - tau2 e^{-s/tau2}) / (tau1 - tau2))
//   underdamped  K (1 - e^{-zeta wn s} (cos wd s + zeta/sqrt(1-zeta^2) sin wd s))
//   integrating  K (s - tau (1 - e^{-s/tau}))
//   sopdt-zero   K (1 - ((tau1 - tauz) e^{-s/tau1} - (tau2 - tauz) e^{-s/tau2}) / (tau1 - tau2))
double ClosedFormStep(Structure st, const std::vector<double>& p, double s) {
  if (s <= 0) return 0.0;
  switch (st) {
    case Structure::kFopdt:
      return p[0] * (1 - std::exp(-s / p[1]));
    case Structure::kSopdt:
      return p[0] * (1 - (p[1] * std::exp(-s / p[1]) - p[2] * std::exp(-s / p[2])) / (p[1] - p[2]));
    case Structure::kUnderdamped: {
      double z = p[1], wn = p[2], wd = wn * std::sqrt(1 - z * z);
      return p[0] * (1 - std::exp(-z * wn * s) *
                             (std::cos(wd * s) + z / std::sqrt(1 - z * z) * std::sin(wd * s)));
    }
    case Structure::kIntegrating:
      return p[0] * (s - p[1] * (1 - std::exp(-s / p[1])));
    case Structure::kSopdtZero:
      return p[0] *
             (1 - ((p[1] - p[3]) * std::exp(-s / p[1]) - (p[2] - p[3]) * std::exp(-s / p[2])) /
                      (p[1] - p[2]));
  }
  return 0.0;
}

TEST_CASE("kernel step responses equal the closed forms, uniform and non-uniform grids") {
  struct Case {
    Structure s;
    std::vector<double> p;
  };
  std::vector<Case> cases = {
      {Structure::kFopdt, {2.5, 3.7, 0.83}},
      {Structure::kSopdt, {-1.3, 4.1, 0.9, 1.234}},
      {Structure::kUnderdamped, {0.8, 0.23, 1.7, 0.61}},
      {Structure::kIntegrating, {0.35, 2.2, 0.457}},
      {Structure::kSopdtZero, {1.9, 5.0, 1.5, -2.2, 0.3}},
  };
  std::vector<double> tu = Grid(400, 0.05);
  // A non-uniform grid: jittered intervals.
  std::vector<double> tn(400);
  tn[0] = 0.0;
  for (size_t i = 1; i < tn.size(); ++i)
    tn[i] = tn[i - 1] + 0.03 + 0.04 * std::fabs(std::sin(1.7 * i));
  for (const auto& c : cases) {
    for (const auto* tp : {&tu, &tn}) {
      const std::vector<double>& t = *tp;
      const double ts = t[20];
      std::vector<double> v = StepInput(t, ts);
      std::vector<double> y = lw::StructureResponse(c.s, c.p, t, v, 0.0);
      double worst = 0.0;
      for (size_t i = 0; i < t.size(); ++i) {
        worst = std::max(worst, std::fabs(y[i] - ClosedFormStep(c.s, c.p, t[i] - ts - c.p.back())));
      }
      CAPTURE(lw::StructureName(c.s));
      CHECK(worst < 1e-12 * (1 + std::fabs(c.p[0]) * t.back()));
    }
  }
}

TEST_CASE("kernel handles repeated poles and zeta = 1 through its series") {
  std::vector<double> t = Grid(300, 0.1);
  std::vector<double> v = StepInput(t, 1.0);
  // sopdt with tau1 = tau2 = 2: K (1 - (1 + s/tau) e^{-s/tau}).
  std::vector<double> y =
      lw::StructureResponse(Structure::kSopdt, std::vector<double>{1.5, 2.0, 2.0, 0.25}, t, v);
  // underdamped with zeta = 1, wn = 0.5: K (1 - (1 + wn s) e^{-wn s}).
  std::vector<double> yz = lw::StructureResponse(Structure::kUnderdamped,
                                                 std::vector<double>{1.5, 1.0, 0.5, 0.25}, t, v);
  for (size_t i = 0; i < t.size(); ++i) {
    double s = t[i] - 1.0 - 0.25;
    double e1 = s > 0 ? 1.5 * (1 - (1 + s / 2.0) * std::exp(-s / 2.0)) : 0.0;
    double e2 = s > 0 ? 1.5 * (1 - (1 + 0.5 * s) * std::exp(-0.5 * s)) : 0.0;
    CHECK(y[i] == doctest::Approx(e1).epsilon(1e-12).scale(1.0));
    CHECK(yz[i] == doctest::Approx(e2).epsilon(1e-12).scale(1.0));
  }
}

// The analytic (Jet) Jacobian against central differences of the residuals, for every structure,
// a random-ish input (several steps) and fractional dead times, near tau1 = tau2 too.
TEST_CASE("output-error Jacobian matches central differences") {
  std::vector<double> t = Grid(250, 0.1);
  std::vector<double> v(t.size()), y(t.size(), 0.0);
  for (size_t i = 0; i < t.size(); ++i)
    v[i] = ((i / 23) % 3 == 1 ? 1.0 : 0.0) + ((i / 37) % 2) * 0.5;
  struct Case {
    Structure s;
    std::vector<double> x;  // structure params, offset, drift
  };
  std::vector<Case> cases = {
      {Structure::kFopdt, {2.0, 1.3, 0.37, 0.4, 0.0}},
      {Structure::kSopdt, {1.1, 2.1, 0.6, 0.53, -0.2, 0.0}},
      {Structure::kSopdt, {1.1, 1.5, 1.5000001, 0.53, -0.2, 0.0}},
      {Structure::kUnderdamped, {0.7, 0.35, 2.3, 0.21, 0.1, 0.0}},
      {Structure::kUnderdamped, {0.7, 0.9999, 2.3, 0.21, 0.1, 0.0}},
      {Structure::kIntegrating, {0.4, 0.8, 0.66, 0.3, 0.05}},
      {Structure::kSopdtZero, {1.2, 2.5, 0.7, -0.9, 0.44, 0.0, 0.0}},
  };
  for (const auto& c : cases) {
    for (bool uniform : {true, false}) {
      std::vector<double> tt = t;
      if (!uniform) {
        for (size_t i = 1; i < tt.size(); ++i)
          tt[i] = tt[i - 1] + 0.07 + 0.06 * std::fabs(std::cos(0.9 * i));
      }
      lw::OutputErrorProblem pb;
      pb.structure = c.s;
      pb.t = tt;
      pb.v = v;
      pb.y = y;
      const size_t n = tt.size();
      const int p = static_cast<int>(c.x.size());
      std::vector<double> r(n), jac(n * p), rp(n), rm(n);
      lw::EvaluateOutputError(pb, c.x, r.data(), jac.data());
      double worst = 0.0;
      for (int j = 0; j < p; ++j) {
        std::vector<double> xp = c.x, xm = c.x;
        double step = 1e-6 * std::max(1.0, std::fabs(c.x[j]));
        xp[j] += step;
        xm[j] -= step;
        lw::EvaluateOutputError(pb, xp, rp.data(), nullptr);
        lw::EvaluateOutputError(pb, xm, rm.data(), nullptr);
        for (size_t i = 0; i < n; ++i) {
          double fd = (rp[i] - rm[i]) / (2 * step);
          worst = std::max(worst, std::fabs(fd - jac[i * p + j]) / (1.0 + std::fabs(fd)));
        }
      }
      CAPTURE(lw::StructureName(c.s));
      CAPTURE(uniform);
      CHECK(worst < 1e-6);
    }
  }
}
