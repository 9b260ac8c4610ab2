#include "identify/curve_fit.h"

#include <cmath>
#include <limits>
#include <utility>

#include <ceres/ceres.h>

#include "lti/error.h"

namespace lw {
namespace {

class CurveCost : public ceres::CostFunction {
 public:
  CurveCost(std::span<const double> x, std::span<const double> y, const CurveFunction& f, int p)
      : x_(x), y_(y), f_(f), p_(p) {
    set_num_residuals(static_cast<int>(x.size()));
    mutable_parameter_block_sizes()->push_back(p);
  }
  bool Evaluate(double const* const* params, double* residuals, double** jacobians) const override {
    CurveJet b[kCurveFitMaxParameters];
    for (int j = 0; j < p_; ++j) b[j] = CurveJet(params[0][j], j);
    double* jac = jacobians ? jacobians[0] : nullptr;
    for (size_t i = 0; i < x_.size(); ++i) {
      CurveJet v = f_(x_[i], b);
      residuals[i] = v.a - y_[i];
      if (!std::isfinite(residuals[i])) return false;
      if (jac) {
        for (int j = 0; j < p_; ++j) jac[i * p_ + j] = v.v[j];
      }
    }
    return true;
  }
  Eigen::MatrixXd Normal(const std::vector<double>& b_in) const {
    std::vector<double> r(x_.size()), jac(x_.size() * p_);
    const double* params[] = {b_in.data()};
    double* jacs[] = {jac.data()};
    Evaluate(params, r.data(), jacs);
    Eigen::Map<Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>> j(
        jac.data(), static_cast<Eigen::Index>(x_.size()), p_);
    return j.transpose() * j;
  }

 private:
  std::span<const double> x_, y_;
  const CurveFunction& f_;
  int p_;
};

}  // namespace

CurveFitResult FitCurve(std::span<const double> x, std::span<const double> y,
                        const CurveFunction& f, std::vector<double> start,
                        const SolveOptions& options) {
  const int p = static_cast<int>(start.size());
  if (p < 1 || p > kCurveFitMaxParameters) {
    throw UsageError("curve fit: expected 1 to " + std::to_string(kCurveFitMaxParameters) +
                     " parameters, got " + std::to_string(p));
  }
  if (x.size() != y.size()) throw UsageError("curve fit: x and y differ in length");
  CurveFitResult result;
  result.b = std::move(start);
  const std::vector<bool> fixed(p, false);
  const double inf = std::numeric_limits<double>::infinity();
  const std::vector<double> lower(p, -inf), upper(p, inf);
  CeresRun run =
      RunCeres(new CurveCost(x, y, f, p), result.b, fixed, lower, upper, options, x.size());
  result.rss = run.rss;
  result.iterations = run.iterations;
  result.converged = run.converged;
  result.termination = run.termination;
  result.sd.assign(p, std::numeric_limits<double>::quiet_NaN());
  const long dof = static_cast<long>(x.size()) - p;
  if (!options.compute_covariance || !run.usable || dof <= 0) return result;
  std::vector<std::string> names;
  for (int j = 0; j < p; ++j) {
    std::string name = std::to_string(j + 1);  // "b" + to_string trips GCC 12's -Wrestrict
    name.insert(name.begin(), 'b');
    names.push_back(std::move(name));
  }
  CurveCost probe(x, y, f, p);
  result.rank_deficiency = DescribeRankDeficiency(probe.Normal(result.b), fixed, names);
  Eigen::MatrixXd c;
  result.covariance_ok = CeresCovariance(new CurveCost(x, y, f, p), result.b, fixed, c);
  result.covariance = c * (result.rss / static_cast<double>(dof));
  if (result.covariance_ok) {
    for (int j = 0; j < p; ++j) result.sd[j] = std::sqrt(result.covariance(j, j));
  }
  return result;
}

}  // namespace lw
