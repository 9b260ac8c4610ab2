// Output-error least squares for one model structure with Ceres Solver.
//
// The model output at sample k is
//   yhat[k] = y_offset + drift (t[k] - t[0]) + K (w0 x1[k] + w1 x2[k]),
// the exact response (response_kernel.h) to the recorded input deviations v held between
// samples, and the solver minimises  sum_k weight[k] (yhat[k] - y[k])^2  over the parameter
// vector
//   x = [structure parameters in their fixed order..., y_offset, drift]
// within bounds, any subset held fixed. The Jacobian is exact: the kernel runs on Ceres Jets
// for the parameters that shape the states, and the output's linear parameters are
// differentiated by hand (a test checks both against central differences).
//
// Long records (more fitted samples than SolveOptions::compress_above) are solved on the
// compressed Gauss-Newton model: each Jacobian evaluation streams the rows once into the
// augmented normal matrix [J r]'[J r] and gives Ceres m + 1 residuals with the same cost,
// gradient and J'J (m free parameters), so Ceres takes the same Levenberg-Marquardt steps
// without an N x m array; the J'J of the last accepted point is reused for the covariance.
// Each Jacobian pass also gives the decrease the Gauss-Newton step from its point predicts
// (c'c of the compressed residuals over r'r): once that is within the function tolerance the
// solve ends there as converged (ceres_solve.h ConvergedAt), saving the pass over every sample
// Ceres would spend evaluating that step only to find the same.
// fit.h uses this as the polish of a fit first solved on a reduced record: from there two to
// four such passes reach Ceres' tolerances on every sample.
//
// The covariance of x is Ceres' (J'J)^-1 (ceres::Covariance, dense SVD) scaled by the residual
// variance s^2 = RSS / (n - p) with p the number of free parameters. To keep memory at O(p^2)
// for long records, J'J is accumulated row by row and Ceres is given the equivalent p-row
// problem R dx with R'R = J'J (the same (J'J)^-1; the rank test is done on the column-scaled
// J'J first, see ceres_solve.h). Held parameters are left out of Ceres' parameter block.
#ifndef LOOPWRIGHT_IDENTIFY_OUTPUT_ERROR_H_
#define LOOPWRIGHT_IDENTIFY_OUTPUT_ERROR_H_

#include <span>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "identify/ceres_solve.h"
#include "identify/model_structure.h"
#include "identify/response_kernel.h"

namespace lw {

// The data and model of one output-error problem. The spans must outlive every call using it.
struct OutputErrorProblem {
  Structure structure = Structure::kFopdt;
  std::span<const double> t;       // s, strictly increasing
  std::span<const double> v;       // input deviation from its baseline, held between samples
  std::span<const double> y;       // measured output
  std::span<const double> weight;  // optional per-sample weights >= 0 (empty: all 1)
  bool zero_initial = false;       // start from the zero state with zero input history
  size_t first_residual = 0;       // samples before this one are simulated but not fitted
};

// Size of x: structure parameters + y_offset + drift (at most kMaxFullParameters).
inline constexpr int kMaxFullParameters = 7;
inline int FullParameterCount(Structure s) { return ParameterCount(s) + 2; }
inline int OffsetIndex(Structure s) { return ParameterCount(s); }
inline int DriftIndex(Structure s) { return ParameterCount(s) + 1; }

// Residuals r[k] = sqrt(weight[k]) (yhat[k] - y[k]) for k >= first_residual and, when jacobian
// is not null, their Jacobian (row-major, rows x FullParameterCount) with respect to x.
void EvaluateOutputError(const OutputErrorProblem& problem, std::span<const double> x,
                         double* residuals, double* jacobian);
// The model output yhat[k] for every sample.
std::vector<double> PredictOutput(const OutputErrorProblem& problem, std::span<const double> x);
// J'J accumulated row by row (no N x p storage).
Eigen::MatrixXd NormalMatrix(const OutputErrorProblem& problem, std::span<const double> x);

struct SolveReport {
  std::vector<double> x;
  double rss = 0.0;      // sum of weighted squared residuals at x
  size_t residuals = 0;  // number of fitted samples
  int free_parameters = 0;
  int iterations = 0;
  bool converged = false;   // Ceres reported convergence (not a limit or failure)
  std::string termination;  // Ceres' termination type and message
  double seconds = 0.0;
  // Covariance of x (full size; rows/columns of fixed parameters are zero), scaled by
  // rss / (residuals - free_parameters). Empty when not computed.
  Eigen::MatrixXd covariance;
  bool covariance_ok = false;
  // When the data cannot determine some combination: a sentence naming the parameter that
  // dominates it (from an SVD of the column-scaled J'J), otherwise empty.
  std::string rank_deficiency;
};

// Solves from `start` (full size). fixed[i] holds x[i] at its start value; lower/upper are
// bounds (use +-infinity for none). Throws UsageError on size mismatches.
SolveReport SolveOutputError(const OutputErrorProblem& problem, std::vector<double> start,
                             const std::vector<bool>& fixed, const std::vector<double>& lower,
                             const std::vector<double>& upper, const SolveOptions& options = {});

// Solves from every start (without covariance), keeps the lowest residual sum of squares and
// computes the covariance there: the multi-start that stops a local minimum from winning.
// Before each solve the free linear parameters (gain, output_offset, output_drift) of the start
// are replaced by their exact linear least-squares values for the start's dynamics, so a start
// is judged by its time constants and dead time, not by a poor guess of the gain.
// Throws UsageError when starts is empty.
SolveReport SolveMultiStart(const OutputErrorProblem& problem,
                            const std::vector<std::vector<double>>& starts,
                            const std::vector<bool>& fixed, const std::vector<double>& lower,
                            const std::vector<double>& upper, const SolveOptions& options = {});

// The linear least-squares values of the free linear parameters for x's dynamics (x updated).
void SolveLinearParameters(const OutputErrorProblem& problem, const std::vector<bool>& fixed,
                           std::vector<double>& x);

// Covariance and rank diagnosis at x (fills the covariance fields of report).
void ComputeOutputErrorCovariance(const OutputErrorProblem& problem, const std::vector<bool>& fixed,
                                  SolveReport& report);

// Names of x's entries: the structure's names, then "output_offset", "output_drift".
std::vector<std::string> FullParameterNames(Structure s);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_OUTPUT_ERROR_H_
