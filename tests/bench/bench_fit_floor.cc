// The floor under a sample-by-sample Ceres output-error fit (bench_fit_floor.h).
#include "tests/bench/bench_fit_floor.h"

#include <algorithm>
#include <cmath>
#include <vector>

#include "identify/output_error.h"
#include "tests/bench/median_time.h"

namespace lw::bench {
namespace {

volatile double sink = 0.0;  // keeps the timed results alive

}  // namespace

nlohmann::json MeasureFitFloor(const StepRecording& data, const Identification& id, int repeats) {
  const Structure structure = id.model.structure;
  const size_t n = data.t.size();
  std::vector<double> v(n);
  for (size_t k = 0; k < n; ++k) v[k] = data.u[k] - data.u[0];
  OutputErrorProblem full;
  full.structure = structure;
  full.t = data.t;
  full.v = v;
  full.y = data.y;

  // The optimum as the full parameter vector: the fit's dynamics, their linear output offset.
  const int p = FullParameterCount(structure);
  std::vector<double> x(p, 0.0);
  for (int i = 0; i < ParameterCount(structure); ++i) x[i] = id.model.values[i];
  std::vector<bool> fixed(p, false);
  fixed[DriftIndex(structure)] = true;
  SolveLinearParameters(full, fixed, x);
  const std::vector<double> lower(p, -INFINITY), upper(p, INFINITY);

  // A 50-sample reduced record: every stride-th sample of the model's own output at the
  // optimum (noise-free, so the reduced optimum is x and is well-posed at every record length).
  const std::vector<double> yhat = PredictOutput(full, x);
  const size_t stride = std::max<size_t>(1, n / 50);
  std::vector<double> rt, rv, ry;
  for (size_t k = 0; k < n; k += stride) {
    rt.push_back(data.t[k]);
    rv.push_back(v[k]);
    ry.push_back(yhat[k]);
  }
  OutputErrorProblem reduced = full;
  reduced.t = rt;
  reduced.v = rv;
  reduced.y = ry;
  SolveOptions no_cov;
  no_cov.compute_covariance = false;
  // The timed solve starts 2 % off the optimum, so it converges in few iterations: the least
  // a start costs.
  std::vector<double> start = x;
  for (int i = 0; i < ParameterCount(structure); ++i) start[i] *= 1.02;
  int solve_iterations = 0;

  auto median = [repeats](auto&& f) { return MedianSeconds(repeats, CpuSeconds, f); };
  const double read_pass = median([&] {
    double s = 0.0, lo = INFINITY, hi = -INFINITY;
    for (double y : data.y) {
      s += y;
      lo = std::min(lo, y);
      hi = std::max(hi, y);
    }
    sink = s + lo + hi;
  });
  const double ceres_solve = median([&] {
    const SolveReport r = SolveOutputError(reduced, start, fixed, lower, upper, no_cov);
    solve_iterations = r.iterations;
    sink = r.rss;
  });
  const double jacobian_pass = median([&] { sink = NormalMatrix(full, x)(0, 0); });
  std::vector<double> r(n);
  const double residual_pass = median([&] {
    EvaluateOutputError(full, x, r.data(), nullptr);
    sink = r[n - 1];
  });
  const double covariance = median([&] {
    SolveReport rep;
    rep.x = x;
    rep.residuals = rt.size();
    rep.free_parameters = p - 1;
    rep.rss = 1.0;
    ComputeOutputErrorCovariance(reduced, fixed, rep);
    sink = rep.covariance(0, 0);
  });
  const double without_jacobian = read_pass + 2 * ceres_solve + residual_pass + covariance;
  return {{"read_pass", read_pass},
          {"ceres_solve", ceres_solve},
          {"ceres_solve_iterations", solve_iterations},
          {"jacobian_pass", jacobian_pass},
          {"residual_pass", residual_pass},
          {"covariance", covariance},
          {"floor", without_jacobian + jacobian_pass},
          {"floor_reduced_covariance", without_jacobian}};
}

}  // namespace lw::bench
