// The fit's shortcut (multi-start on block means of the record, then the polish on every sample,
// fit.h) against the plain fit (the multi-start itself on every sample, start_samples >= n): the
// shortcut must reach the same full-data least-squares optimum, so it cannot change answers.
#include <doctest/doctest.h>

#include <cmath>
#include <random>
#include <vector>

#include "identify/fit.h"
#include "identify/model_structure.h"
#include "identify/response_kernel.h"

namespace {

using lw::Structure;

// Our own plant's exact response to the held input u (from rest at u[0]) plus white noise.
lw::StepRecording NoisyRecording(Structure s, const std::vector<double>& p, double h, size_t n,
                                 const std::vector<double>& u, double y0, double noise_sd,
                                 unsigned seed) {
  lw::StepRecording r;
  for (size_t i = 0; i < n; ++i) r.t.push_back(h * static_cast<double>(i));
  r.u = u;
  std::vector<double> v(n);
  for (size_t i = 0; i < n; ++i) v[i] = u[i] - u[0];
  r.y = lw::StructureResponse(s, p, r.t, v, y0);
  std::mt19937_64 gen(seed);
  std::normal_distribution<double> noise(0.0, noise_sd);
  for (double& y : r.y) y += noise(gen);
  return r;
}

// Both fits converge on every sample to within Ceres' tolerances (relative cost change 1e-12):
// the residual sums of squares agree to 1e-11 and every parameter to a thousandth of its
// standard deviation (the valley's flat directions let converged points differ that much).
void CheckSameOptimum(const lw::StepRecording& rec, const std::string& structure) {
  lw::FitOptions reduced;
  reduced.structure = structure;
  lw::FitOptions plain = reduced;
  plain.start_samples = rec.t.size();
  const lw::Identification a = lw::Identify(rec, reduced);
  const lw::Identification b = lw::Identify(rec, plain);
  REQUIRE(a.model.converged);
  REQUIRE(b.model.converged);
  REQUIRE(a.model.covariance_ok);
  const double n = static_cast<double>(rec.t.size());
  const double rss_a = a.model.residual_rms * a.model.residual_rms * n;
  const double rss_b = b.model.residual_rms * b.model.residual_rms * n;
  CHECK(std::abs(rss_a - rss_b) <= 1e-11 * rss_b);
  for (size_t i = 0; i < a.model.parameters.size(); ++i) {
    const lw::ParameterEstimate& pa = a.model.parameters[i];
    const lw::ParameterEstimate& pb = b.model.parameters[i];
    INFO(structure << " " << pa.name << ": " << pa.value << " against " << pb.value << " (sd "
                   << pb.sd << ")");
    CHECK(std::abs(pa.value - pb.value) <= 1e-3 * pb.sd);
    CHECK(std::abs(pa.sd - pb.sd) <= 1e-4 * pb.sd);
  }
}

}  // namespace

TEST_CASE("reduced-then-polished sopdt fit equals the plain fit on a long one-step record") {
  // 60 000 samples: long enough for the finer second reduction as well.
  const size_t n = 60000;
  const double h = 0.002;
  std::vector<double> u(n, 4.0);
  for (size_t i = 1500; i < n; ++i) u[i] = 6.5;
  const lw::StepRecording rec =
      NoisyRecording(Structure::kSopdt, {0.8, 14.0, 3.5, 1.37}, h, n, u, 30.0, 0.04, 11);
  CheckSameOptimum(rec, "sopdt");
}

TEST_CASE("reduced-then-polished fits equal the plain fits on a multi-step record") {
  // A square wave of 12 steps (a run of 1500 samples each) and an underdamped response.
  const size_t n = 20000;
  const double h = 0.01;
  std::vector<double> u(n);
  for (size_t i = 0; i < n; ++i) u[i] = (i < 800 || ((i - 800) / 1500) % 2 == 1) ? -1.0 : 2.0;
  const lw::StepRecording under =
      NoisyRecording(Structure::kUnderdamped, {2.2, 0.27, 0.9, 0.63}, h, n, u, 5.0, 0.1, 12);
  CheckSameOptimum(under, "underdamped");
  const lw::StepRecording zero =
      NoisyRecording(Structure::kSopdtZero, {1.4, 4.0, 1.1, -1.6, 0.35}, h, n, u, -2.0, 0.08, 13);
  CheckSameOptimum(zero, "sopdt-zero");
}

TEST_CASE("reduced-then-polished fopdt fit equals the plain fit on a 10^4-sample step") {
  const size_t n = 10000;
  std::vector<double> u(n, 0.0);
  for (size_t i = 700; i < n; ++i) u[i] = 1.0;
  const lw::StepRecording rec =
      NoisyRecording(Structure::kFopdt, {-3.1, 2.4, 0.52}, 0.005, n, u, 100.0, 0.06, 14);
  CheckSameOptimum(rec, "fopdt");
}
