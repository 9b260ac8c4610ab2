// Min/max-per-column reduction (io/figure_reduce.h): the drawn envelope of the reduced trace must
// equal the envelope of the full trace in every pixel column, so no peak is lost.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "io/figure_reduce.h"
#include "lti/error.h"

namespace {

struct Envelope {
  std::vector<double> lo, hi;
};

Envelope EnvelopeOf(const std::vector<double>& x, const std::vector<double>& y, double x0,
                    double x1, int columns) {
  Envelope e{std::vector<double>(columns, INFINITY), std::vector<double>(columns, -INFINITY)};
  for (size_t i = 0; i < x.size(); ++i) {
    if (std::isnan(y[i])) continue;
    int b =
        std::clamp(static_cast<int>(std::floor((x[i] - x0) / (x1 - x0) * columns)), 0, columns - 1);
    e.lo[b] = std::min(e.lo[b], y[i]);
    e.hi[b] = std::max(e.hi[b], y[i]);
  }
  return e;
}

}  // namespace

TEST_CASE("a million samples reduce to at most two per column with every column's extremes") {
  const size_t n = 1000000;
  std::vector<double> t(n), y(n);
  for (size_t i = 0; i < n; ++i) {
    t[i] = 1e-3 * static_cast<double>(i);
    // A slow rise with a fast ripple whose peaks fall between any regular subsampling.
    y[i] = 1 - std::exp(-t[i] / 120.0) + 0.01 * std::sin(0.7 * static_cast<double>(i));
  }
  y[543217] = 5.0;  // one sample spike: an overshoot a naive decimation would drop
  y[12345] = -3.0;  // and one dip
  const int columns = 800;
  lw::ReducedTrace r = lw::ReduceForDrawing(t, y, t.front(), t.back(), columns);
  CHECK(r.x.size() <= 2 * columns + 2);
  CHECK(r.x.size() >= columns);
  CHECK(std::is_sorted(r.x.begin(), r.x.end()));
  CHECK(*std::max_element(r.y.begin(), r.y.end()) == 5.0);
  CHECK(*std::min_element(r.y.begin(), r.y.end()) == -3.0);
  CHECK(r.x.front() == t.front());
  CHECK(r.x.back() == t.back());
  Envelope full = EnvelopeOf(t, y, t.front(), t.back(), columns);
  Envelope red = EnvelopeOf(r.x, r.y, t.front(), t.back(), columns);
  for (int b = 0; b < columns; ++b) {
    CHECK(full.lo[b] == red.lo[b]);
    CHECK(full.hi[b] == red.hi[b]);
  }
}

TEST_CASE("a trace already sparse comes back unchanged") {
  std::vector<double> t = {0, 1, 2, 3, 4}, y = {0, 2, 1, 3, 2};
  lw::ReducedTrace r = lw::ReduceForDrawing(t, y, 0, 4, 10);
  CHECK(r.x == t);
  CHECK(r.y == y);
}

TEST_CASE("a NaN gap stays a gap") {
  std::vector<double> t(1000), y(1000);
  for (int i = 0; i < 1000; ++i) t[i] = i, y[i] = i % 7;
  y[500] = std::numeric_limits<double>::quiet_NaN();
  lw::ReducedTrace r = lw::ReduceForDrawing(t, y, 0, 999, 20);
  size_t nans = std::count_if(r.y.begin(), r.y.end(), [](double v) { return std::isnan(v); });
  CHECK(nans == 1);
  CHECK(r.x.size() < 100);
}

TEST_CASE("bad requests are usage errors") {
  std::vector<double> t = {0, 1}, y = {0};
  CHECK_THROWS_AS(lw::ReduceForDrawing(t, y, 0, 1, 10), lw::UsageError);
  y.push_back(1);
  CHECK_THROWS_AS(lw::ReduceForDrawing(t, y, 0, 1, 0), lw::UsageError);
  CHECK_THROWS_AS(lw::ReduceForDrawing(t, y, 1, 1, 10), lw::UsageError);
}
