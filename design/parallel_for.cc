#include "design/parallel_for.h"

#include <algorithm>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace lw {

size_t ParallelWorkers(size_t n, int threads) {
  return std::max<size_t>(1, std::min<size_t>(static_cast<size_t>(std::max(threads, 1)), n));
}

void ParallelFor(size_t n, int threads, const std::function<void(size_t, size_t)>& job) {
  std::exception_ptr failure;
  std::mutex guard;
  const size_t count = ParallelWorkers(n, threads);
  auto work = [&](size_t worker) {
    try {
      for (size_t i = worker; i < n; i += count) job(worker, i);
    } catch (...) {
      std::lock_guard<std::mutex> lock(guard);
      if (!failure) failure = std::current_exception();
    }
  };
  std::vector<std::thread> pool;
  for (size_t w = 1; w < count; ++w) pool.emplace_back(work, w);
  work(0);
  for (auto& th : pool) th.join();
  if (failure) std::rethrow_exception(failure);
}

}  // namespace lw
