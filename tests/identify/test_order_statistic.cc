// RankValue (identify/order_statistic.h) and DifferenceNoiseSd (identify/step_detection.h)
// against the plain computation from the C++ standard library: a copy of the series and
// std::nth_element, which the header promises to match exactly (the same element, not an
// approximation). Series long enough for the sampled bracket, and for its second round on a
// long bracket, with ties (quantised data, a held input) and arrangements against the sample.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <random>
#include <vector>

#include "identify/order_statistic.h"
#include "identify/step_detection.h"

namespace {

double Direct(std::vector<double> v, size_t k) {
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
  return v[k];
}

double DirectNoiseSd(const std::vector<double>& x) {
  std::vector<double> d(x.size() - 1);
  for (size_t i = 0; i + 1 < x.size(); ++i) d[i] = x[i + 1] - x[i];
  const double med = Direct(d, d.size() / 2);
  for (double& v : d) v = std::abs(v - med);
  return 1.4826 * Direct(d, d.size() / 2) / std::sqrt(2.0);
}

void CheckRanks(const std::vector<double>& v) {
  const size_t n = v.size();
  for (size_t k : {size_t{0}, n / 100, n / 4, n / 2 - 1, n / 2, n / 2 + 1, 3 * n / 4, n - 1}) {
    CAPTURE(n);
    CAPTURE(k);
    CHECK(lw::RankValue(n, k, [&](size_t i) { return v[i]; }) == Direct(v, k));
  }
}

}  // namespace

TEST_CASE("RankValue is the element std::nth_element selects") {
  std::mt19937_64 gen(7);
  std::normal_distribution<double> normal(0.0, 1.0);
  for (size_t n : {size_t{5}, size_t{1000}, size_t{9000}, size_t{100000}, size_t{300000}}) {
    std::vector<double> v(n);
    SUBCASE("white noise") {
      for (double& x : v) x = normal(gen);
      CheckRanks(v);
    }
    SUBCASE("quantised to a few levels (long tie blocks at the answer)") {
      for (double& x : v) x = std::round(3.0 * normal(gen)) / 4.0;
      CheckRanks(v);
    }
    SUBCASE("sorted, and sorted backwards") {
      for (size_t i = 0; i < n; ++i) v[i] = static_cast<double>(i % 977) + 1e-3 * i;
      std::sort(v.begin(), v.end());
      CheckRanks(v);
      std::reverse(v.begin(), v.end());
      CheckRanks(v);
    }
    SUBCASE("arranged against the evenly spaced sample") {
      // The sampled positions hold large values, every other position a small one.
      for (size_t i = 0; i < n; ++i) v[i] = normal(gen);
      constexpr size_t kSample = 1024;
      for (size_t j = 0; j < kSample && n > 8 * kSample; ++j)
        v[(2 * j + 1) * n / (2 * kSample)] = 1e6 + j;
      CheckRanks(v);
    }
  }
}

TEST_CASE("DifferenceNoiseSd equals the median absolute deviation of the differences") {
  std::mt19937_64 gen(11);
  std::normal_distribution<double> normal(0.0, 0.3);
  for (size_t n : {size_t{50}, size_t{5000}, size_t{200000}}) {
    CAPTURE(n);
    std::vector<double> y(n);
    for (size_t i = 0; i < n; ++i) y[i] = 2.0 + (i > n / 3 ? 1.5 : 0.0) + normal(gen);
    CHECK(lw::DifferenceNoiseSd(y) == DirectNoiseSd(y));
    // White noise of sd s has differences of sd s sqrt(2): the estimate is near 0.3.
    if (n >= 5000) CHECK(lw::DifferenceNoiseSd(y) == doctest::Approx(0.3).epsilon(0.05));
    // A held (stepped) input: more than half the differences are zero, so the estimate is 0,
    // whether or not the evenly spaced probe happens to see the repeats.
    std::vector<double> held(n, 0.0);
    for (size_t i = n / 3; i < n; ++i) held[i] = 1.0;
    CHECK(lw::DifferenceNoiseSd(held) == 0.0);
    CHECK(DirectNoiseSd(held) == 0.0);
    // Repeats everywhere except where the probe of 256 evenly spaced differences looks: the
    // probe sees none and the medians are computed, and are zero all the same.
    std::vector<bool> probed(n, false);
    for (size_t j = 0; j < 256; ++j) probed[(2 * j + 1) * (n - 1) / 512] = true;
    std::vector<double> sly(n);
    sly[0] = normal(gen);
    for (size_t i = 0; i + 1 < n; ++i) sly[i + 1] = probed[i] ? sly[i] + normal(gen) : sly[i];
    CHECK(lw::DifferenceNoiseSd(sly) == DirectNoiseSd(sly));
    if (n > 1024) CHECK(DirectNoiseSd(sly) == 0.0);
  }
}
