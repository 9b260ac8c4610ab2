// Benchmark: simulation of 10^6 samples of a 4th-order model with a fractional dead time
// (target <= 20 ms). Medians of 9 runs, printed as a table beside two references measured in
// the same process: writing 10^6 doubles (the memory floor) and a naive loop over the same
// discrete recursion with dynamic-size Eigen objects. Never fails on timing.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <functional>
#include <vector>

#include "lti/controller.h"
#include "lti/input_signal.h"
#include "lti/simulate.h"
#include "lti/state_space.h"
#include "lti/zoh.h"

namespace {

// Thread CPU time in ms: on a shared machine the wall clock also counts time spent waiting for
// a core, so both are reported.
double CpuMs() {
  timespec ts{};
  clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
  return ts.tv_sec * 1e3 + ts.tv_nsec * 1e-6;
}

struct Timing {
  double wall_ms, cpu_ms, cpu_min_ms;
};

Timing Median(int runs, const std::function<void()>& f) {
  std::vector<double> wall, cpu;
  for (int i = 0; i < runs; ++i) {
    const auto t0 = std::chrono::steady_clock::now();
    const double c0 = CpuMs();
    f();
    cpu.push_back(CpuMs() - c0);
    wall.push_back(
        std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count());
  }
  std::sort(wall.begin(), wall.end());
  std::sort(cpu.begin(), cpu.end());
  return {wall[wall.size() / 2], cpu[cpu.size() / 2], cpu.front()};
}

void Row(const char* name, Timing t, Timing base) {
  std::printf("%-46s %10.3f %10.3f %10.3f %8.2f\n", name, t.wall_ms, t.cpu_ms, t.cpu_min_ms,
              t.cpu_ms / base.cpu_ms);
}

}  // namespace

int main() {
  constexpr int kRuns = 9;
  constexpr size_t kSamples = 1000000;
  // 2.4 (0.5 s + 1) / ((s + 1)(0.4 s + 1)(0.01 s^2 + 0.12 s + 1)) exp(-0.01237 s), 1 kHz.
  const lw::Polynomial den =
      lw::Polynomial({1.0, 1.0}) * lw::Polynomial({0.4, 1.0}) * lw::Polynomial({0.01, 0.12, 1.0});
  const lw::TransferFunction g(lw::Polynomial({1.2, 2.4}), den, 0.01237);
  const std::vector<double> t = lw::UniformGrid(1000.0, (kSamples - 1) / 1000.0);
  const std::vector<double> u = lw::InputSignal::Parse("prbs:-1:1:0.05").Sample(t, 3);

  std::vector<double> y;
  const Timing simulate = Median(kRuns, [&] { y = lw::Simulate(g, t, u); });

  std::vector<double> out(kSamples);
  const Timing write = Median(kRuns, [&] {
    std::vector<double> fresh(kSamples);
    for (size_t k = 0; k < kSamples; ++k) fresh[k] = u[k];
    out.swap(fresh);
  });

  // The same recursion, written plainly with dynamic-size Eigen objects.
  const lw::SampledStateSpace s = lw::SampleZoh(lw::Realize(g), 1e-3, g.delay());
  std::vector<double> naive;
  const Timing naive_run = Median(kRuns, [&] {
    std::vector<double> yy(kSamples);
    const lw::StateSpace ss = lw::Realize(g);
    Eigen::VectorXd x = lw::SteadyState(ss, u[0]);
    const long m = s.whole_delay, lag = s.output_lag();
    for (long k = 0; k < static_cast<long>(kSamples); ++k) {
      const auto at = [&](long j) { return j < 0 ? u[0] : u[j]; };
      yy[k] = s.c.dot(x) + s.d * at(k - lag);
      x = s.phi * x + s.gamma_late * at(k - m) + s.gamma_early * at(k - m - 1);
    }
    naive.swap(yy);
  });
  double diff = 0.0;
  for (size_t k = 0; k < kSamples; ++k) diff = std::max(diff, std::abs(naive[k] - y[k]));

  // For information: a closed loop (PI) with the dead time in the loop, 10^5 samples.
  const std::vector<double> tc(t.begin(), t.begin() + 100000);
  const std::vector<double> rc = lw::InputSignal::Parse("step:0:1:1,step:1:0.5:50").Sample(tc);
  const lw::Controller pi = lw::Controller::Parse("pi:1.5");
  lw::ClosedLoopResponse cl;
  const Timing closed = Median(3, [&] { cl = lw::SimulateClosedLoop(g, pi, 0.3, tc, rc); });

  std::printf("bench_simulate: 4th-order model, dead time 12.37 samples, 10^6 samples at 1 kHz\n");
  std::printf("%-46s %10s %10s %10s %8s\n", "run (median of 9; min)", "wall ms", "cpu ms",
              "cpu min", "ratio");
  Row("lw::Simulate (target <= 20 ms)", simulate, simulate);
  Row("write 10^6 doubles (memory floor)", write, simulate);
  Row("naive dynamic-size Eigen recursion", naive_run, simulate);
  Row("closed loop PI, dead time, 10^5 samples (of 3)", closed, simulate);
  std::printf("ratio = median cpu ms / median cpu ms of lw::Simulate\n");
  std::printf("naive vs Simulate max |dy| = %.3g; checksum %.6f %.6f %.6f\n", diff, y.back(),
              out.back(), cl.y.back());
  std::printf("target <= 20 ms: %s by cpu time, %s by wall time\n",
              simulate.cpu_ms <= 20.0 ? "met" : "NOT met",
              simulate.wall_ms <= 20.0 ? "met" : "NOT met");
  return 0;
}
