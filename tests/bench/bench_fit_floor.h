// The floor under a fit by loopwright's method (output-error least squares with Ceres on the
// response simulated from the recorded input, sample by sample, so any input shape works): the
// least work such a fit of a step recording must do, timed piece by piece on the recording
// bench_fit fits, with the library's own exact kernel. MeasureFitFloor returns the medians
// of the process's CPU time (s), a JSON object with these fields:
//   read_pass       one pass over the output (sum, min, max): the least any analysis of the
//                   recording (baseline, settled level, step search) can read;
//   ceres_solve     one Ceres solve of the same structure on 50 samples of the record (a
//                   reduced record, the smallest that still fixes five parameters; the
//                   model's noise-free output there) from 2 % off the optimum: the least one
//                   start of a multi-start costs;
//   jacobian_pass   one Jacobian pass over every sample at the optimum (J'J accumulated row by
//                   row, no N x p storage): the least an exact polish and the covariance need;
//   residual_pass   one residual pass over every sample: the least that confirms the polished
//                   point's residual sum of squares, which the accuracy comparison is about;
//   covariance      the Ceres covariance on the 50-sample record (its fixed cost).
// floor = read_pass + 2 ceres_solve (a multi-start has at least two starts) + jacobian_pass +
// residual_pass + covariance; floor_reduced_covariance leaves out the Jacobian pass: the floor
// of a fit that would take its covariance and its optimum from a reduced record alone (an
// approximation of the full record's J'J, not what loopwright does), still confirming the
// residual sum of squares on every sample. It leaves out the starting values, the step search's
// medians, the warnings and the structure bookkeeping, so a real fit cannot be faster than it. A
// kernel made for one clean step on a uniform grid (closed-form sums instead of a simulation) could
// pass over the samples more cheaply, but it would not fit the recordings with several steps,
// a PRBS or a noisy input that the method is for.
#ifndef LOOPWRIGHT_TESTS_BENCH_BENCH_FIT_FLOOR_H_
#define LOOPWRIGHT_TESTS_BENCH_BENCH_FIT_FLOOR_H_

#include <nlohmann/json.hpp>

#include "identify/fit.h"
#include "identify/preprocess.h"

namespace lw::bench {

// The floor for `data` (a step recording with input and output) at the optimum `id` found on
// it; every piece is timed `repeats` times (>= 1). ceres_solve_iterations is the solve's
// iteration count.
nlohmann::json MeasureFitFloor(const StepRecording& data, const Identification& id, int repeats);

}  // namespace lw::bench

#endif  // LOOPWRIGHT_TESTS_BENCH_BENCH_FIT_FLOOR_H_
