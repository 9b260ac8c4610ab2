// Realisation and exact ZOH sampling, checked against closed forms derived by hand from the
// definitions Phi = exp(A L) and Gamma_k = int_0^L exp(A (L - s)) B s^k ds.
#include <cmath>
#include <complex>

#include <doctest/doctest.h>

#include "lti/error.h"
#include "lti/state_space.h"
#include "lti/transfer_function.h"
#include "lti/zoh.h"

namespace {

std::complex<double> Evaluate(const lw::StateSpace& ss, std::complex<double> s) {
  const int n = ss.order();
  const Eigen::MatrixXcd m =
      s * Eigen::MatrixXcd::Identity(n, n) - ss.a.cast<std::complex<double>>();
  const Eigen::VectorXcd x = m.partialPivLu().solve(ss.b.cast<std::complex<double>>());
  return (ss.c.cast<std::complex<double>>() * x)(0) + ss.d;
}

}  // namespace

TEST_CASE("Realize reproduces N/D at complex frequencies, proper and strictly proper") {
  // Poles at -0.02, -3 and -400 +- 150j (four decades apart), two zeros; then a biproper one.
  const lw::Polynomial den =
      lw::Polynomial::FromRoots({{-0.02, 0}, {-3, 0}, {-400, 150}, {-400, -150}});
  const lw::TransferFunction g(lw::Polynomial({7.0, 3.5, 0.9}), den, 0.3);
  const lw::TransferFunction gb({2.0, 1.0, 5.0}, {1.0, 0.4, 3.0});
  for (const auto* tf : {&g, &gb}) {
    const lw::StateSpace ss = lw::Realize(*tf);
    CHECK(ss.order() == tf->den().degree());
    for (std::complex<double> s : {std::complex<double>(0.0, 0.1), {-1.0, 2.0}, {5.0, -300.0}}) {
      const std::complex<double> want = tf->num()(s) / tf->den()(s);
      CHECK(std::abs(Evaluate(ss, s) - want) <= 1e-10 * std::abs(want));
    }
  }
  CHECK(lw::Realize(gb).d == doctest::Approx(2.0));
  // Balancing: the companion form of `den` has entries spanning ~1e5 (coefficient 170000 next
  // to 1); after balancing no off-diagonal row/column norm ratio exceeds 4 by construction.
  const lw::StateSpace ss = lw::Realize(g);
  for (int i = 0; i < ss.order(); ++i) {
    double col = 0, row = 0;
    for (int j = 0; j < ss.order(); ++j) {
      if (j == i) continue;
      col += std::abs(ss.a(j, i));
      row += std::abs(ss.a(i, j));
    }
    CHECK(col / row <= 4.0);
    CHECK(row / col <= 4.0);
  }
  CHECK_THROWS_AS(lw::Realize(lw::TransferFunction({1.0, 0.0, 0.0}, {1.0, 1.0})), lw::UsageError);
}

TEST_CASE("Static gain realises with order 0") {
  const lw::StateSpace ss = lw::Realize(lw::TransferFunction({3.0}, {2.0}));
  CHECK(ss.order() == 0);
  CHECK(ss.d == doctest::Approx(1.5));
}

TEST_CASE("ExactHold matches the closed forms of a first-order lag") {
  // x' = -x / tau + v: Phi = e^{-L/tau}, Gamma_0 = tau (1 - e^{-L/tau}),
  // Gamma_1 = int_0^L e^{-(L-s)/tau} s ds = tau L - tau^2 (1 - e^{-L/tau}).
  const double tau = 0.37, len = 0.9;
  Eigen::MatrixXd a(1, 1), b(1, 1);
  a << -1.0 / tau;
  b << 1.0;
  const lw::HoldBlocks hb = lw::ExactHold(a, b, len, 2);
  const double e = std::exp(-len / tau);
  CHECK(hb.phi(0, 0) == doctest::Approx(e).epsilon(1e-14));
  CHECK(hb.gamma[0](0, 0) == doctest::Approx(tau * (1 - e)).epsilon(1e-13));
  CHECK(hb.gamma[1](0, 0) == doctest::Approx(tau * len - tau * tau * (1 - e)).epsilon(1e-13));
  // Gamma_2 = int e^{-(L-s)/tau} s^2 ds = tau L^2 - 2 tau^2 L + 2 tau^3 (1 - e^{-L/tau}).
  CHECK(hb.gamma[2](0, 0) ==
        doctest::Approx(tau * len * len - 2 * tau * tau * len + 2 * tau * tau * tau * (1 - e))
            .epsilon(1e-12));
}

