// RootTracker: the roots of a + k b along k, against closed-form roots of families of our own
// (each worked out by hand beside its case) and against Polynomial::roots() within the
// perturbation bound for simple roots (Wilkinson, Rounding Errors in Algebraic Processes; from
// memory): |dr| <= eps sum_k |c_k| |r|^k / |p'(r)|, with a factor 64 of slack for both solvers.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <limits>
#include <numbers>
#include <vector>

#include "lti/polynomial.h"
#include "lti/root_tracker.h"

namespace lw {
namespace {

using Complex = std::complex<double>;
constexpr double kEps = std::numeric_limits<double>::epsilon();

bool Less(const Complex& x, const Complex& y) {
  return x.real() != y.real() ? x.real() < y.real() : x.imag() < y.imag();
}

void CheckSame(const std::vector<Complex>& got, std::vector<Complex> want, double tol) {
  std::sort(want.begin(), want.end(), Less);
  REQUIRE(got.size() == want.size());
  for (size_t i = 0; i < got.size(); ++i) {
    CHECK(std::abs(got[i] - want[i]) <= tol * std::max(1.0, std::abs(want[i])));
  }
}

// Real roots come back with imaginary part exactly 0, pairs as exact conjugates.
void CheckStructure(const std::vector<Complex>& roots) {
  size_t upper = 0, lower = 0;
  for (const Complex& r : roots) {
    upper += r.imag() > 0.0;
    lower += r.imag() < 0.0;
    if (r.imag() > 0.0) {
      CHECK(std::find(roots.begin(), roots.end(), std::conj(r)) != roots.end());
    }
  }
  CHECK(upper == lower);
}

TEST_CASE("(s + 1)^3 + k: the three cube roots of -k about -1, walked both ways and by jumps") {
  // (s + 1)^3 = -k gives s = -1 + k^(1/3) exp(j pi (2m + 1) / 3), m = 0, 1, 2: one real root
  // -1 - k^(1/3) and the pair -1 + k^(1/3) (1/2 +/- j sqrt(3)/2).
  RootTracker t(Polynomial({1.0, 3.0, 3.0, 1.0}), Polynomial::Constant(1.0));
  auto exact = [](double k) {
    const double r = std::cbrt(k), h = std::sqrt(3.0) / 2.0;
    return std::vector<Complex>{{-1.0 - r, 0.0}, {-1.0 + 0.5 * r, h * r}, {-1.0 + 0.5 * r, -h * r}};
  };
  std::vector<double> ks;
  for (double k = 1e-3; k < 1e3; k *= 1.1) ks.push_back(k);
  for (double k = 1e3; k > 1e-3; k /= 1.37) ks.push_back(k);
  for (double k : {0.5, 200.0, 0.01, 7.0, 7.0000001, 1e-3}) ks.push_back(k);
  for (double k : ks) {
    const auto& r = t.RootsAt(k);
    CheckSame(r, exact(k), 1e-12);
    CheckStructure(r);
  }
  CHECK(t.warm_solves() + t.cold_solves() == static_cast<int>(ks.size()));
  CHECK(t.warm_solves() >= static_cast<int>(ks.size()) - 5);
}

TEST_CASE("s^2 + 2 s + k: two real roots meet at k = 1 and leave as a pair") {
  // s = -1 +/- sqrt(1 - k): real for k < 1, -1 +/- j sqrt(k - 1) beyond. At the double root the
  // pattern changes; the tracker must hand over to the eigenvalues there, never mix it up.
  RootTracker t(Polynomial({1.0, 2.0, 0.0}), Polynomial::Constant(1.0));
  for (double k = 0.05; k < 3.0; k += 0.01) {
    if (std::abs(k - 1.0) < 1e-3) continue;  // double root: conditioning eps^(1/2)
    const double d = std::sqrt(std::abs(1.0 - k));
    std::vector<Complex> want = k < 1.0 ? std::vector<Complex>{{-1.0 - d, 0.0}, {-1.0 + d, 0.0}}
                                        : std::vector<Complex>{{-1.0, -d}, {-1.0, d}};
    const auto& r = t.RootsAt(k);
    CheckSame(r, want, 1e-12);
    CheckStructure(r);
  }
  CHECK(t.cold_solves() >= 2);  // the first call and the change of pattern
  CHECK(t.warm_solves() > 200);
}

TEST_CASE("a root at the origin stays exactly 0; a degree drop and a leading zero are handled") {
  // s^3 + 3 s^2 + 2 s + k s = s (s^2 + 3 s + 2 + k): 0 and -3/2 +/- sqrt(1/4 - k).
  RootTracker t(Polynomial({1.0, 3.0, 2.0, 0.0}), Polynomial({1.0, 0.0}));
  for (double k : {0.05, 0.1, 0.2, 1.0, 2.0, 5.0}) {
    const Complex d = std::sqrt(Complex(0.25 - k, 0.0));
    const auto& r = t.RootsAt(k);
    CheckSame(r, {0.0, -1.5 - d, -1.5 + d}, 1e-12);
    CHECK(std::count(r.begin(), r.end(), Complex(0.0, 0.0)) == 1);
  }
  // (s + 1) + k (2 - s) = (1 - k) s + 1 + 2 k: the root -(1 + 2k)/(1 - k) leaves through
  // infinity at k = 1, where no root is left.
  RootTracker u(Polynomial({1.0, 1.0}), Polynomial({-1.0, 2.0}));
  for (double k : {0.5, 0.9, 0.99, 1.0, 1.01, 2.0}) {
    const auto& r = u.RootsAt(k);
    if (k == 1.0) {
      CHECK(r.empty());
      continue;
    }
    CheckSame(r, {Complex(-(1.0 + 2.0 * k) / (1.0 - k), 0.0)}, 1e-12);
  }
}

TEST_CASE("a 12th-order locus of our own agrees with Polynomial::roots() to rounding") {
  // a: poles -0.2, -0.7, -1.5, -2.5, -4, -6, -9 and the pairs -0.3 +/- 2j, -1 +/- 5j, -2 +/- 0.5j
  // with a root at the origin; b: zeros -0.5, -3 +/- 1j, gain 2.
  const Polynomial a =
      Polynomial::FromRoots({0.0, -0.2, -0.7, -1.5, -2.5, -4.0, -6.0, -9.0, Complex(-0.3, 2.0),
                             Complex(-0.3, -2.0), Complex(-1.0, 5.0), Complex(-1.0, -5.0)});
  const Polynomial b = Polynomial::FromRoots({-0.5, Complex(-3.0, 1.0), Complex(-3.0, -1.0)}, 2.0);
  RootTracker t(a, b);
  int compared = 0;
  for (double k = 1e-3; k < 1e5; k *= 1.07) {
    const Polynomial p = a + b * k;
    const auto want = p.roots();
    const auto& got = t.RootsAt(k);
    REQUIRE(got.size() == want.size());
    CheckStructure(got);
    const Polynomial dp = p.derivative();
    for (size_t i = 0; i < got.size(); ++i) {
      double scale = 0.0;
      for (double c : p.coefficients()) scale = scale * std::abs(want[i]) + std::abs(c);
      const double bound = 64.0 * kEps * scale / std::abs(dp(want[i]));
      if (bound > 1e-6 * std::max(1.0, std::abs(want[i]))) continue;  // near a double root
      CHECK(std::abs(got[i] - want[i]) <= bound);
      ++compared;
    }
  }
  CHECK(compared > 1500);
  CHECK(t.warm_solves() > t.cold_solves() * 10);
}

}  // namespace
}  // namespace lw
