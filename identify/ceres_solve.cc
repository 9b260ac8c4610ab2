#include "identify/ceres_solve.h"

#include <algorithm>
#include <cmath>
#include <sstream>

#include <ceres/ceres.h>

namespace lw {
namespace {

std::string JoinNames(const std::vector<std::string>& names) {
  std::ostringstream out;
  for (size_t i = 0; i < names.size(); ++i) {
    if (i) out << (i + 1 == names.size() ? " and " : ", ");
    out << names[i];
  }
  return out.str();
}

// Adds the block with held parameters as a subset manifold.
void AddBlock(ceres::Problem& problem, ceres::CostFunction* cost, double* x, int p,
              const std::vector<bool>& fixed) {
  problem.AddResidualBlock(cost, nullptr, x);
  std::vector<int> held;
  for (int i = 0; i < p; ++i) {
    if (fixed[i]) held.push_back(i);
  }
  if (!held.empty()) problem.SetManifold(x, new ceres::SubsetManifold(p, held));
}

// Ends the solve at the current iterate when the caller's test says it has converged.
class ConvergenceCallback : public ceres::IterationCallback {
 public:
  ConvergenceCallback(const ConvergedAt& test, const std::vector<double>& x) : test_(test), x_(x) {}
  ceres::CallbackReturnType operator()(const ceres::IterationSummary& summary) override {
    if (!summary.step_is_successful || !test_(x_, why_)) return ceres::SOLVER_CONTINUE;
    return ceres::SOLVER_TERMINATE_SUCCESSFULLY;
  }
  const std::string& why() const { return why_; }

 private:
  const ConvergedAt& test_;
  const std::vector<double>& x_;  // Ceres keeps it at the current iterate
  std::string why_;
};

}  // namespace

CeresRun RunCeres(ceres::CostFunction* cost, std::vector<double>& x, const std::vector<bool>& fixed,
                  const std::vector<double>& lower, const std::vector<double>& upper,
                  const SolveOptions& options, size_t residuals, const ConvergedAt& converged_at) {
  const int p = static_cast<int>(x.size());
  ceres::Problem::Options po;
  po.cost_function_ownership = ceres::TAKE_OWNERSHIP;
  ceres::Problem problem(po);
  AddBlock(problem, cost, x.data(), p, fixed);
  for (int i = 0; i < p; ++i) {
    if (fixed[i]) continue;
    if (std::isfinite(lower[i])) problem.SetParameterLowerBound(x.data(), i, lower[i]);
    if (std::isfinite(upper[i])) problem.SetParameterUpperBound(x.data(), i, upper[i]);
  }
  ceres::Solver::Options so;
  so.minimizer_type = ceres::TRUST_REGION;
  so.trust_region_strategy_type = ceres::LEVENBERG_MARQUARDT;
  // Normal equations are cheap for the long, thin Jacobians of recordings; QR keeps the digits
  // on short ill-conditioned problems.
  so.linear_solver_type = residuals > 5000 ? ceres::DENSE_NORMAL_CHOLESKY : ceres::DENSE_QR;
  so.max_num_iterations = options.max_iterations;
  so.initial_trust_region_radius = options.initial_trust_region_radius;
  so.function_tolerance = options.function_tolerance;
  so.parameter_tolerance = options.parameter_tolerance;
  so.gradient_tolerance = options.gradient_tolerance;
  // With bounds Ceres follows every trust-region step with a projected line search that
  // evaluates the gradient again (two thirds of a polish's work); the step is projected onto
  // the bounds without it, and the trust region already controls its length.
  so.max_num_line_search_step_size_iterations = 0;
  so.num_threads = 1;
  so.logging_type = ceres::SILENT;
  ConvergenceCallback callback(converged_at, x);
  if (converged_at) {
    so.update_state_every_iteration = true;
    so.callbacks.push_back(&callback);
  }
  ceres::Solver::Summary summary;
  ceres::Solve(so, &problem, &summary);
  CeresRun run;
  run.rss = 2.0 * summary.final_cost;
  run.iterations = static_cast<int>(summary.iterations.size());
  const bool ours = summary.termination_type == ceres::USER_SUCCESS && !callback.why().empty();
  run.converged = summary.termination_type == ceres::CONVERGENCE || ours;
  run.usable = summary.IsSolutionUsable();
  run.termination =
      ours ? "CONVERGENCE: " + callback.why()
           : ceres::TerminationTypeToString(summary.termination_type) + (": " + summary.message);
  return run;
}

bool CeresCovariance(ceres::CostFunction* cost, const std::vector<double>& x_in,
                     const std::vector<bool>& fixed, Eigen::MatrixXd& covariance) {
  const int p = static_cast<int>(x_in.size());
  std::vector<double> x = x_in;
  ceres::Problem::Options po;
  po.cost_function_ownership = ceres::TAKE_OWNERSHIP;
  ceres::Problem problem(po);
  AddBlock(problem, cost, x.data(), p, fixed);
  ceres::Covariance::Options co;
  co.algorithm_type = ceres::DENSE_SVD;
  co.num_threads = 1;
  ceres::Covariance estimator(co);
  std::vector<std::pair<const double*, const double*>> blocks = {{x.data(), x.data()}};
  covariance = Eigen::MatrixXd::Zero(p, p);
  if (!estimator.Compute(blocks, &problem)) return false;
  Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor> c(p, p);
  if (!estimator.GetCovarianceBlock(x.data(), x.data(), c.data())) return false;
  covariance = c;
  return true;
}

std::string DescribeRankDeficiency(const Eigen::MatrixXd& jtj, const std::vector<bool>& fixed,
                                   const std::vector<std::string>& names, double min_ratio) {
  std::vector<int> free_idx;
  for (int i = 0; i < static_cast<int>(fixed.size()); ++i) {
    if (!fixed[i]) free_idx.push_back(i);
  }
  const int m = static_cast<int>(free_idx.size());
  if (m == 0) return "";
  Eigen::MatrixXd n(m, m);
  for (int a = 0; a < m; ++a) {
    for (int b = 0; b < m; ++b) n(a, b) = jtj(free_idx[a], free_idx[b]);
  }
  std::vector<std::string> dead;
  Eigen::VectorXd scale = n.diagonal().cwiseSqrt();
  for (int a = 0; a < m; ++a) {
    if (!(scale[a] > 0.0) || !std::isfinite(scale[a])) {
      dead.push_back(names[free_idx[a]]);
      scale[a] = 1.0;
    }
  }
  if (!dead.empty()) return "the data do not depend on " + JoinNames(dead) + " at all";
  Eigen::MatrixXd ns = scale.asDiagonal().inverse() * n * scale.asDiagonal().inverse();
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(ns);
  const double ratio = eig.eigenvalues()[0] / std::max(eig.eigenvalues()[m - 1], 1e-300);
  if (ratio >= min_ratio) return "";
  Eigen::VectorXd null_dir = eig.eigenvectors().col(0);
  const double top = null_dir.cwiseAbs().maxCoeff();
  std::vector<std::string> culprits;
  for (int a = 0; a < m; ++a) {
    if (std::abs(null_dir[a]) >= 0.5 * top) culprits.push_back(names[free_idx[a]]);
  }
  std::ostringstream out;
  out.precision(2);
  out << "the data cannot determine " << JoinNames(culprits)
      << (culprits.size() > 1 ? " separately" : "")
      << " (reciprocal condition of the scaled normal matrix " << ratio << ")";
  return out.str();
}

}  // namespace lw
