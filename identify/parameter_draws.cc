#include "identify/parameter_draws.h"

#include <cmath>
#include <numbers>
#include <random>

#include "lti/error.h"

namespace lw {
namespace {

// Standard normal pairs by Box-Muller from uniform (0, 1] doubles of the Mersenne Twister.
class Normal {
 public:
  explicit Normal(uint64_t seed) : gen_(seed) {}
  double operator()() {
    if (have_) {
      have_ = false;
      return spare_;
    }
    double u1 = Uniform(), u2 = Uniform();
    double r = std::sqrt(-2.0 * std::log(u1));
    spare_ = r * std::sin(2.0 * std::numbers::pi * u2);
    have_ = true;
    return r * std::cos(2.0 * std::numbers::pi * u2);
  }

 private:
  double Uniform() { return (static_cast<double>(gen_() >> 11) + 1.0) * 0x1.0p-53; }
  std::mt19937_64 gen_;
  double spare_ = 0.0;
  bool have_ = false;
};

}  // namespace

ParameterDraws DrawParameters(Structure s, std::span<const double> mean,
                              const Eigen::MatrixXd& covariance, size_t count, uint64_t seed) {
  const int p = ParameterCount(s);
  if (static_cast<int>(mean.size()) != p || covariance.rows() != p || covariance.cols() != p) {
    throw UsageError("parameter draws: expected " + std::to_string(p) +
                     " values and a square covariance of that size for " +
                     std::string(StructureName(s)));
  }
  if (count < 1) throw UsageError("parameter draws: count must be >= 1");
  if (!IsPhysical(s, mean)) throw UsageError("parameter draws: the mean is not physical");
  const double scale = std::max(covariance.cwiseAbs().maxCoeff(), 1e-300);
  if ((covariance - covariance.transpose()).cwiseAbs().maxCoeff() > 1e-9 * scale) {
    throw UsageError("parameter draws: the covariance is not symmetric");
  }
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(covariance);
  if (eig.eigenvalues().minCoeff() < -1e-9 * scale) {
    throw UsageError("parameter draws: the covariance is not positive semi-definite");
  }
  Eigen::MatrixXd l = eig.eigenvectors() * eig.eigenvalues().cwiseMax(0.0).cwiseSqrt().asDiagonal();
  Eigen::Map<const Eigen::VectorXd> mu(mean.data(), p);
  Normal normal(seed);
  ParameterDraws out;
  size_t in_a_row = 0;
  while (out.parameters.size() < count) {
    Eigen::VectorXd z(p);
    for (int i = 0; i < p; ++i) z[i] = normal();
    Eigen::VectorXd x = mu + l * z;
    std::vector<double> v(x.data(), x.data() + p);
    if (!IsPhysical(s, v)) {
      ++out.rejected;
      if (++in_a_row > 100 * count) {
        throw UsageError("parameter draws: almost every draw is unphysical for " +
                         std::string(StructureName(s)));
      }
      continue;
    }
    in_a_row = 0;
    Canonicalize(s, v);
    out.plants.push_back(StructureTransferFunction(s, v));
    out.parameters.push_back(std::move(v));
  }
  return out;
}

}  // namespace lw
