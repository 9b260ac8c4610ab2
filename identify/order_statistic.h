// Exact order statistics of long series without sorting or copying them whole.
//
// RankValue(n, k, value) returns the k-th smallest (0-based) of value(0), ..., value(n - 1),
// exactly the element std::nth_element would put at position k, and Median is rank n / 2 (the
// upper median, as the fits have always used). Method (Floyd and Rivest's selection by
// sampling, 1975; from memory): an evenly spaced sample of the series is sorted, two of its
// values bracket rank k with a margin of 3.5 standard deviations of a sample rank, and one pass
// counts the values below and at the bracket and keeps only those strictly inside it, whose own
// nth_element gives the answer (or, when they are still many, the same selection again). When the
// bracket misses (a series arranged against the evenly spaced sample) the whole series is selected
// directly, so the result is exact either way; the cost is one pass and a small selection instead
// of a copy of the series and a full selection. Values must not be NaN.
#ifndef LOOPWRIGHT_IDENTIFY_ORDER_STATISTIC_H_
#define LOOPWRIGHT_IDENTIFY_ORDER_STATISTIC_H_

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <memory>
#include <span>
#include <utility>
#include <vector>

namespace lw {
namespace detail {
// The k-th smallest of p[0..n), by RankValue (one instantiation for every buffer).
inline double RankOfBuffer(const double* p, size_t n, size_t k);
}  // namespace detail

// The k-th smallest of value(i), i < n (k < n; 0 for n == 0).
template <typename Value>
double RankValue(size_t n, size_t k, Value&& value) {
  if (n == 0) return 0.0;
  auto direct = [&] {
    std::vector<double> all(n);
    for (size_t i = 0; i < n; ++i) all[i] = value(i);
    std::nth_element(all.begin(), all.begin() + static_cast<std::ptrdiff_t>(k), all.end());
    return all[k];
  };
  constexpr size_t kSample = 1024;
  if (n <= 8 * kSample) return direct();
  std::vector<double> sample(kSample);
  for (size_t j = 0; j < kSample; ++j) sample[j] = value((2 * j + 1) * n / (2 * kSample));
  std::sort(sample.begin(), sample.end());
  const double at = static_cast<double>(k) / static_cast<double>(n) * kSample;
  const double margin = 3.5 * std::sqrt(at * (1.0 - at / kSample)) + 2.0;
  const long lo_rank = static_cast<long>(std::floor(at - margin));
  const long hi_rank = static_cast<long>(std::ceil(at + margin));
  constexpr double kInf = std::numeric_limits<double>::infinity();
  const double lo = lo_rank < 0 ? -kInf : sample[static_cast<size_t>(lo_rank)];
  const double hi =
      hi_rank >= static_cast<long>(kSample) ? kInf : sample[static_cast<size_t>(hi_rank)];
  // Branch-free counting: every value is written to the buffer and kept only when inside.
  const size_t cap = static_cast<size_t>(4.0 * (2.0 * margin + 1.0) / kSample * n) + 64;
  std::unique_ptr<double[]> inside(
      new double[cap + 1]);  // not cleared: only written slots are read
  size_t below = 0, at_lo = 0, at_hi = 0, kept = 0;
  for (size_t i = 0; i < n; ++i) {
    const double x = value(i);
    below += x < lo;
    at_lo += x == lo;
    at_hi += (x == hi) & (lo != hi);
    inside[kept] = x;
    kept += (lo < x) & (x < hi);
    if (kept == cap) return direct();
  }
  if (k < below) return direct();
  size_t r = k - below;
  if (r < at_lo) return lo;
  r -= at_lo;
  if (r < kept) {
    // A long bracket (a long series keeps about a tenth of itself) is selected the same way.
    if (kept > 8 * kSample) return detail::RankOfBuffer(inside.get(), kept, r);
    std::nth_element(inside.get(), inside.get() + r, inside.get() + kept);
    return inside[r];
  }
  r -= kept;
  if (r < at_hi) return hi;
  return direct();
}

namespace detail {
inline double RankOfBuffer(const double* p, size_t n, size_t k) {
  return RankValue(n, k, [p](size_t i) { return p[i]; });
}
}  // namespace detail

// Rank n / 2 of value(i), i < n.
template <typename Value>
double MedianOf(size_t n, Value&& value) {
  return RankValue(n, n / 2, std::forward<Value>(value));
}

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_ORDER_STATISTIC_H_
