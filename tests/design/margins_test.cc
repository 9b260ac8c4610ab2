// Margins against closed forms worked by hand for plants of our own.
#include <cmath>
#include <numbers>

#include <doctest/doctest.h>

#include "design/margins.h"

namespace lw {
namespace {

constexpr double kPi = std::numbers::pi;

TEST_CASE("margins of 4/(s+1)^3: GM 2 at sqrt(3) (Routh-Hurwitz), PM from |L| = 1 by hand") {
  TransferFunction l({4.0}, {1.0, 3.0, 3.0, 1.0});
  Margins m = ComputeMargins(l);
  CHECK(m.gain_margin == doctest::Approx(2.0).epsilon(1e-10));
  CHECK(m.phase_crossover == doctest::Approx(std::sqrt(3.0)).epsilon(1e-10));
  // (1 + w^2)^(3/2) = 4  =>  w = sqrt(4^(2/3) - 1); phase -3 atan(w).
  double wgc = std::sqrt(std::pow(4.0, 2.0 / 3.0) - 1.0);
  CHECK(m.gain_crossover == doctest::Approx(wgc).epsilon(1e-10));
  CHECK(m.phase_margin_deg ==
        doctest::Approx(180.0 - 3.0 * std::atan(wgc) * 180.0 / kPi).epsilon(1e-10));
  CHECK(m.gain_margin_db == doctest::Approx(20.0 * std::log10(2.0)).epsilon(1e-10));
}

TEST_CASE("margins with exact dead time: 2 exp(-0.5 s)/(s+1)") {
  TransferFunction l({2.0}, {1.0, 1.0}, 0.5);
  Margins m = ComputeMargins(l);
  // |L| = 1 at w = sqrt(3); phase -atan(w) - 0.5 w.
  CHECK(m.gain_crossover == doctest::Approx(std::sqrt(3.0)).epsilon(1e-10));
  double pm = 180.0 - (std::atan(std::sqrt(3.0)) + 0.5 * std::sqrt(3.0)) * 180.0 / kPi;
  CHECK(m.phase_margin_deg == doctest::Approx(pm).epsilon(1e-9));
  CHECK(m.delay_margin == doctest::Approx(pm * kPi / 180.0 / std::sqrt(3.0)).epsilon(1e-9));
  // Phase crossover: atan(w) + 0.5 w = pi, solved here by plain bisection on [1, 10].
  double a = 1.0, b = 10.0;
  for (int i = 0; i < 200; ++i) {
    double c = 0.5 * (a + b);
    (std::atan(c) + 0.5 * c < kPi ? a : b) = c;
  }
  CHECK(m.phase_crossover == doctest::Approx(a).epsilon(1e-9));
  CHECK(m.gain_margin == doctest::Approx(std::sqrt(1.0 + a * a) / 2.0).epsilon(1e-9));
}

TEST_CASE("a loop that never reaches unit gain has infinite phase margin") {
  TransferFunction l({0.5}, {1.0, 2.0});
  Margins m = ComputeMargins(l);
  CHECK(std::isinf(m.phase_margin_deg));
  CHECK(std::isinf(m.gain_margin));
  CHECK(m.gain_crossovers.empty());
}

}  // namespace
}  // namespace lw
