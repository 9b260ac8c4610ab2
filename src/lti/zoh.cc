#include "lti/zoh.h"

#include <cmath>
#include <string>
#include <utility>

#include <unsupported/Eigen/MatrixFunctions>

#include "lti/error.h"

namespace lw {

HoldBlocks ExactHold(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b, double length,
                     int degree) {
  if (!std::isfinite(length) || length < 0.0) {
    throw UsageError("hold interval length " + std::to_string(length) +
                     " s: expected a finite value >= 0");
  }
  if (degree < 0) {
    throw UsageError("hold input degree " + std::to_string(degree) + ": expected >= 0");
  }
  const Eigen::Index n = a.rows(), m = b.cols();
  const Eigen::Index size = n + m * (degree + 1);
  Eigen::MatrixXd big = Eigen::MatrixXd::Zero(size, size);
  big.topLeftCorner(n, n) = a * length;
  big.block(0, n, n, m) = b * length;
  // Chain v_k' = v_{k+1}: block k feeds block k-1.
  for (int k = 0; k < degree; ++k) {
    big.block(n + k * m, n + (k + 1) * m, m, m) = Eigen::MatrixXd::Identity(m, m) * length;
  }
  const Eigen::MatrixXd e = big.exp();
  HoldBlocks out;
  out.phi = e.topLeftCorner(n, n);
  double factorial = 1.0;
  for (int k = 0; k <= degree; ++k) {
    if (k > 0) factorial *= k;
    out.gamma.push_back(e.block(0, n + k * m, n, m) * factorial);
  }
  return out;
}

HoldCache::HoldCache(Eigen::MatrixXd a, Eigen::MatrixXd b, int degree, double scale,
                     double resolution)
    : a_(std::move(a)), b_(std::move(b)), degree_(degree), unit_(scale * resolution) {}

const HoldBlocks& HoldCache::Get(double length) {
  const auto key = static_cast<int64_t>(std::llround(length / unit_));
  auto it = map_.find(key);
  if (it == map_.end()) it = map_.emplace(key, ExactHold(a_, b_, length, degree_)).first;
  return it->second;
}

SampledStateSpace SampleZoh(const StateSpace& ss, double period, double delay) {
  if (!std::isfinite(period) || period <= 0.0) {
    throw UsageError("sample period " + std::to_string(period) + " s: expected a finite value > 0");
  }
  if (!std::isfinite(delay) || delay < 0.0) {
    throw UsageError("dead time " + std::to_string(delay) + " s: expected a finite value >= 0");
  }
  const double ratio = delay / period;
  if (ratio > 1e9) {
    throw UsageError("dead time " + std::to_string(delay) + " s is more than 1e9 sample periods");
  }
  SampledStateSpace out;
  out.period = period;
  out.c = ss.c;
  out.d = ss.d;
  double whole = std::floor(ratio);
  double f = ratio - whole;
  if (f < 1e-9) f = 0.0;
  if (f > 1.0 - 1e-9) {
    f = 0.0;
    whole += 1.0;
  }
  out.whole_delay = static_cast<int>(whole);
  out.fraction = f;
  const Eigen::MatrixXd b = ss.b;  // n x 1
  if (f == 0.0) {
    HoldBlocks full = ExactHold(ss.a, b, period);
    out.phi = full.phi;
    out.gamma_late = full.gamma[0];
    out.gamma_early = Eigen::VectorXd::Zero(ss.order());
    return out;
  }
  const HoldBlocks early = ExactHold(ss.a, b, f * period);
  const HoldBlocks late = ExactHold(ss.a, b, (1.0 - f) * period);
  out.phi = late.phi * early.phi;
  out.gamma_late = late.gamma[0];
  out.gamma_early = late.phi * early.gamma[0];
  return out;
}

}  // namespace lw
