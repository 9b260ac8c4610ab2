// A small generic curve fit, y ~ f(x; b), by Ceres with automatic derivatives: the engine the
// output-error fits use, exposed for checks against certified regression problems (NIST StRD)
// and for any explicit model of a few parameters.
//
// f is written once on CurveJet (a Ceres Jet with room for kCurveFitMaxParameters derivatives);
// only the first b.size() derivative slots are used. The result carries the parameters, their
// standard deviations sd_i = sqrt(C_ii), where C = (J'J)^-1 RSS/(n - p) is Ceres' covariance
// scaled by the residual variance, the residual sum of squares and Ceres' termination.
#ifndef LOOPWRIGHT_IDENTIFY_CURVE_FIT_H_
#define LOOPWRIGHT_IDENTIFY_CURVE_FIT_H_

#include <functional>
#include <span>
#include <string>
#include <vector>

#include <ceres/jet.h>
#include <Eigen/Dense>

#include "identify/ceres_solve.h"

namespace lw {

inline constexpr int kCurveFitMaxParameters = 8;
using CurveJet = ceres::Jet<double, kCurveFitMaxParameters>;
using CurveFunction = std::function<CurveJet(double x, const CurveJet* b)>;

struct CurveFitResult {
  std::vector<double> b;
  std::vector<double> sd;      // NaN when the covariance could not be computed
  Eigen::MatrixXd covariance;  // scaled by RSS / (n - p)
  bool covariance_ok = false;
  std::string rank_deficiency;  // see DescribeRankDeficiency; empty when determined
  double rss = 0.0;
  int iterations = 0;
  bool converged = false;
  std::string termination;
};

// Fits b (start values given, 1..kCurveFitMaxParameters of them) to the pairs (x[i], y[i]).
// Throws UsageError on mismatched sizes or a parameter count outside the range.
CurveFitResult FitCurve(std::span<const double> x, std::span<const double> y,
                        const CurveFunction& f, std::vector<double> start,
                        const SolveOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_CURVE_FIT_H_
