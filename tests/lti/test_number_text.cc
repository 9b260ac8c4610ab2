// lti/number_text.h: the "A:B" pairs of command-line options, each rule of the header's comment.
// The expected numbers are those the decimal texts denote (read by hand), not loopwright output.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <optional>
#include <string>
#include <utility>

#include "lti/number_text.h"

namespace lw {
namespace {

using Pair = std::optional<std::pair<double, double>>;
constexpr double kInf = std::numeric_limits<double>::infinity();

TEST_CASE("number pair: two decimal numbers around one colon") {
  CHECK(ParseNumberPair("0:100") == Pair({0.0, 100.0}));
  CHECK(ParseNumberPair("-2.5:+1e3") == Pair({-2.5, 1000.0}));
  CHECK(ParseNumberPair("150:170") == Pair({150.0, 170.0}));
  CHECK(ParseNumberPair("5:1") == Pair({5.0, 1.0}));  // the order is the caller's rule
  CHECK(ParseNumberPair("0.5:0.5") == Pair({0.5, 0.5}));
}

TEST_CASE("number pair: malformed texts give no pair") {
  for (const char* text : {"", ":", "1", "1:", ":2", "a:2", "1:b", "1:2x", " 1:2", "1: 2", "1:2:3",
                           "inf:1", "1:nan", "1e999:1", "+:1", "--1:2"}) {
    CAPTURE(std::string(text));
    CHECK_FALSE(ParseNumberPair(text).has_value());
  }
}

TEST_CASE("number pair: an empty side takes its given value, a NaN value keeps it malformed") {
  CHECK(ParseNumberPair(":20", -kInf, kInf) == Pair({-kInf, 20.0}));
  CHECK(ParseNumberPair("5:", -kInf, kInf) == Pair({5.0, kInf}));
  CHECK(ParseNumberPair(":", -kInf, kInf) == Pair({-kInf, kInf}));
  CHECK(ParseNumberPair("5:", 0.0) == std::nullopt);  // the second side has no value given
  CHECK(ParseNumberPair(":7", 0.0) == Pair({0.0, 7.0}));
  // A written infinity stays malformed even where an empty side would be infinite.
  CHECK_FALSE(ParseNumberPair("inf:5", -kInf, kInf).has_value());
}

}  // namespace
}  // namespace lw
