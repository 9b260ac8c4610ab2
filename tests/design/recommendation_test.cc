// The recommendation rule of design/recommendation.h: the priority of the sets, the geometric
// middle of the widest range, and no recommendation for a band of [0, inf).
#include <cmath>
#include <limits>
#include <optional>

#include <doctest/doctest.h>

#include "design/recommendation.h"

namespace lw {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

TEST_CASE("Recommend takes the geometric middle of the widest range of the first non-empty set") {
  // Locus [0.2, 1.8] and response [0.3, 2.7]: they overlap in [0.3, 1.8], middle sqrt(0.54).
  Recommendation r = Recommend({{0.2, 1.8}}, {{0.3, 2.7}}, std::nullopt);
  REQUIRE(r.found);
  CHECK(r.source == "locus and response");
  CHECK(r.range.lo == doctest::Approx(0.3));
  CHECK(r.range.hi == doctest::Approx(1.8));
  CHECK(r.gain == doctest::Approx(std::sqrt(0.3 * 1.8)));
  // A robust band overlapping the response band comes first.
  r = Recommend({{0.2, 1.8}}, {{0.3, 2.7}}, GainSet{{0.5, 0.9}});
  REQUIRE(r.found);
  CHECK(r.source == "robust and response");
  CHECK(r.gain == doctest::Approx(std::sqrt(0.5 * 0.9)));
  // Of two ranges the one wider in decades wins: [0.1, 0.2] (0.30) against [1, 4] (0.60).
  r = Recommend({{0.1, 0.2}, {1.0, 4.0}}, {{0.1, 0.2}, {1.0, 4.0}}, std::nullopt);
  CHECK(r.gain == doctest::Approx(2.0));
  // Open ends: [0, hi] gives hi / sqrt(10), [lo, inf) gives lo sqrt(10).
  r = Recommend({{0.0, 0.7}}, {{0.0, 0.7}}, std::nullopt);
  CHECK(r.gain == doctest::Approx(0.7 / std::sqrt(10.0)));
  r = Recommend({{0.4, kInf}}, {{0.4, kInf}}, std::nullopt);
  CHECK(r.gain == doctest::Approx(0.4 * std::sqrt(10.0)));
}

TEST_CASE("Recommend stays inside the response band: the region bands alone never decide") {
  // A robust band that misses the response band: the overlap of locus and response comes next.
  Recommendation r = Recommend({{0.2, 2.5}}, {{2.0, 3.0}}, GainSet{{0.5, 0.9}});
  REQUIRE(r.found);
  CHECK(r.source == "locus and response");
  CHECK(r.set_name == "locus and response");
  CHECK(r.gain == doctest::Approx(std::sqrt(2.0 * 2.5)));
  // Neither region band meets the response band: its own middle.
  r = Recommend({{0.2, 1.8}}, {{2.0, 3.0}}, GainSet{{0.5, 0.9}});
  REQUIRE(r.found);
  CHECK(r.source == "response");
  CHECK(r.gain == doctest::Approx(std::sqrt(6.0)));
  // No simulated step meets the specs: nothing, whatever the region bands hold.
  r = Recommend({{91.0, 345.0}}, {}, GainSet{{93.0, 329.0}});
  CHECK_FALSE(r.found);
  CHECK(r.specs_unmet);
  CHECK_FALSE(r.unbounded);
  CHECK(r.reason.find("response band is empty") != std::string::npos);
  CHECK(r.set_name == "none");
  CHECK(r.set.empty());
  r = Recommend({{0.3, 0.8}}, {}, std::nullopt);
  CHECK_FALSE(r.found);
  CHECK(r.specs_unmet);
}

TEST_CASE("Recommend finds nothing to recommend in a band of [0, inf) or in no band") {
  // Every gain from 0 up meets the specs: the "middle" of [0, inf) would be K = 0 (no control).
  Recommendation r = Recommend({{0.0, kInf}}, {{0.0, kInf}}, std::nullopt);
  CHECK_FALSE(r.found);
  CHECK(r.gain == 0.0);
  CHECK(r.source.empty());
  CHECK(r.reason.find("[0, inf)") != std::string::npos);
  CHECK(r.unbounded);
  // The set it drew from is still named: a gain in use is judged on it (fit --band).
  CHECK(r.set_name == "locus and response");
  CHECK(r.set.size() == 1);
  // Same when the robust band is the unbounded one that would be chosen first.
  r = Recommend({{0.0, kInf}}, {{0.0, kInf}}, GainSet{{0.0, kInf}});
  CHECK_FALSE(r.found);
  r = Recommend({}, {}, std::nullopt);
  CHECK_FALSE(r.found);
}

// A digital controller sampled every T s: the sampled loop's response band takes the response
// band's place; when it is empty while the continuous one is not, nothing is recommended.
TEST_CASE("recommendation from the sampled response band") {
  Recommendation r = Recommend({{0.0, 0.77}}, {{0.0, 0.76}}, std::nullopt, GainSet{{0.0, 0.068}});
  REQUIRE(r.found);
  CHECK(r.gain == doctest::Approx(0.068 / std::sqrt(10.0)));
  CHECK(r.source == "locus and sampled response");
  CHECK(r.reason.find("locus and sampled response bands overlap") != std::string::npos);
  // Without it the same bands recommend a gain the sampled loop would not hold.
  CHECK(Recommend({{0.0, 0.77}}, {{0.0, 0.76}}, std::nullopt).gain > 0.068);
  // The sampled step meets the specs where the continuous one does not (a band of its own).
  Recommendation own = Recommend({{0.0, 0.77}}, {{0.3, 0.76}}, std::nullopt, GainSet{{0.0, 0.1}});
  REQUIRE(own.found);
  CHECK(own.gain == doctest::Approx(0.1 / std::sqrt(10.0)));
  Recommendation none = Recommend({{0.0, 0.77}}, {{0.3, 0.76}}, std::nullopt, GainSet{});
  CHECK_FALSE(none.found);
  CHECK(none.specs_unmet);
  CHECK(none.reason.find("no gain's sampled step meets the specs") != std::string::npos);
  CHECK(none.reason.find("[0.3, 0.76]") != std::string::npos);
}

}  // namespace
}  // namespace lw
