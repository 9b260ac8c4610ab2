// Strided parallel loops for the design maths (response band, robust band, closed-loop check).
//
//   ParallelFor(n, threads, [&](size_t worker, size_t i) { ... });
//
// runs job(worker, i) for every i in [0, n) on min(threads, n) threads (at least one: the caller's
// own thread is worker 0). Worker w takes i = w, w + count, w + 2 count, ... so which worker runs
// which i depends only on n and threads: per-worker state (a counter, a scratch object indexed by
// `worker`) gives the same totals for any thread count when each job is a pure function of i.
// The first exception a job throws is rethrown in the caller after every thread has finished;
// the other jobs of the throwing worker are skipped. Precondition: threads >= 1.
#ifndef LOOPWRIGHT_DESIGN_PARALLEL_FOR_H_
#define LOOPWRIGHT_DESIGN_PARALLEL_FOR_H_

#include <cstddef>
#include <functional>

namespace lw {

// The number of workers ParallelFor(n, threads, ...) uses: max(1, min(threads, n)).
size_t ParallelWorkers(size_t n, int threads);

void ParallelFor(size_t n, int threads, const std::function<void(size_t worker, size_t i)>& job);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_PARALLEL_FOR_H_
