#include "io/emulated_controller.h"

#include <cmath>

#include "lti/error.h"
#include "lti/number_text.h"
#include "lti/state_space.h"

namespace lw {

EmulatedController::EmulatedController(const Controller& controller, double gain, double period) {
  if (!std::isfinite(gain) || gain <= 0.0) {
    throw UsageError("controller gain " + SignificantText(gain, 6) + ": expected a number > 0");
  }
  if (!std::isfinite(period) || period <= 0.0) {
    throw UsageError("controller period " + SignificantText(period, 6) +
                     " s: expected a number > 0");
  }
  const StateSpace ss = Realize(controller.WithGain(gain));
  const int n = ss.order();
  const Eigen::MatrixXd eye = Eigen::MatrixXd::Identity(n, n);
  const Eigen::MatrixXd m = (eye - ss.a * (period / 2.0)).inverse();
  ad_ = m * (eye + ss.a * (period / 2.0));
  bd_ = m * ss.b * period;
  cd_ = ss.c * m;
  dd_ = ss.d + (n > 0 ? (ss.c * m * ss.b)(0, 0) * period / 2.0 : 0.0);
  x_ = Eigen::VectorXd::Zero(n);
  if (n > 0 && HasRootAtOrigin(controller.Shape().den())) {
    // The integrator's direction: the null space of I - Ad (Tustin maps s = 0 to z = 1).
    Eigen::FullPivLU<Eigen::MatrixXd> lu(eye - ad_);
    Eigen::MatrixXd kernel = lu.kernel();
    if (kernel.cols() >= 1 && kernel.col(0).norm() > 0.0) {
      Eigen::VectorXd v = kernel.col(0);
      if (std::abs(cd_.dot(v)) > 1e-12 * cd_.norm() * v.norm()) integrator_ = v;
    }
  }
}

void EmulatedController::Start(double e0, double u_now) {
  const int n = static_cast<int>(x_.size());
  if (n == 0) return;
  if (integrator_.size() > 0) {
    x_ = integrator_ * ((u_now - dd_ * e0) / cd_.dot(integrator_));
    return;
  }
  // At rest for the constant error e0: (I - Ad) x = Bd e0.
  x_ = (Eigen::MatrixXd::Identity(n, n) - ad_).fullPivLu().solve(bd_ * e0);
}

double EmulatedController::Update(double e) {
  if (x_.size() == 0) return dd_ * e;
  const double u = cd_.dot(x_) + dd_ * e;
  x_ = ad_ * x_ + bd_ * e;
  return u;
}

}  // namespace lw
