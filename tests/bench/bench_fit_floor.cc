// The floor under a fit by loopwright's method (output-error least squares with Ceres on the
// response simulated from the recorded input, sample by sample, so any input shape works): the
// least work such a fit of a step recording must do, timed piece by piece on the recording
// bench_fit fits, with the library's own exact kernel. It prints one JSON line of medians (s):
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
//   bench_fit_floor FILE.csv STRUCTURE REPEATS
#include <algorithm>
#include <chrono>
#include <cmath>
#include <iostream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "identify/fit.h"
#include "identify/output_error.h"
#include "io/csv_reader.h"
#include "io/recording.h"

namespace {

template <class F>
double MedianSeconds(int repeats, F&& f) {
  std::vector<double> s;
  for (int r = 0; r < repeats; ++r) {
    const auto t0 = std::chrono::steady_clock::now();
    f();
    s.push_back(std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
  }
  std::sort(s.begin(), s.end());
  return s[s.size() / 2];
}

volatile double sink = 0.0;  // keeps the timed results alive

}  // namespace

int main(int argc, char** argv) {
  if (argc != 4) {
    std::cerr << "usage: bench_fit_floor FILE.csv STRUCTURE REPEATS\n";
    return 2;
  }
  const lw::Table table = lw::ReadCsv(argv[1]);
  const lw::Recording rec = lw::SelectColumns(table, lw::ColumnNames{}, true, true, false, 3);
  const lw::Structure structure = lw::ParseStructure(argv[2]);
  const int repeats = std::max(1, std::atoi(argv[3])) * 4;
  const size_t n = rec.t.size();
  std::vector<double> v(n);
  for (size_t k = 0; k < n; ++k) v[k] = rec.u[k] - rec.u[0];

  lw::OutputErrorProblem full;
  full.structure = structure;
  full.t = rec.t;
  full.v = v;
  full.y = rec.y;

  // The optimum, from the whole pipeline (untimed), as the full parameter vector.
  lw::FitOptions fit_options;
  fit_options.structure = argv[2];
  const lw::Identification id = lw::Identify(lw::StepRecording{rec.t, rec.u, rec.y}, fit_options);
  const int p = lw::FullParameterCount(structure);
  std::vector<double> x(p, 0.0);
  for (int i = 0; i < lw::ParameterCount(structure); ++i) x[i] = id.model.values[i];
  std::vector<bool> fixed(p, false);
  fixed[lw::DriftIndex(structure)] = true;
  lw::SolveLinearParameters(full, fixed, x);  // the output offset for these dynamics
  const std::vector<double> lower(p, -INFINITY), upper(p, INFINITY);

  // A 50-sample reduced record: every stride-th sample of the model's own output at the
  // optimum (noise-free, so the reduced optimum is x and is well-posed at every record length).
  const std::vector<double> yhat = lw::PredictOutput(full, x);
  const size_t stride = std::max<size_t>(1, n / 50);
  std::vector<double> rt, rv, ry;
  for (size_t k = 0; k < n; k += stride) {
    rt.push_back(rec.t[k]);
    rv.push_back(v[k]);
    ry.push_back(yhat[k]);
  }
  lw::OutputErrorProblem reduced = full;
  reduced.t = rt;
  reduced.v = rv;
  reduced.y = ry;
  lw::SolveOptions no_cov;
  no_cov.compute_covariance = false;
  // The timed solve starts 2 % off the optimum, so it converges in few iterations: the least
  // a start costs.
  std::vector<double> start = x;
  for (int i = 0; i < lw::ParameterCount(structure); ++i) start[i] *= 1.02;
  int solve_iterations = 0;

  nlohmann::json out;
  out["samples"] = n;
  out["read_pass"] = MedianSeconds(repeats, [&] {
    double s = 0.0, lo = INFINITY, hi = -INFINITY;
    for (double y : rec.y) {
      s += y;
      lo = std::min(lo, y);
      hi = std::max(hi, y);
    }
    sink = s + lo + hi;
  });
  out["ceres_solve"] = MedianSeconds(repeats, [&] {
    const lw::SolveReport r = lw::SolveOutputError(reduced, start, fixed, lower, upper, no_cov);
    solve_iterations = r.iterations;
    sink = r.rss;
  });
  out["ceres_solve_iterations"] = solve_iterations;
  out["jacobian_pass"] = MedianSeconds(repeats, [&] { sink = lw::NormalMatrix(full, x)(0, 0); });
  std::vector<double> r(n);
  out["residual_pass"] = MedianSeconds(repeats, [&] {
    lw::EvaluateOutputError(full, x, r.data(), nullptr);
    sink = r[n - 1];
  });
  out["covariance"] = MedianSeconds(repeats, [&] {
    lw::SolveReport rep;
    rep.x = x;
    rep.residuals = rt.size();
    rep.free_parameters = p - 1;
    rep.rss = 1.0;
    lw::ComputeOutputErrorCovariance(reduced, fixed, rep);
    sink = rep.covariance(0, 0);
  });
  out["floor"] = out["read_pass"].get<double>() + 2 * out["ceres_solve"].get<double>() +
                 out["jacobian_pass"].get<double>() + out["residual_pass"].get<double>() +
                 out["covariance"].get<double>();
  out["floor_reduced_covariance"] = out["floor"].get<double>() - out["jacobian_pass"].get<double>();
  std::cout << out.dump() << "\n";
  return 0;
}
