// The readable model line (identify/model_text.h) and the parameter-change test
// (identify/parameter_change.h). The significance rule is the two-sample z test (Montgomery &
// Runger, Applied Statistics and Probability for Engineers, ch. 10; from memory); the expected
// numbers below are worked by hand from that formula.
#include <doctest/doctest.h>

#include <cmath>
#include <vector>

#include "identify/model_text.h"
#include "identify/parameter_change.h"
#include "lti/error.h"

TEST_CASE("factored model text for every structure") {
  using lw::Structure;
  std::vector<double> sopdt = {2.6123, 239.4, 45.17, 37.92};
  CHECK(lw::FactoredModelText(Structure::kSopdt, sopdt) ==
        "2.61 exp(-37.9 s) / ((239 s + 1)(45.2 s + 1))");
  std::vector<double> fopdt = {0.021, 0.85, 0.12};
  CHECK(lw::FactoredModelText(Structure::kFopdt, fopdt) == "0.021 exp(-0.12 s) / (0.85 s + 1)");
  // zeta 0.3, wn 0.5: s^2 / 0.25 + 2 (0.3) s / 0.5 + 1 = 4 s^2 + 1.2 s + 1.
  std::vector<double> under = {1.5, 0.3, 0.5, 2.0};
  CHECK(lw::FactoredModelText(Structure::kUnderdamped, under) ==
        "1.5 exp(-2 s) / (4 s^2 + 1.2 s + 1)");
  std::vector<double> integ = {0.05, 6.0, 2.5};
  CHECK(lw::FactoredModelText(Structure::kIntegrating, integ) ==
        "0.05 exp(-2.5 s) / (s (6 s + 1))");
  std::vector<double> zero = {2.0, 10.0, 2.0, -3.0, 0.0};
  CHECK(lw::FactoredModelText(Structure::kSopdtZero, zero) ==
        "2 (-3 s + 1) / ((10 s + 1)(2 s + 1))");
  CHECK_THROWS_AS(lw::FactoredModelText(Structure::kFopdt, sopdt), lw::UsageError);
}

TEST_CASE("parameter change: two-sample z test") {
  lw::EstimateSummary before{"time_constant", "s", 240.0, 6.0};
  lw::EstimateSummary after{"time_constant", "s", 312.0, 8.0};
  lw::ParameterChange c = lw::CompareEstimate(before, after);
  // z = 72 / sqrt(36 + 64) = 7.2
  CHECK(c.change == doctest::Approx(72.0));
  CHECK(c.change_percent == doctest::Approx(30.0));
  CHECK(c.z == doctest::Approx(7.2));
  REQUIRE(c.significant.has_value());
  CHECK(*c.significant);
  // z = 1.5 / sqrt(0.5^2 + 0.6^2) = 1.92: just inside 1.96, not significant.
  lw::ParameterChange small = lw::CompareEstimate({"gain", "", 2.6, 0.5}, {"gain", "", 4.1, 0.6});
  CHECK(small.z == doctest::Approx(1.5 / std::sqrt(0.61)));
  CHECK_FALSE(*small.significant);
  // Unknown se: unknown significance.
  lw::ParameterChange unknown = lw::CompareEstimate({"gain", "", 2.6}, {"gain", "", 2.4, 0.1});
  CHECK_FALSE(unknown.significant.has_value());
  // se from a 95 % interval [1.9, 2.3]: 0.4 / 3.92.
  CHECK(lw::StandardErrorFromInterval(1.9, 2.3) == doctest::Approx(0.4 / 3.92));
  CHECK(std::isnan(lw::StandardErrorFromInterval(NAN, 2.3)));
}

TEST_CASE("parameter change: matching by name across structures") {
  std::vector<lw::EstimateSummary> before = {
      {"gain", "", 2.0, 0.1}, {"time_constant", "s", 10, 1}, {"dead_time", "s", 1, 0.1}};
  std::vector<lw::EstimateSummary> after = {{"gain", "", 2.1, 0.1},
                                            {"time_constant_1", "s", 10, 1},
                                            {"time_constant_2", "s", 2, 1},
                                            {"dead_time", "s", 1.5, 0.1}};
  std::vector<std::string> ob, oa;
  auto changes = lw::CompareEstimates(before, after, ob, oa);
  REQUIRE(changes.size() == 2);
  CHECK(changes[0].name == "gain");
  CHECK(changes[1].name == "dead_time");
  CHECK(*changes[1].significant);  // 0.5 / sqrt(0.02) = 3.5
  CHECK(ob == std::vector<std::string>{"time_constant"});
  CHECK(oa == std::vector<std::string>{"time_constant_1", "time_constant_2"});
}
