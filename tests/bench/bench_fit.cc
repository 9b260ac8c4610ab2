// Benchmark driver for `fit`: reads a t,u,y CSV, identifies the requested structure R times
// through the identify library (the whole pipeline: analysis, starting values, multi-start,
// polish, covariance) and prints one JSON line: median and min seconds, the parameters, the
// residual sum of squares and the peak memory the fits added, per sample. Wall and CPU time
// are both given: on a shared machine the CPU time is the fair measure.
//   bench_fit FILE.csv STRUCTURE REPEATS
#include <sys/resource.h>

#include <time.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "identify/fit.h"
#include "io/csv_reader.h"
#include "io/recording.h"

namespace {

// Peak resident set (VmHWM) in bytes, from /proc/self/status.
long PeakRss() {
  std::ifstream in("/proc/self/status");
  std::string key;
  while (in >> key) {
    if (key == "VmHWM:") {
      long kb = 0;
      in >> kb;
      return kb * 1024;
    }
  }
  return 0;
}

// Resets VmHWM to the current RSS so the next peak is the fit's own.
void ResetPeak() {
  std::ofstream clear("/proc/self/clear_refs");
  clear << "5";
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 4) {
    std::cerr << "usage: bench_fit FILE.csv STRUCTURE REPEATS\n";
    return 2;
  }
  lw::Table table = lw::ReadCsv(argv[1]);
  lw::Recording rec = lw::SelectColumns(table, lw::ColumnNames{}, true, true, false, 3);
  lw::StepRecording data{rec.t, rec.u, rec.y};
  table = lw::Table{};
  lw::FitOptions options;
  options.structure = argv[2];
  const int repeats = std::max(1, std::atoi(argv[3]));
  std::vector<double> seconds, cpu;
  auto cpu_now = [] {
    timespec ts{};
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
  };
  lw::Identification id;
  long rss_before = 0, peak = 0;
  for (int r = 0; r < repeats; ++r) {
    ResetPeak();
    rss_before = PeakRss();
    auto t0 = std::chrono::steady_clock::now();
    const double c0 = cpu_now();
    id = lw::Identify(data, options);
    cpu.push_back(cpu_now() - c0);
    seconds.push_back(std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
    peak = std::max(peak, PeakRss() - rss_before);
  }
  std::vector<double> sorted = seconds;
  std::sort(sorted.begin(), sorted.end());
  nlohmann::json out;
  out["samples"] = data.t.size();
  out["median_s"] = sorted[sorted.size() / 2];
  out["min_s"] = sorted.front();
  std::sort(cpu.begin(), cpu.end());
  out["median_cpu_s"] = cpu[cpu.size() / 2];
  out["parameters"] = id.model.values;
  out["residual_rms"] = id.model.residual_rms;
  out["rss"] = id.model.residual_rms * id.model.residual_rms * static_cast<double>(data.t.size());
  out["peak_bytes_per_sample"] = static_cast<double>(peak) / static_cast<double>(data.t.size());
  out["converged"] = id.model.converged;
  std::cout << out.dump() << "\n";
  return 0;
}
