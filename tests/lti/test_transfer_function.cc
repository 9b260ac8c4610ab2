// TransferFunction and UnityFeedback: normalisation, poles and zeros, gains, evaluation with the
// dead time, series connection (delays add, never dropped) and the closed loop.
#include <doctest/doctest.h>

#include <cmath>
#include <complex>
#include <limits>

#include "lti/error.h"
#include "lti/pade.h"
#include "lti/transfer_function.h"

namespace lw {
namespace {

using Complex = std::complex<double>;

TEST_CASE("transfer function normalises the denominator to be monic") {
  const TransferFunction g({2.0, 4.0}, {2.0, 6.0, 4.0}, 0.4);
  CHECK(g.num() == Polynomial({1.0, 2.0}));
  CHECK(g.den() == Polynomial({1.0, 3.0, 2.0}));
  CHECK(g.delay() == 0.4);
  CHECK(g.relative_degree() == 1);
  CHECK(g.is_strictly_proper());
  // No pole-zero cancellation: (s + 2)/((s + 1)(s + 2)) keeps both.
  CHECK(g.poles().size() == 2);
  CHECK(g.zeros().size() == 1);

  const TransferFunction one;
  CHECK(one.num() == Polynomial::Constant(1.0));
  CHECK(one.den() == Polynomial::Constant(1.0));
  CHECK(one.delay() == 0.0);

  const TransferFunction improper({1.0, 0.0, 1.0}, {1.0, 5.0});
  CHECK_FALSE(improper.is_proper());
}

TEST_CASE("transfer function preconditions") {
  CHECK_THROWS_AS(TransferFunction({1.0}, {0.0}), UsageError);
  CHECK_THROWS_AS(TransferFunction({1.0}, std::vector<double>{}), UsageError);
  CHECK_THROWS_AS(TransferFunction({1.0}, {1.0, 1.0}, -0.1), UsageError);
  CHECK_THROWS_AS(TransferFunction({1.0}, {1.0, 1.0}, std::nan("")), UsageError);
  CHECK_THROWS_AS(TransferFunction({1.0}, {1.0, 1.0}, std::numeric_limits<double>::infinity()),
                  UsageError);
}

TEST_CASE("dc gain, integrators and stability") {
  CHECK(TransferFunction({6.0}, {1.0, 5.0, 4.0}).dc_gain() == doctest::Approx(1.5));
  const TransferFunction integ({3.0}, {1.0, 1.0, 0.0});  // 3 / (s (s + 1))
  CHECK(integ.integrators() == 1);
  CHECK(std::isinf(integ.dc_gain()));
  CHECK(integ.dc_gain() > 0);
  CHECK(TransferFunction({-3.0}, {1.0, 1.0, 0.0}).dc_gain() ==
        -std::numeric_limits<double>::infinity());
  // s / (s (s + 2)): the common s cancels, G(0) = 1/2.
  CHECK(TransferFunction({1.0, 0.0}, {1.0, 2.0, 0.0}).dc_gain() == doctest::Approx(0.5));
  // A differentiator s / (s + 1) has zero dc gain.
  CHECK(TransferFunction({1.0, 0.0}, {1.0, 1.0}).dc_gain() == 0.0);
  CHECK(TransferFunction({0.0}, {1.0, 1.0}).dc_gain() == 0.0);
  CHECK(TransferFunction({1.0}, {1.0, 3.0, 0.0, 0.0}).integrators() == 2);

  CHECK(TransferFunction({1.0}, {1.0, 3.0, 2.0}).is_stable());
  CHECK_FALSE(TransferFunction({1.0}, {1.0, 0.0, 1.0}).is_stable());   // poles on the axis
  CHECK_FALSE(TransferFunction({1.0}, {1.0, 1.0, 0.0}).is_stable());   // integrator
  CHECK_FALSE(TransferFunction({1.0}, {1.0, -1.0, 1.0}).is_stable());  // right half plane
  CHECK(TransferFunction({1.0}, {1.0}).is_stable());                   // no poles at all
}

TEST_CASE("evaluation includes the dead time exactly") {
  // G(s) = (0.5 s + 2) / (s^2 + 0.8 s + 3) exp(-0.35 s), evaluated by the formula directly.
  const TransferFunction g({0.5, 2.0}, {1.0, 0.8, 3.0}, 0.35);
  for (double w : {0.0, 0.3, 1.7, 4.0, 25.0}) {
    const Complex s(0.0, w);
    const Complex direct = (0.5 * s + 2.0) / (s * s + 0.8 * s + 3.0) * std::exp(-0.35 * s);
    const Complex got = g.frequency_response(w);
    CAPTURE(w);
    CHECK(std::abs(got - direct) <= 1e-14 * std::abs(direct));
    // The delay leaves the magnitude alone and lowers the phase by w T.
    CHECK(std::abs(got) == doctest::Approx(std::abs(g.Rational().frequency_response(w))));
  }
  const Complex s(-0.2, 1.1);
  const Complex direct = (0.5 * s + 2.0) / (s * s + 0.8 * s + 3.0) * std::exp(-0.35 * s);
  CHECK(std::abs(g(s) - direct) <= 1e-14 * std::abs(direct));
}

TEST_CASE("series connection multiplies and adds delays; scaling keeps the delay") {
  const TransferFunction a({2.0}, {1.0, 1.0}, 0.25);
  const TransferFunction b({1.0, 3.0}, {1.0, 0.0, 4.0}, 0.5);
  const TransferFunction ab = a * b;
  CHECK(ab.delay() == 0.75);
  CHECK(ab.num() == Polynomial({2.0, 6.0}));
  CHECK(ab.den() == Polynomial({1.0, 1.0, 4.0, 4.0}));
  const Complex s(0.1, 2.0);
  CHECK(std::abs(ab(s) - a(s) * b(s)) <= 1e-14 * std::abs(ab(s)));

  const TransferFunction k = ab * 3.0;
  CHECK(k.delay() == 0.75);
  CHECK(k.num() == Polynomial({6.0, 18.0}));
  CHECK(ab.Rational().delay() == 0.0);
  CHECK(ab.WithDelay(1.5).delay() == 1.5);
  CHECK(ab.WithDelay(1.5).num() == ab.num());
  CHECK_THROWS_AS(ab.WithDelay(-1.0), UsageError);
}

TEST_CASE("text form") {
  CHECK(TransferFunction({0.5, 2.0}, {1.0, 0.8, 3.0}, 0.35).ToString() ==
        "(0.5*s + 2)/(s^2 + 0.8*s + 3) * exp(-0.35*s)");
  CHECK(TransferFunction({4.0}, {1.0, 0.0}).ToString() == "4/s");
  CHECK(TransferFunction({1.0, 1.0}, {1.0}).ToString() == "(s + 1)");
}

TEST_CASE("unity feedback without dead time is exact") {
  // L = 2 / (s (s + 1)): closed loop 2 / (s^2 + s + 2).
  const UnityFeedback loop(TransferFunction({2.0}, {1.0, 1.0, 0.0}));
  CHECK(loop.is_rational());
  const TransferFunction t = loop.Exact();
  CHECK(t.num() == Polynomial::Constant(2.0));
  CHECK(t.den() == Polynomial({1.0, 1.0, 2.0}));
  CHECK(loop.CharacteristicPolynomial() == Polynomial({1.0, 1.0, 2.0}));
  CHECK(loop.WithPade(3).den() == t.den());
  const Complex s(0.3, 0.9);
  const Complex l = 2.0 / (s * (s + 1.0));
  CHECK(std::abs(loop(s) - l / (1.0 + l)) <= 1e-14 * std::abs(loop(s)));
}

TEST_CASE("unity feedback stability boundary by the Routh-Hurwitz criterion") {
  // L = K / ((s + 1)(s + 3)(s + 5)); characteristic s^3 + 9 s^2 + 23 s + 15 + K. A cubic
  // s^3 + a2 s^2 + a1 s + a0 is stable iff a2, a1, a0 > 0 and a2 a1 > a0 (Routh-Hurwitz, e.g.
  // Franklin, Powell & Emami-Naeini, Feedback Control of Dynamic Systems; from memory), so the
  // boundary is K = 9 * 23 - 15 = 192 with closed-loop poles at +-j sqrt(23).
  const TransferFunction plant({1.0}, {1.0, 9.0, 23.0, 15.0});
  CHECK(UnityFeedback(plant * 191.0).Exact().is_stable());
  CHECK_FALSE(UnityFeedback(plant * 193.0).Exact().is_stable());
  const auto poles = UnityFeedback(plant * 192.0).Exact().poles();
  REQUIRE(poles.size() == 3);
  CHECK(poles[0].real() == doctest::Approx(-9.0));
  CHECK(std::abs(poles[1] - Complex(0.0, -std::sqrt(23.0))) < 1e-9);
  CHECK(std::abs(poles[2] - Complex(0.0, std::sqrt(23.0))) < 1e-9);
}

TEST_CASE("unity feedback with dead time: exact evaluation, Padé only when asked") {
  const TransferFunction open({1.2}, {1.0, 0.9}, 0.6);
  const UnityFeedback loop(open);
  CHECK_FALSE(loop.is_rational());
  CHECK_THROWS_AS(loop.Exact(), UsageError);
  CHECK_THROWS_AS(loop.CharacteristicPolynomial(), UsageError);
  CHECK_THROWS_AS(loop.CharacteristicPolynomial(9), UsageError);
  CHECK_THROWS_AS(loop.WithPade(0), UsageError);

  for (double w : {0.0, 0.2, 1.0, 3.0}) {
    const Complex s(0.0, w);
    const Complex l = 1.2 / (s + 0.9) * std::exp(-0.6 * s);
    CAPTURE(w);
    CHECK(std::abs(loop(s) - l / (1.0 + l)) <= 1e-14 * std::max(1.0, std::abs(l / (1.0 + l))));
  }

  const TransferFunction approx = loop.WithPade(4);
  CHECK(approx.delay() == 0.0);
  CHECK(approx.den().degree() == 5);
  // Equal to closing the loop around the Padé-approximated open loop by hand.
  const TransferFunction l4 = ApplyPade(open, 4);
  const TransferFunction by_hand(l4.num(), l4.den() + l4.num());
  CHECK(approx.num() == by_hand.num());
  CHECK(approx.den() == by_hand.den());
  // The characteristic polynomial is the denominator up to its scale.
  const Polynomial ch = loop.CharacteristicPolynomial(4);
  CHECK(ch.degree() == 5);
  for (int k = 0; k <= 5; ++k) {
    CHECK(ch.coefficient(k) / ch.leading() == doctest::Approx(approx.den().coefficient(k)));
  }
  // At w T = 0.6 the fourth-order approximant is close to the exact closed loop.
  const Complex s(0.0, 1.0);
  CHECK(std::abs(approx(s) - loop(s)) < 1e-6);
}

}  // namespace
}  // namespace lw
