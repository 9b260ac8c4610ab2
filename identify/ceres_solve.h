// What every least-squares fit in identify/ shares: one Ceres solve of a single residual block
// with bounds and held parameters, the covariance (J'J)^-1 from ceres::Covariance, and a
// sentence naming the parameter the data cannot determine when J'J is (nearly) singular.
#ifndef LOOPWRIGHT_IDENTIFY_CERES_SOLVE_H_
#define LOOPWRIGHT_IDENTIFY_CERES_SOLVE_H_

#include <cstddef>
#include <functional>
#include <string>
#include <vector>

#include <Eigen/Dense>

namespace ceres {
class CostFunction;
}

namespace lw {

struct SolveOptions {
  int max_iterations = 100;
  double function_tolerance = 1e-12;
  double parameter_tolerance = 1e-12;
  double gradient_tolerance = 1e-14;
  bool compute_covariance = true;
  // Ceres' initial trust region radius (its default 1e4). A start known to be close to the
  // optimum (the polish of a reduced fit) takes nearly undamped Gauss-Newton steps with a large
  // radius instead of losing three digits of the remaining gap per iteration to the damping.
  double initial_trust_region_radius = 1e4;
  // Output-error solves with more fitted samples than this run on the compressed Gauss-Newton
  // model (output_error.h): the same steps, O(p^2) memory instead of O(N p).
  size_t compress_above = 5000;
};

struct CeresRun {
  double rss = 0.0;  // 2 x Ceres' final cost
  int iterations = 0;
  bool converged = false;   // Ceres reported CONVERGENCE
  bool usable = false;      // the solution is usable (converged or stopped at a limit)
  std::string termination;  // Ceres' termination type and message
};

// Minimises the residual block `cost` (ownership taken) over x (size p, updated in place).
// fixed[i] holds x[i]; lower/upper bound the others (infinite entries mean no bound).
//
// `converged_at`, when given, is asked after every successful iteration (the start included)
// whether the current iterate x already meets the function tolerance: the caller knows when the
// Gauss-Newton model it just evaluated there predicts a decrease of at most function_tolerance
// times the cost for the next step (its Newton decrement), and Ceres would then evaluate that
// step only to find the same. The solve then ends at x as converged, one cost evaluation sooner;
// the termination text says so, with the predicted decrease the answer returned.
using ConvergedAt = std::function<bool(const std::vector<double>& x, std::string& why)>;
CeresRun RunCeres(ceres::CostFunction* cost, std::vector<double>& x, const std::vector<bool>& fixed,
                  const std::vector<double>& lower, const std::vector<double>& upper,
                  const SolveOptions& options, size_t residuals,
                  const ConvergedAt& converged_at = {});

// (J'J)^-1 at x from ceres::Covariance (dense SVD; rows and columns of held parameters are
// zero). Returns false when Ceres finds it rank-deficient. Takes ownership of cost.
bool CeresCovariance(ceres::CostFunction* cost, const std::vector<double>& x,
                     const std::vector<bool>& fixed, Eigen::MatrixXd& covariance);

// Empty when the column-scaled J'J of the free parameters is well conditioned (reciprocal
// condition >= min_ratio); otherwise a sentence naming the parameter(s) dominating its null
// direction, e.g. "the data cannot determine time_constant_2 and dead_time separately (...)".
// With min_ratio = +inf it always names the weakest direction (for a matrix Ceres' own,
// unscaled test already found rank-deficient).
std::string DescribeRankDeficiency(const Eigen::MatrixXd& jtj, const std::vector<bool>& fixed,
                                   const std::vector<std::string>& names, double min_ratio = 1e-12);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_CERES_SOLVE_H_