TEST_CASE("ExactHold of a double integrator is the polynomial closed form") {
  // x1' = x2, x2' = v: Phi = [1 L; 0 1], Gamma_0 = [L^2/2; L], Gamma_1 = [L^3/6; L^2/2].
  Eigen::MatrixXd a(2, 2), b(2, 1);
  a << 0, 1, 0, 0;
  b << 0, 1;
  const double len = 1.7;
  const lw::HoldBlocks hb = lw::ExactHold(a, b, len, 1);
  CHECK(hb.phi(0, 1) == doctest::Approx(len));
  CHECK(hb.phi(1, 0) == doctest::Approx(0.0));
  CHECK(hb.gamma[0](0, 0) == doctest::Approx(len * len / 2).epsilon(1e-14));
  CHECK(hb.gamma[0](1, 0) == doctest::Approx(len).epsilon(1e-14));
  CHECK(hb.gamma[1](0, 0) == doctest::Approx(len * len * len / 6).epsilon(1e-14));
  CHECK(hb.gamma[1](1, 0) == doctest::Approx(len * len / 2).epsilon(1e-14));
  CHECK_THROWS_AS(lw::ExactHold(a, b, -1.0), lw::UsageError);
}

TEST_CASE("SampleZoh of a first-order lag with fractional delay: modified z-transform") {
  // K/(tau s + 1) exp(-(m + f) h s): y[k+1] = e^{-h/tau} y[k] + K (1 - e^{-(1-f)h/tau}) u[k-m]
  //   + K e^{-(1-f)h/tau} (1 - e^{-f h/tau}) u[k-m-1]   (Åström & Wittenmark, from memory).
  const double k = 1.8, tau = 0.6, h = 0.1, m = 3, f = 0.35;
  const lw::StateSpace ss = lw::Realize(lw::TransferFunction({k}, {tau, 1.0}));
  const lw::SampledStateSpace s = lw::SampleZoh(ss, h, (m + f) * h);
  CHECK(s.whole_delay == 3);
  CHECK(s.fraction == doctest::Approx(f));
  CHECK(s.output_lag() == 4);
  CHECK(s.phi(0, 0) == doctest::Approx(std::exp(-h / tau)).epsilon(1e-14));
  const double late = std::exp(-(1 - f) * h / tau);
  CHECK((s.c * s.gamma_late)(0) == doctest::Approx(k * (1 - late)).epsilon(1e-13));
  CHECK((s.c * s.gamma_early)(0) ==
        doctest::Approx(k * late * (1 - std::exp(-f * h / tau))).epsilon(1e-13));
  // A whole number of samples (to rounding) snaps to fraction 0.
  const lw::SampledStateSpace w = lw::SampleZoh(ss, 0.1, 0.3);
  CHECK(w.whole_delay == 3);
  CHECK(w.fraction == 0.0);
  CHECK(w.gamma_early.norm() == 0.0);
  CHECK_THROWS_AS(lw::SampleZoh(ss, 0.0, 0.1), lw::UsageError);
  CHECK_THROWS_AS(lw::SampleZoh(ss, 0.1, -0.1), lw::UsageError);
}

TEST_CASE("SteadyState solves A x + b u = 0 and refuses an integrator") {
  const lw::TransferFunction g({2.0, 1.0}, {1.0, 3.0, 2.0});
  const lw::StateSpace ss = lw::Realize(g);
  const Eigen::VectorXd x = lw::SteadyState(ss, 4.0);
  CHECK((ss.a * x + ss.b * 4.0).norm() <= 1e-12);
  CHECK((ss.c * x)(0) + ss.d * 4.0 == doctest::Approx(4.0 * 0.5));  // G(0) = 1/2
  CHECK(lw::HasRootAtOrigin(lw::Polynomial({1.0, 2.0, 0.0})));
  CHECK_FALSE(lw::HasRootAtOrigin(g.den()));
  CHECK_THROWS_AS(lw::SteadyState(lw::Realize(lw::TransferFunction({1.0}, {1.0, 0.0})), 1.0),
                  lw::UsageError);
}
