// The plant formula parser: the header's examples, the grammar's corners, every error with its
// column and wording, and exact round trips through TransferFunction::ToString().
#include <doctest/doctest.h>

#include <cmath>
#include <iterator>
#include <random>
#include <string>
#include <vector>

#include "lti/plant_formula.h"

namespace lw {
namespace {

struct Failure {
  int column = 0;
  std::string message;
};

Failure Fails(const std::string& formula) {
  try {
    ParsePlantFormula(formula);
  } catch (const FormulaError& e) {
    return {e.column(), e.what()};
  }
  return {0, "(no error)"};
}

void CheckSame(const TransferFunction& a, const TransferFunction& b) {
  CHECK(a.num() == b.num());
  CHECK(a.den() == b.den());
  CHECK(a.delay() == b.delay());
}

void CheckCoefficients(const Polynomial& p, const std::vector<double>& expected) {
  REQUIRE(p.degree() == static_cast<int>(expected.size()) - 1);
  for (size_t i = 0; i < expected.size(); ++i) {
    CAPTURE(i);
    CHECK(p.coefficients()[i] == doctest::Approx(expected[i]).epsilon(1e-14));
  }
}

TEST_CASE("the header's three examples") {
  SUBCASE("first-order lags with dead time") {
    const TransferFunction g = ParsePlantFormula("2.5*exp(-0.3*s)/((4*s+1)*(0.6*s+1))");
    // (4 s + 1)(0.6 s + 1) = 2.4 s^2 + 4.6 s + 1, made monic.
    CheckCoefficients(g.num(), {2.5 / 2.4});
    CheckCoefficients(g.den(), {1.0, 4.6 / 2.4, 1.0 / 2.4});
    CHECK(g.delay() == 0.3);
    CHECK(g.dc_gain() == doctest::Approx(2.5));
  }
  SUBCASE("integrator and two lags") {
    const TransferFunction g = ParsePlantFormula("1/(s*(s+1)*(s+2))");
    CHECK(g.num() == Polynomial::Constant(1.0));
    CHECK(g.den() == Polynomial({1.0, 3.0, 2.0, 0.0}));
    CHECK(g.delay() == 0.0);
    CHECK(g.integrators() == 1);
  }
  SUBCASE("second order") {
    const TransferFunction g = ParsePlantFormula("9/(s^2+1.2*s+9)");
    CHECK(g.num() == Polynomial::Constant(9.0));
    CHECK(g.den() == Polynomial({1.0, 1.2, 9.0}));
  }
}

TEST_CASE("formula grammar") {
  CHECK(ParsePlantFormula("exp(-s*0.25)*3/(s+1)").delay() == 0.25);
  CHECK(ParsePlantFormula("exp(-s)/(s+1)").delay() == 1.0);
  CHECK(ParsePlantFormula("exp(-0*s)/(s+1)").delay() == 0.0);
  CHECK(ParsePlantFormula("exp(-0.4*s)").delay() == 0.4);
  CheckSame(ParsePlantFormula("(s+1)*exp(-0.5*s)*(s+2)"),
            TransferFunction({1.0, 3.0, 2.0}, {1.0}, 0.5));
  CheckSame(ParsePlantFormula(" exp ( - 0.5 * s ) * ( s + 1 ) "),
            TransferFunction({1.0, 1.0}, {1.0}, 0.5));
  CheckSame(ParsePlantFormula("-(s-2)/(s+2)^2"), TransferFunction({-1.0, 2.0}, {1.0, 4.0, 4.0}));
  CheckSame(ParsePlantFormula("-s^2"), TransferFunction({-1.0, 0.0, 0.0}, {1.0}));
  CheckSame(ParsePlantFormula("2*-s"), TransferFunction({-2.0, 0.0}, {1.0}));
  CheckSame(ParsePlantFormula("+s"), TransferFunction({1.0, 0.0}, {1.0}));
  CheckSame(ParsePlantFormula("((s+1)^0)"), TransferFunction());
  CheckSame(ParsePlantFormula(" 1e-3 * s + 2E1 "), TransferFunction({0.001, 20.0}, {1.0}));
  CheckSame(ParsePlantFormula(".5/(2.*s+1)"), TransferFunction({0.25}, {1.0, 0.5}));
  // No pole-zero cancellation.
  CheckSame(ParsePlantFormula("s/s"), TransferFunction({1.0, 0.0}, {1.0, 0.0}));
  // Rational arithmetic: 1/(s+1) + 1/(s+2) = (2 s + 3) / (s^2 + 3 s + 2).
  CheckSame(ParsePlantFormula("1/(s+1) + 1/(s+2)"), TransferFunction({2.0, 3.0}, {1.0, 3.0, 2.0}));
  // 1 / (1 / (s + 3)) = s + 3; a / b / c = (a / b) / c.
  CheckSame(ParsePlantFormula("1/(1/(s+3))"), TransferFunction({1.0, 3.0}, {1.0}));
  CheckSame(ParsePlantFormula("8/2/s"), TransferFunction({4.0}, {1.0, 0.0}));
  // A sum that vanishes is the zero transfer function, not an error.
  CHECK(ParsePlantFormula("1/(s+1) - 1/(s+1)").num().is_zero());
  // (s + 1)^3 expanded.
  CheckSame(ParsePlantFormula("(s+1)^3"), TransferFunction({1.0, 3.0, 3.0, 1.0}, {1.0}));
}

TEST_CASE("formula errors name the column and what was expected") {
  struct Case {
    const char* formula;
    int column;
    const char* message;
  };
  const Case cases[] = {
      {"", 1, "expected a number, s, '(' or exp(-T*s), found end of formula"},
      {"   ", 4, "expected a number, s, '(' or exp(-T*s), found end of formula"},
      {"s*", 3, "expected a number, s, '(' or exp(-T*s), found end of formula"},
      {"(4*s+1", 7, "expected ')' after '(4*s+1', found end of formula"},
      {"2.5/((4*s+1)*(0.6*s+1)", 23,
       "expected ')' after '((4*s+1)*(0.6*s+1)', found end of formula"},
      {"q*s", 1, "unknown name 'q': the variable is s"},
      {"1/(x+1)", 4, "unknown name 'x': the variable is s"},
      {"1/(S+1)", 4, "unknown name 'S': the variable is s"},
      {"exp(-0.2*s)*exp(-0.1*s)", 13,
       "a second dead-time factor exp(...); at most one is allowed, so write the whole dead time "
       "in one exp(-T*s)"},
      {"exp(0.3*s)/(s+1)", 1,
       "exp(...) has a positive exponent, which would be a negative dead time; a dead time is "
       "written exp(-T*s) with T >= 0"},
      {"exp(s)", 1,
       "exp(...) has a positive exponent, which would be a negative dead time; a dead time is "
       "written exp(-T*s) with T >= 0"},
      {"1/exp(-0.5*s)", 3,
       "the dead-time factor exp(...) stands in a denominator, which would mean a negative dead "
       "time; write it in the numerator"},
      {"(s+1)/(exp(-s)*(s+2))", 8,
       "the dead-time factor exp(...) stands in a denominator, which would mean a negative dead "
       "time; write it in the numerator"},
      {"1 + exp(-s)", 5,
       "the dead-time factor exp(...) must multiply the whole formula, but here it is part of a "
       "sum"},
      {"(2*exp(-s))^2", 12,
       "the dead-time factor exp(...) cannot be raised to a power; write one exp(-T*s) with the "
       "whole dead time T"},
      {"1/(s-s)", 2, "division by zero (the divisor is identically 0)"},
      {"s^2.5", 3, "the power must be a non-negative integer, found '2.5'"},
      {"s^-1", 3, "expected a non-negative integer power after '^', found '-'"},
      {"s^", 3, "expected a non-negative integer power after '^', found end of formula"},
      {"s^1000", 3, "the power 1000 is too large; at most 100 is allowed"},
      {"s^2^3", 4, "a power cannot itself be raised to a power; use parentheses, e.g. '(s^2)^2'"},
      {"1/(s+1))", 8, "unmatched ')'; there is no '(' before it"},
      {"1/(s+1) 2", 9, "expected an operator (+ - * / ^) or end of formula, found '2'"},
      {"2s", 2, "expected an operator (+ - * / ^) or end of formula, found 's'"},
      {"2 exp(-s)", 3, "expected an operator (+ - * / ^) or end of formula, found 'exp'"},
      {"1e", 3, "expected digits in the exponent of '1e', found end of formula"},
      {"1e+/s", 3, "expected digits in the exponent of '1e', found '+'"},
      {"1e999", 1, "the number '1e999' is out of range"},
      {".", 1, "expected a number, found '.'"},
      {"exp", 4, "expected '(' after 'exp', found end of formula"},
      {"exp-s", 4, "expected '(' after 'exp', found '-'"},
      {"exp(-0.3 s)", 10, "expected '*' after the dead time in exp(-T*s), found 's'"},
      {"exp(-0.3*q)", 10, "expected s after '*' in exp(-T*s), found 'q'"},
      {"exp(-t*s)", 6, "expected s or a number in exp(-T*s), found 't'"},
      {"exp(-s*)", 8, "expected the dead time after 's*' in exp(-s*T), found ')'"},
      {"exp(-2*s", 9, "expected ')' to close exp(-T*s), found end of formula"},
      {"exp(-(s))", 6, "expected the exponent -T*s (T >= 0 in seconds) inside exp(...), found '('"},
      {"1/(s+1)\x01", 8, "expected an operator (+ - * / ^) or end of formula, found the byte 0x01"},
  };
  for (const Case& c : cases) {
    CAPTURE(c.formula);
    const Failure f = Fails(c.formula);
    CHECK(f.column == c.column);
    CHECK(f.message ==
          "plant formula, column " + std::to_string(c.column) + ": " + std::string(c.message));
  }
  // Limits that keep hostile input cheap.
  const Failure deep = Fails(std::string(250, '(') + "s" + std::string(250, ')'));
  CHECK(deep.column == 201);
  CHECK(deep.message ==
        "plant formula, column 201: the formula nests more than 200 levels of parentheses and "
        "signs");
  CHECK(Fails(std::string(300, '-') + "s").column == 201);
  CHECK(ParsePlantFormula(std::string(150, '(') + "s" + std::string(150, ')')).num() ==
        Polynomial({1.0, 0.0}));
  CHECK(ParsePlantFormula(std::string(150, '-') + "s").num() == Polynomial({1.0, 0.0}));
  const Failure product = Fails("s^64*s^64");
  CHECK(product.column == 5);
  CHECK(product.message ==
        "plant formula, column 5: the formula reaches degree 128 in s; at most 100 is supported");
  CHECK(Fails("((s^10)^20)").column == 8);
  CHECK(Fails("((s^10)^20)").message.find("degree 200") != std::string::npos);
  CHECK(Fails("1/s^64 + 1/(s+1)^64").column == 8);
  CHECK(ParsePlantFormula("1/(s+1)^50 * s^50").den().degree() == 50);

  // Every formula error is a usage error (exit status 2).
  CHECK_THROWS_AS(ParsePlantFormula("s+"), UsageError);
  CHECK(Fails("1e300*1e300/s").message.find("overflow") != std::string::npos);
  CHECK(Fails("1e300/(1e-300*s+1)").message ==
        "plant formula, column 1: the coefficients overflow when the denominator is scaled to "
        "leading coefficient 1");
}

TEST_CASE("TransferFunction::ToString parses back to the same transfer function") {
  const TransferFunction examples[] = {
      TransferFunction({0.5, 2.0}, {1.0, 0.8, 3.0}, 0.35),
      TransferFunction({4.0}, {1.0, 0.0}),
      TransferFunction({-1.0, 2.0}, {3.0, 12.0, 12.0}),
      TransferFunction({1.0 / 3.0, 0.0, -1e-7}, {7.0, 0.1, 0.0, 0.0}, 0.123456789),
      TransferFunction({0.0}, {1.0, 1.0}),
      TransferFunction({1.0, 1.0}, {1.0}, 2.0),
      TransferFunction({-2.0}, {1.0, 0.0, 0.0}, 1e-3),
      TransferFunction({1e20, 1.0}, {1.0, 1e-20}),
  };
  for (const TransferFunction& g : examples) {
    CAPTURE(g.ToString());
    CheckSame(ParsePlantFormula(g.ToString()), g);
  }
  // Random coefficients over twelve decades, fixed seed.
  std::mt19937 rng(20261201);
  std::uniform_real_distribution<double> mantissa(-9.99, 9.99);
  std::uniform_int_distribution<int> decade(-6, 6), degree(0, 5), zero(0, 4);
  auto random_poly = [&](int n) {
    std::vector<double> c(static_cast<size_t>(n) + 1);
    for (double& v : c) v = zero(rng) == 0 ? 0.0 : mantissa(rng) * std::pow(10.0, decade(rng));
    c[0] = c[0] == 0.0 ? 1.5 : c[0];
    return c;
  };
  for (int trial = 0; trial < 200; ++trial) {
    const double delay = zero(rng) == 0 ? 0.0 : std::abs(mantissa(rng)) * 0.1;
    const TransferFunction g(random_poly(degree(rng)), random_poly(degree(rng)), delay);
    CAPTURE(g.ToString());
    CheckSame(ParsePlantFormula(g.ToString()), g);
  }
}

TEST_CASE("random token soup: a transfer function or one FormulaError, never anything else") {
  // Fixed seed; pieces of the grammar glued at random, plus raw bytes now and then.
  const char* pieces[] = {"s",           "exp",   "(",    ")", "+",  "-",     "*",     "/", "^",
                          "2",           "0.5",   "1e-3", "e", "1e", ".",     " ",     "q", "-",
                          "exp(-0.2*s)", "(s+1)", "^2",   "0", "s^", "1e300", "1e-300"};
  std::mt19937 rng(7321);
  std::uniform_int_distribution<size_t> pick(0, std::size(pieces) - 1), length(0, 14);
  std::uniform_int_distribution<int> byte(0, 255), coin(0, 19);
  int parsed = 0, refused = 0;
  for (int trial = 0; trial < 5000; ++trial) {
    std::string text;
    const size_t n = length(rng);
    for (size_t i = 0; i < n; ++i) {
      if (coin(rng) == 0) {
        text.push_back(static_cast<char>(byte(rng)));
      } else {
        text += pieces[pick(rng)];
      }
    }
    CAPTURE(text);
    try {
      const TransferFunction g = ParsePlantFormula(text);
      CHECK_FALSE(g.den().is_zero());
      CHECK(g.delay() >= 0.0);
      ++parsed;
    } catch (const FormulaError& e) {
      CHECK(e.column() >= 1);
      CHECK(e.column() <= static_cast<int>(text.size()) + 1);
      const std::string prefix = "plant formula, column " + std::to_string(e.column()) + ": ";
      CHECK(std::string(e.what()).rfind(prefix, 0) == 0);
      ++refused;
    }
  }
  // Both outcomes occur, so the soup exercises the parser rather than one early error.
  CHECK(parsed > 50);
  CHECK(refused > 50);
}

}  // namespace
}  // namespace lw

TEST_CASE("plant formula: a text form with a power above 64 reads back (fuzz regression)") {
  // Found by fuzz_smoke: 9/s^58 + s^9 prints as (s^67 + 9)/s^58, which must parse again.
  for (const char* formula : {"9/s^58+(s^9)", "8/(8/(s)^8/s)^8/39"}) {
    const lw::TransferFunction g = lw::ParsePlantFormula(formula);
    const lw::TransferFunction back = lw::ParsePlantFormula(g.ToString());
    CHECK(back.num() == g.num());
    CHECK(back.den() == g.den());
  }
}
