// Polynomial: construction, arithmetic, evaluation, derivative and roots.
//
// Root tolerances follow the standard perturbation results for polynomial roots (e.g. Wilkinson,
// Rounding Errors in Algebraic Processes; from memory):
//   a simple root r moves by about eps * sum_k |c_k| |r|^k / |p'(r)| when the coefficients carry
//   relative errors of order eps (backward-stable eigenvalue solvers give about that);
//   a root of multiplicity m moves by about (eps * sum_k |c_k| |r|^k / (|p^(m)(r)| / m!))^(1/m),
//   i.e. of order eps^(1/m), while the mean of the m computed copies stays accurate to O(eps).
#include <doctest/doctest.h>

#include <cmath>
#include <complex>
#include <limits>
#include <vector>

#include "lti/error.h"
#include "lti/polynomial.h"

namespace lw {
namespace {

using Complex = std::complex<double>;
constexpr double kEps = std::numeric_limits<double>::epsilon();

// sum_k |c_k| |r|^k: the scale of the rounding error of p(r).
double AbsScale(const Polynomial& p, Complex r) {
  double v = 0.0;
  for (double c : p.coefficients()) v = v * std::abs(r) + std::abs(c);
  return v;
}

// Distance from r to the nearest entry of roots.
double Nearest(const std::vector<Complex>& roots, Complex r) {
  double best = std::numeric_limits<double>::infinity();
  for (const Complex& x : roots) best = std::min(best, std::abs(x - r));
  return best;
}

TEST_CASE("polynomial construction trims leading zeros and rejects non-finite coefficients") {
  const Polynomial p({0.0, 0.0, 3.0, -1.0});
  CHECK(p.degree() == 1);
  CHECK(p.coefficients() == std::vector<double>{3.0, -1.0});
  CHECK(p.coefficient(1) == 3.0);
  CHECK(p.coefficient(0) == -1.0);
  CHECK(p.coefficient(5) == 0.0);
  CHECK(p.leading() == 3.0);

  const Polynomial zero({0.0, 0.0});
  CHECK(zero.is_zero());
  CHECK(zero.degree() == -1);
  CHECK(Polynomial().is_zero());
  CHECK(Polynomial::Constant(0.0).is_zero());
  CHECK(Polynomial::Constant(4.0).degree() == 0);

  CHECK_THROWS_AS(Polynomial({1.0, std::nan("")}), UsageError);
  CHECK_THROWS_AS(Polynomial({std::numeric_limits<double>::infinity()}), UsageError);
}

TEST_CASE("polynomial arithmetic") {
  const Polynomial a({1.0, 1.0});   // s + 1
  const Polynomial b({1.0, -1.0});  // s - 1
  CHECK((a * b) == Polynomial({1.0, 0.0, -1.0}));
  CHECK((a + b) == Polynomial({2.0, 0.0}));
  CHECK((a - b) == Polynomial::Constant(2.0));
  // Leading terms cancelling lower the degree.
  const Polynomial c({3.0, 2.0, 1.0});
  CHECK((c - Polynomial({3.0, 0.0, 0.0})) == Polynomial({2.0, 1.0}));
  CHECK((c - c).is_zero());
  CHECK((c * 0.0).is_zero());
  CHECK((c * Polynomial()).is_zero());
  CHECK((c * 2.0) == Polynomial({6.0, 4.0, 2.0}));
  CHECK((-c) == Polynomial({-3.0, -2.0, -1.0}));
  // (s^2 + 3s + 7)(2s - 5) = 2s^3 + s^2 - s - 35, expanded by hand.
  CHECK((Polynomial({1.0, 3.0, 7.0}) * Polynomial({2.0, -5.0})) ==
        Polynomial({2.0, 1.0, -1.0, -35.0}));
}

TEST_CASE("polynomial evaluation at real and complex points, and the derivative") {
  const Polynomial p({2.0, 0.0, -3.0, 5.0});  // 2 s^3 - 3 s + 5
  CHECK(p(2.0) == doctest::Approx(2.0 * 8.0 - 6.0 + 5.0));
  const Complex s(1.25, -0.75);
  const Complex direct = 2.0 * s * s * s - 3.0 * s + 5.0;
  CHECK(std::abs(p(s) - direct) <= 1e-14 * std::abs(direct));

  CHECK(p.derivative() == Polynomial({6.0, 0.0, -3.0}));
  CHECK(p.derivative().derivative().derivative() == Polynomial::Constant(12.0));
  CHECK(Polynomial::Constant(7.0).derivative().is_zero());
  CHECK(Polynomial().derivative().is_zero());
}

TEST_CASE("polynomial from roots: conjugate pairs required") {
  // 2 (s + 3)(s^2 + 2 s + 5) = 2 s^3 + 10 s^2 + 22 s + 30.
  const Polynomial p =
      Polynomial::FromRoots({Complex(-1.0, 2.0), Complex(-3.0, 0.0), Complex(-1.0, -2.0)}, 2.0);
  CHECK(p == Polynomial({2.0, 10.0, 22.0, 30.0}));
  CHECK(Polynomial::FromRoots({}, 4.0) == Polynomial::Constant(4.0));
  CHECK_THROWS_AS(Polynomial::FromRoots({Complex(-1.0, 2.0), Complex(-1.0, 2.0)}), UsageError);
  CHECK_THROWS_AS(Polynomial::FromRoots({Complex(-1.0, 2.0)}), UsageError);
}

TEST_CASE("roots of a well separated polynomial, sorted, with exact conjugate pairs") {
  // (s + 4)(s - 0.5)(s^2 + 0.6 s + 2.34): roots -4, 0.5, -0.3 +- 1.5j.
  const Polynomial p = Polynomial::FromRoots(
      {Complex(-4.0, 0.0), Complex(0.5, 0.0), Complex(-0.3, 1.5), Complex(-0.3, -1.5)});
  const auto r = p.roots();
  REQUIRE(r.size() == 4);
  CHECK(r[0].real() == doctest::Approx(-4.0).epsilon(1e-13));
  CHECK(r[0].imag() == 0.0);
  CHECK(r[1].real() == doctest::Approx(-0.3).epsilon(1e-13));
  CHECK(r[1].imag() == doctest::Approx(-1.5).epsilon(1e-13));
  CHECK(r[2] == std::conj(r[1]));  // exact conjugates
  CHECK(r[3].real() == doctest::Approx(0.5).epsilon(1e-13));
  CHECK(r[3].imag() == 0.0);
  CHECK(Polynomial::Constant(3.0).roots().empty());
  CHECK(Polynomial().roots().empty());
  const auto lin = Polynomial({2.0, -3.0}).roots();
  REQUIRE(lin.size() == 1);
  CHECK(lin[0] == Complex(1.5, 0.0));
}

TEST_CASE("roots at the origin come back exactly zero") {
  const Polynomial p({1.0, 4.0, 0.0, 0.0});  // s^2 (s + 4)
  const auto r = p.roots();
  REQUIRE(r.size() == 3);
  CHECK(r[0].real() == doctest::Approx(-4.0));
  CHECK(r[1] == Complex(0.0, 0.0));
  CHECK(r[2] == Complex(0.0, 0.0));
}

TEST_CASE("clustered simple roots 1, 1.001, 1.002") {
  const std::vector<Complex> exact{1.0, 1.001, 1.002};
  const Polynomial p = Polynomial::FromRoots(exact);
  const Polynomial dp = p.derivative();
  const auto r = p.roots();
  REQUIRE(r.size() == 3);
  for (size_t i = 0; i < 3; ++i) {
    // Simple-root sensitivity (see the top of the file), with a factor 50 for the rounding of the
    // coefficients themselves and of the solver; about 1e-7 here, far below the 1e-3 spacing.
    const double tol = 50.0 * kEps * AbsScale(p, exact[i]) / std::abs(dp(exact[i]));
    CAPTURE(i);
    CAPTURE(tol);
    CHECK(tol < 1e-5);
    CHECK(std::abs(r[i] - exact[i]) <= tol);
  }
}

TEST_CASE("repeated roots: (s + 2)^3 and (s^2 + 1)^2") {
  SUBCASE("triple real root") {
    const Polynomial p({1.0, 6.0, 12.0, 8.0});  // (s + 2)^3
    const auto r = p.roots();
    REQUIRE(r.size() == 3);
    // Multiplicity 3: |p'''/3!| = 1, so the spread is (eps * sum|c_k| 2^k)^(1/3) ~ 2e-5; allow 10x.
    const double tol = 10.0 * std::cbrt(kEps * AbsScale(p, -2.0));
    Complex mean = 0.0;
    for (const Complex& x : r) {
      CHECK(std::abs(x - Complex(-2.0, 0.0)) <= tol);
      mean += x / 3.0;
    }
    // The mean of the cluster is well conditioned.
    CHECK(std::abs(mean - Complex(-2.0, 0.0)) <= 1e-9);
    // Whatever came back is still a conjugate-closed set.
    for (const Complex& x : r) CHECK(Nearest(r, std::conj(x)) == 0.0);
  }
  SUBCASE("double complex pair") {
    const Polynomial p({1.0, 0.0, 2.0, 0.0, 1.0});  // (s^2 + 1)^2
    const auto r = p.roots();
    REQUIRE(r.size() == 4);
    // Multiplicity 2 at +-j: |p''(j)/2!| = 4, spread (eps * 4 / 4)^(1/2) ~ 1.5e-8; allow 10x.
    const double tol = 10.0 * std::sqrt(kEps * AbsScale(p, Complex(0.0, 1.0)) / 4.0);
    int upper = 0;
    for (const Complex& x : r) {
      const Complex target(0.0, x.imag() > 0 ? 1.0 : -1.0);
      CHECK(std::abs(x - target) <= tol);
      upper += x.imag() > 0 ? 1 : 0;
      CHECK(Nearest(r, std::conj(x)) == 0.0);  // exact conjugates
    }
    CHECK(upper == 2);
  }
}

TEST_CASE("roots of a degree-8 polynomial with spread magnitudes") {
  // Poles of a made-up plant from 0.05 to 40 rad/s, two of them complex pairs.
  const std::vector<Complex> exact{-0.05,
                                   -0.7,
                                   Complex(-1.2, 3.1),
                                   Complex(-1.2, -3.1),
                                   -6.0,
                                   Complex(-9.0, 14.0),
                                   Complex(-9.0, -14.0),
                                   -40.0};
  const Polynomial p = Polynomial::FromRoots(exact, 0.25);
  const Polynomial dp = p.derivative();
  const auto r = p.roots();
  REQUIRE(r.size() == exact.size());
  for (const Complex& e : exact) {
    const double tol = 100.0 * kEps * AbsScale(p, e) / std::abs(dp(e));
    CAPTURE(e);
    CHECK(Nearest(r, e) <= std::max(tol, 1e-14 * std::abs(e)));
  }
}

TEST_CASE("roots sixteen decades apart are each accurate relative to their own size") {
  // s^2 + 1e8 s + 1 has roots near -1e8 and -1e-8 (product 1, sum -1e8, by Vieta). An
  // eigenvalue solver gives the small one with an absolute error of up to about eps * 1e8;
  // Newton polishing on p brings it to full relative accuracy.
  const Polynomial p({1.0, 1e8, 1.0});
  const auto r = p.roots();
  REQUIRE(r.size() == 2);
  // Quadratic formula in the cancellation-free form: r1 = -(b + sqrt(b^2 - 4)) / 2, r2 = 1 / r1.
  const double big = -(1e8 + std::sqrt(1e16 - 4.0)) / 2.0;
  const double small = 1.0 / big;
  CHECK(r[0].real() == doctest::Approx(big).epsilon(1e-14));
  CHECK(r[1].real() == doctest::Approx(small).epsilon(1e-14));
  CHECK(r[0].imag() == 0.0);
  CHECK(r[1].imag() == 0.0);
}

TEST_CASE("polynomial text form") {
  CHECK(Polynomial({2.0, 0.5, 1.0}).ToString() == "2*s^2 + 0.5*s + 1");
  CHECK(Polynomial({-1.0, 0.0, 0.0, -2.0}).ToString() == "-s^3 - 2");
  CHECK(Polynomial({1.0, 0.0}).ToString() == "s");
  CHECK(Polynomial({0.1, -1e-07}).ToString() == "0.1*s - 1e-07");
  CHECK(Polynomial().ToString() == "0");
}

}  // namespace
}  // namespace lw
