// Benchmark driver for `fit`: reads a t,u,y CSV, identifies the requested structure R times
// through the identify library (the whole pipeline: analysis, starting values, multi-start,
// polish, covariance) and prints one JSON line: median and min seconds, the parameters, the
// residual sum of squares and the peak memory the fits added, per sample. Wall and CPU time
// are both given: on a shared machine the CPU time is the fair measure.
//
// Memory is measured two ways. The peak heap is exact: this program replaces malloc and its
// relatives (glibc allows that; every allocation of the libraries, Ceres and Eigen included,
// then passes through here) and records the most bytes live during a fit above what was live
// before it. The peak resident set (VmHWM) over the first fit also counts the library code
// and heap pages first touched by it; later fits reuse the heap's pages and add none.
// After the fits it measures the floor under such a fit on the same record at the last fit's
// optimum (bench_fit_floor.h) and adds it to the line as "floor".
//   bench_fit FILE.csv STRUCTURE REPEATS
#include <malloc.h>

#include <algorithm>
#include <atomic>
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
#include "tests/bench/bench_fit_floor.h"
#include "tests/bench/median_time.h"

extern "C" {
void* __libc_malloc(size_t);
void* __libc_calloc(size_t, size_t);
void* __libc_realloc(void*, size_t);
void* __libc_memalign(size_t, size_t);
void __libc_free(void*);
}

namespace {

std::atomic<long> live_bytes{0}, peak_bytes{0};
std::atomic<bool> counting{true};  // off for the floor, which the fits' heap figures do not need

void Count(void* p, long sign) {
  if (p == nullptr || !counting.load(std::memory_order_relaxed)) return;
  const long now = live_bytes += sign * static_cast<long>(malloc_usable_size(p));
  long peak = peak_bytes.load();
  while (now > peak && !peak_bytes.compare_exchange_weak(peak, now)) {
  }
}

}  // namespace

extern "C" {
void* malloc(size_t n) {
  void* p = __libc_malloc(n);
  Count(p, 1);
  return p;
}
void* calloc(size_t n, size_t size) {
  void* p = __libc_calloc(n, size);
  Count(p, 1);
  return p;
}
void* realloc(void* old, size_t n) {
  const long before = old ? static_cast<long>(malloc_usable_size(old)) : 0;
  void* p = __libc_realloc(old, n);
  if (p != nullptr || n == 0) {
    live_bytes -= before;
    Count(p, 1);
  }
  return p;
}
void free(void* p) {
  Count(p, -1);
  __libc_free(p);
}
void* memalign(size_t align, size_t n) {
  void* p = __libc_memalign(align, n);
  Count(p, 1);
  return p;
}
void* aligned_alloc(size_t align, size_t n) { return memalign(align, n); }
int posix_memalign(void** out, size_t align, size_t n) {
  void* p = memalign(align, n);
  if (p == nullptr) return 12;  // ENOMEM
  *out = p;
  return 0;
}
}

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
  lw::Identification id;
  long rss_before = 0, peak = 0, heap_peak = 0;
  for (int r = 0; r < repeats; ++r) {
    id = lw::Identification{};
    if (r == 0) {
      ResetPeak();
      rss_before = PeakRss();
    }
    const long heap_before = live_bytes.load();
    peak_bytes.store(heap_before);
    auto t0 = std::chrono::steady_clock::now();
    const double c0 = lw::bench::CpuSeconds();
    id = lw::Identify(data, options);
    cpu.push_back(lw::bench::CpuSeconds() - c0);
    seconds.push_back(std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
    if (r == 0) peak = PeakRss() - rss_before;
    heap_peak = std::max(heap_peak, peak_bytes.load() - heap_before);
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
  out["peak_heap_bytes_per_sample"] =
      static_cast<double>(heap_peak) / static_cast<double>(data.t.size());
  out["converged"] = id.model.converged;
  counting = false;  // the floor is timed with the plain allocator
  out["floor"] = lw::bench::MeasureFitFloor(data, id, 4 * repeats);
  std::cout << out.dump() << "\n";
  return 0;
}
