#include "io/figure_reduce.h"

#include <algorithm>
#include <cmath>
#include <string>

#include "lti/error.h"

namespace lw {

ReducedTrace ReduceForDrawing(const std::vector<double>& x, const std::vector<double>& y,
                              double x_lo, double x_hi, int columns) {
  if (x.size() != y.size())
    throw UsageError("ReduceForDrawing: x has " + std::to_string(x.size()) + " samples but y has " +
                     std::to_string(y.size()));
  if (columns < 1) throw UsageError("ReduceForDrawing: columns must be >= 1");
  if (!(x_lo < x_hi)) throw UsageError("ReduceForDrawing: the x range must have x_lo < x_hi");
  ReducedTrace out;
  const size_t n = x.size();
  if (n <= 2 * static_cast<size_t>(columns) + 2) {
    out.x = x;
    out.y = y;
    return out;
  }
  out.x.reserve(4 * static_cast<size_t>(columns) + 4);
  out.y.reserve(out.x.capacity());
  auto keep = [&](size_t i) {
    out.x.push_back(x[i]);
    out.y.push_back(y[i]);
  };
  const double scale = columns / (x_hi - x_lo);
  auto bin_of = [&](double xi) {
    double b = std::floor((xi - x_lo) * scale);
    return static_cast<long>(std::clamp(b, 0.0, static_cast<double>(columns - 1)));
  };
  // One bin's run [begin, end) of finite samples: emit its min and max in index order.
  auto flush = [&](size_t begin, size_t end) {
    if (begin >= end) return;
    size_t lo = begin, hi = begin;
    for (size_t i = begin + 1; i < end; ++i) {
      if (y[i] < y[lo]) lo = i;
      if (y[i] > y[hi]) hi = i;
    }
    size_t a = std::min(lo, hi), b = std::max(lo, hi);
    if (begin == 0 && a != 0) keep(0);
    keep(a);
    if (b != a) keep(b);
    if (end == n && b != n - 1) keep(n - 1);
  };
  size_t run = 0;
  long run_bin = std::isnan(y[0]) ? -1 : bin_of(x[0]);
  for (size_t i = 0; i < n; ++i) {
    if (std::isnan(y[i]) || std::isnan(x[i])) {
      flush(run, i);
      keep(i);
      run = i + 1;
      run_bin = -1;
      continue;
    }
    long b = bin_of(x[i]);
    if (run_bin < 0) {
      run_bin = b;
    } else if (b != run_bin) {
      flush(run, i);
      run = i;
      run_bin = b;
    }
  }
  flush(run, n);
  return out;
}

}  // namespace lw
