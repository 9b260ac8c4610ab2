// Timing for the benchmarks: the median over repeated calls (the upper median, the value at
// rank n / 2 of the sorted times), on the wall clock or the process's CPU clock, in seconds.
#ifndef LOOPWRIGHT_TESTS_BENCH_MEDIAN_TIME_H_
#define LOOPWRIGHT_TESTS_BENCH_MEDIAN_TIME_H_

#include <time.h>

#include <algorithm>
#include <chrono>
#include <vector>

namespace lw::bench {

// Seconds on the monotonic wall clock.
inline double WallSeconds() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

// CPU seconds this process has used (every thread).
inline double CpuSeconds() {
  timespec ts{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

// The median over `repeats` (>= 1) calls of f() of how far clock() advanced during the call.
template <class Clock, class F>
double MedianSeconds(int repeats, Clock&& clock, F&& f) {
  std::vector<double> s;
  for (int r = 0; r < std::max(1, repeats); ++r) {
    const double t0 = clock();
    f();
    s.push_back(clock() - t0);
  }
  std::sort(s.begin(), s.end());
  return s[s.size() / 2];
}

}  // namespace lw::bench

#endif  // LOOPWRIGHT_TESTS_BENCH_MEDIAN_TIME_H_
