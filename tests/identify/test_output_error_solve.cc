// The compressed output-error solve (identify/output_error.h) ends where the Gauss-Newton model
// it last evaluated predicts a decrease within the function tolerance (ceres_solve.h
// ConvergedAt). Checked against Ceres' own termination on the same problem: the plain solve
// (every residual given to Ceres, no early stop) from the same start, and Ceres started again
// at the early stop's answer, must both find nothing left to gain (a relative cost change
// within the tolerance, parameters that move by a negligible fraction of their sd).
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <random>
#include <string>
#include <vector>

#include "identify/output_error.h"
#include "identify/response_kernel.h"

namespace {

using lw::Structure;

struct Data {
  std::vector<double> t, v, y;
  lw::OutputErrorProblem problem() const {
    lw::OutputErrorProblem pb;
    pb.structure = Structure::kSopdt;
    pb.t = t;
    pb.v = v;
    pb.y = y;
    pb.zero_initial = true;
    return pb;
  }
};

// Our own plant (synthetic): a sopdt step test with white noise.
Data SopdtStep(size_t n) {
  Data d;
  const double h = 0.01;
  for (size_t i = 0; i < n; ++i) {
    d.t.push_back(h * static_cast<double>(i));
    d.v.push_back(i >= n / 10 ? 2.5 : 0.0);
  }
  d.y = lw::StructureResponse(Structure::kSopdt, std::vector<double>{1.3, 9.0, 2.2, 0.437}, d.t,
                              d.v, 5.0, true);
  std::mt19937_64 gen(3);
  std::normal_distribution<double> noise(0.0, 0.05);
  for (double& y : d.y) y += noise(gen);
  return d;
}

}  // namespace

TEST_CASE("a compressed solve stops at the Newton decrement where Ceres finds no more to gain") {
  const Data d = SopdtStep(30000);
  const lw::OutputErrorProblem pb = d.problem();
  const double inf = std::numeric_limits<double>::infinity();
  // gain, tau1, tau2, dead time, offset, drift (held).
  const std::vector<double> start = {1.2, 8.0, 2.6, 0.40, 5.05, 0.0};
  const std::vector<bool> fixed = {false, false, false, false, false, true};
  const std::vector<double> lo = {-inf, 1e-3, 1e-3, 0.0, -inf, -inf};
  const std::vector<double> hi = {inf, 1e3, 1e3, 50.0, inf, inf};

  lw::SolveOptions compressed;  // compress_above 5000 < 30000 samples
  const lw::SolveReport a = lw::SolveOutputError(pb, start, fixed, lo, hi, compressed);
  REQUIRE(a.converged);
  REQUIRE(a.covariance_ok);
  CHECK(a.termination.rfind("CONVERGENCE: the Gauss-Newton step from the solution", 0) == 0);

  lw::SolveOptions plain;
  plain.compress_above = std::numeric_limits<size_t>::max();  // Ceres' own stopping rules
  const lw::SolveReport b = lw::SolveOutputError(pb, start, fixed, lo, hi, plain);
  REQUIRE(b.converged);
  CHECK(b.termination.find("Gauss-Newton") == std::string::npos);
  const lw::SolveReport again = lw::SolveOutputError(pb, a.x, fixed, lo, hi, plain);
  REQUIRE(again.converged);

  INFO("rss early stop " << a.rss << ", Ceres from the start " << b.rss << ", Ceres again "
                         << again.rss);
  CHECK(std::abs(a.rss - b.rss) <= 1e-11 * b.rss);
  CHECK(a.rss - again.rss <= 1e-12 * a.rss);  // nothing left to gain
  for (int i = 0; i < 5; ++i) {
    const double sd = std::sqrt(a.covariance(i, i));
    CAPTURE(i);
    CHECK(std::abs(a.x[i] - b.x[i]) <= 1e-3 * sd);
    CHECK(std::abs(a.x[i] - again.x[i]) <= 1e-3 * sd);
  }
  // And the answer is the plant's, within a few sd (a check that the problem was solved at all).
  const std::vector<double> truth = {1.3, 9.0, 2.2, 0.437, 5.0};
  for (int i = 0; i < 5; ++i)
    CHECK(std::abs(a.x[i] - truth[i]) <= 5.0 * std::sqrt(a.covariance(i, i)));
}
