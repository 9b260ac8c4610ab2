// Padé approximants of exp(-T s) against the published closed form.
//
// The [n/n] approximant is P_n(-T s) / P_n(T s) with
//   P_n(x) = sum_{k=0..n} (2n-k)! n! / ((2n)! k! (n-k)!) x^k
// (e.g. Franklin, Powell & Emami-Naeini, Feedback Control of Dynamic Systems; from memory), and
// its error for exp(z) is (-1)^n (n!)^2 / ((2n)! (2n+1)!) z^(2n+1) + O(z^(2n+2)) (e.g. Baker &
// Graves-Morris, Padé Approximants; from memory). The coefficients are written here with exact
// integer factorials, independently of the library's recurrence.
#include <doctest/doctest.h>

#include <cmath>
#include <complex>
#include <cstdint>
#include <numbers>

#include "lti/error.h"
#include "lti/pade.h"

namespace lw {
namespace {

using Complex = std::complex<double>;

std::uint64_t Factorial(int n) {
  std::uint64_t f = 1;
  for (int i = 2; i <= n; ++i) f *= static_cast<std::uint64_t>(i);
  return f;
}

// The closed-form coefficient of x^k in P_n (16! fits in 64 bits).
double ClosedForm(int n, int k) {
  const double numer =
      static_cast<double>(Factorial(2 * n - k)) * static_cast<double>(Factorial(n));
  const double denom = static_cast<double>(Factorial(2 * n)) * static_cast<double>(Factorial(k)) *
                       static_cast<double>(Factorial(n - k));
  return numer / denom;
}

TEST_CASE("Padé coefficients of orders 1 to 8 match the closed form") {
  const double t = 0.7;
  for (int n = 1; n <= 8; ++n) {
    CAPTURE(n);
    const TransferFunction p = PadeDelay(t, n);
    CHECK(p.delay() == 0.0);
    REQUIRE(p.num().degree() == n);
    REQUIRE(p.den().degree() == n);
    // The library normalises the denominator to be monic; undo that with the s^n coefficient.
    const double scale = ClosedForm(n, n) * std::pow(t, n);
    for (int k = 0; k <= n; ++k) {
      CAPTURE(k);
      const double d = ClosedForm(n, k) * std::pow(t, k);
      const double num = (k % 2 == 0 ? d : -d);
      CHECK(p.den().coefficient(k) * scale == doctest::Approx(d).epsilon(1e-13));
      CHECK(p.num().coefficient(k) * scale == doctest::Approx(num).epsilon(1e-13));
    }
  }
}

TEST_CASE("Padé orders 1 and 2 in their familiar forms") {
  const double t = 1.3;
  // (1 - T s / 2) / (1 + T s / 2)
  const TransferFunction p1 = PadeDelay(t, 1);
  // (1 - T s / 2 + T^2 s^2 / 12) / (1 + T s / 2 + T^2 s^2 / 12)
  const TransferFunction p2 = PadeDelay(t, 2);
  for (const Complex s : {Complex(0.0, 0.4), Complex(-0.3, 2.0), Complex(1.0, -5.0)}) {
    const Complex f1 = (1.0 - t * s / 2.0) / (1.0 + t * s / 2.0);
    const Complex f2 =
        (1.0 - t * s / 2.0 + t * t * s * s / 12.0) / (1.0 + t * s / 2.0 + t * t * s * s / 12.0);
    CHECK(std::abs(p1(s) - f1) <= 1e-14 * std::abs(f1));
    CHECK(std::abs(p2(s) - f2) <= 1e-14 * std::abs(f2));
  }
}

TEST_CASE("Padé approximants are all-pass with a small phase error for w T < 1") {
  const double t = 0.45;
  for (int n = 1; n <= 8; ++n) {
    CAPTURE(n);
    const double c =
        static_cast<double>(Factorial(n)) * static_cast<double>(Factorial(n)) /
        (static_cast<double>(Factorial(2 * n)) * static_cast<double>(Factorial(2 * n + 1)));
    for (int i = 1; i <= 40; ++i) {
      const double x = 0.025 * i - 0.001;  // w T from 0.024 to 0.999
      const double w = x / t;
      const Complex g = PadeDelay(t, n).frequency_response(w);
      CAPTURE(x);
      CHECK(std::abs(g) == doctest::Approx(1.0).epsilon(1e-13));
      // Exact phase of exp(-j w T) is -w T (no wrapping below pi).
      const double error = std::abs(std::arg(g) + x);
      CHECK(error <= 1.01 * c * std::pow(x, 2 * n + 1) + 1e-13);
    }
  }
  // For the lowest order the error at w T = 1 is x - 2 atan(x / 2) = 0.0727 rad.
  const double e1 = std::abs(std::arg(PadeDelay(1.0, 1).frequency_response(1.0)) + 1.0);
  CHECK(e1 == doctest::Approx(1.0 - 2.0 * std::atan(0.5)).epsilon(1e-12));
  CHECK(e1 < std::numbers::pi / 40.0);
}

TEST_CASE("Padé preconditions and the zero delay") {
  CHECK_THROWS_AS(PadeDelay(0.5, 0), UsageError);
  CHECK_THROWS_AS(PadeDelay(0.5, 9), UsageError);
  CHECK_THROWS_AS(PadeDelay(-0.5, 2), UsageError);
  CHECK_THROWS_AS(PadeDelay(std::nan(""), 2), UsageError);
  const TransferFunction one = PadeDelay(0.0, 3);
  CHECK(one.num() == Polynomial::Constant(1.0));
  CHECK(one.den() == Polynomial::Constant(1.0));
}

TEST_CASE("ApplyPade replaces the dead time and keeps the rational part") {
  const TransferFunction g({3.0}, {1.0, 2.0}, 0.8);
  const TransferFunction a = ApplyPade(g, 3);
  CHECK(a.delay() == 0.0);
  CHECK(a.num().degree() == 3);
  CHECK(a.den().degree() == 4);
  CHECK(a.dc_gain() == doctest::Approx(g.dc_gain()));
  for (double w : {0.05, 0.3, 0.9}) {  // w T < 1
    CAPTURE(w);
    CHECK(std::abs(a.frequency_response(w) - g.frequency_response(w)) < 1e-4);
  }
  const TransferFunction plain({3.0}, {1.0, 2.0});
  const TransferFunction same = ApplyPade(plain, 5);
  CHECK(same.num() == plain.num());
  CHECK(same.den() == plain.den());
  CHECK_THROWS_AS(ApplyPade(g, 0), UsageError);
}

}  // namespace
}  // namespace lw
