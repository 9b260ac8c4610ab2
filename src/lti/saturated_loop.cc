#include "lti/saturated_loop.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include <Eigen/Dense>

#include "lti/error.h"
#include "lti/state_space.h"

namespace lw {
namespace {

double Clip(double v, ActuatorLimits limits) { return std::clamp(v, limits.low, limits.high); }

double LargestRate(const Eigen::MatrixXd& a) {
  if (a.rows() == 0) return 0.0;
  Eigen::EigenSolver<Eigen::MatrixXd> eig(a, /*computeEigenvectors=*/false);
  double largest = 0.0;
  for (int i = 0; i < eig.eigenvalues().size(); ++i) {
    largest = std::max(largest, std::abs(eig.eigenvalues()(i)));
  }
  return largest;
}

// The clipped loop: state z = [controller state; plant state].
class Loop {
 public:
  Loop(const StateSpace& ctl, const StateSpace& plant, double delay, ActuatorLimits limits)
      : ctl_(ctl), plant_(plant), delay_(delay), limits_(limits) {
    nc_ = static_cast<int>(ctl_.a.rows());
    np_ = static_cast<int>(plant_.a.rows());
  }

  int size() const { return nc_ + np_; }

  // The unclipped loop without dead time, z' = A z + B r (for the start and the time scale).
  void Linear(Eigen::MatrixXd& a, Eigen::VectorXd& b) const {
    const double k = 1.0 / (1.0 + ctl_.d * plant_.d);
    // u = k (Cc xc - Dc Cp xp + Dc r); e = r - Cp xp - Dp u.
    Eigen::RowVectorXd du(size());
    du << k * ctl_.c, -k * ctl_.d * plant_.c;
    const double dur = k * ctl_.d;
    Eigen::RowVectorXd de(size());
    de << Eigen::RowVectorXd::Zero(nc_), -plant_.c;
    de -= plant_.d * du;
    const double der = 1.0 - plant_.d * dur;
    a = Eigen::MatrixXd::Zero(size(), size());
    b = Eigen::VectorXd::Zero(size());
    a.topRows(nc_) = ctl_.b * de;
    a.topLeftCorner(nc_, nc_) += ctl_.a;
    b.head(nc_) = ctl_.b * der;
    a.bottomRows(np_) = plant_.b * du;
    a.bottomRightCorner(np_, np_) += plant_.a;
    b.tail(np_) = plant_.b * dur;
  }

  // The actuator of the unclipped loop without dead time (solving u = Cc xc + Dc (r - y) with
  // y = Cp xp + Dp u).
  double UnclippedActuator(const Eigen::VectorXd& z, double r) const {
    const double k = 1.0 / (1.0 + ctl_.d * plant_.d);
    return k * (ctl_.c.dot(z.head(nc_)) - ctl_.d * plant_.c.dot(z.tail(np_)) + ctl_.d * r);
  }

  double Output(const Eigen::VectorXd& z, double u_delayed) const {
    return plant_.c.dot(z.tail(np_)) + plant_.d * u_delayed;
  }
  double Actuator(const Eigen::VectorXd& z, double r, double y) const {
    return Clip(ctl_.c.dot(z.head(nc_)) + ctl_.d * (r - y), limits_);
  }

  // z' for the held reference r and the delayed actuator value (ignored without dead time).
  Eigen::VectorXd Derivative(const Eigen::VectorXd& z, double r, double u_delayed) const {
    Eigen::VectorXd dz(size());
    double y, u_in;
    if (delay_ > 0.0) {
      y = Output(z, u_delayed);
      u_in = u_delayed;
    } else {
      y = plant_.c.dot(z.tail(np_));  // no feedthrough without dead time (checked)
      u_in = Actuator(z, r, y);
    }
    dz.head(nc_) = ctl_.a * z.head(nc_) + ctl_.b * (r - y);
    dz.tail(np_) = plant_.a * z.tail(np_) + plant_.b * u_in;
    return dz;
  }

 private:
  StateSpace ctl_, plant_;
  double delay_;
  ActuatorLimits limits_;
  int nc_ = 0, np_ = 0;
};

// u at time tau from the history (times non-decreasing; a repeated time holds the values just
// before and just after a jump of r), linear between points, `before` ahead of the first point.
class History {
 public:
  explicit History(double before) : before_(before) {}
  void Add(double t, double u) {
    t_.push_back(t);
    u_.push_back(u);
  }
  // The value at tau; at a jump (a repeated time, or tau within 1e-9 relative of a point) the
  // value just after it, or just before it when `left`.
  double At(double tau, bool left = false) const {
    const double eps = 1e-9 * std::max(1.0, std::abs(tau));
    if (t_.empty() || tau < t_.front() - eps) return before_;
    if (left) {
      size_t i =
          static_cast<size_t>(std::lower_bound(t_.begin(), t_.end(), tau - eps) - t_.begin());
      if (i >= t_.size()) return u_.back();
      if (std::abs(t_[i] - tau) <= eps || i == 0) return u_[i];
      return Interpolate(i - 1, i, tau);
    }
    size_t i = static_cast<size_t>(std::upper_bound(t_.begin(), t_.end(), tau + eps) - t_.begin());
    size_t j = i - 1;  // i >= 1: t_.front() <= tau + eps
    if (i >= t_.size() || std::abs(t_[j] - tau) <= eps) return u_[j];
    return Interpolate(j, i, tau);
  }

 private:
  double Interpolate(size_t j, size_t i, double tau) const {
    double span = t_[i] - t_[j];
    if (span <= 0.0) return u_[i];
    return u_[j] + (tau - t_[j]) / span * (u_[i] - u_[j]);
  }

  double before_;
  std::vector<double> t_, u_;
};

}  // namespace

SaturatedLoopResponse SimulateSaturatedLoop(const TransferFunction& plant,
                                            const Controller& controller, double gain,
                                            std::span<const double> t, std::span<const double> r,
                                            ActuatorLimits limits, const SimulateOptions& options) {
  if (!(std::isfinite(limits.low) && std::isfinite(limits.high) && limits.low < limits.high)) {
    throw UsageError("actuator limits need LO < HI, both finite numbers");
  }
  SaturatedLoopResponse out;
  out.response = SimulateClosedLoop(plant, controller, gain, t, r, options);
  const auto& u_free = out.response.u;
  out.limits_reached = std::any_of(u_free.begin(), u_free.end(),
                                   [&](double u) { return u < limits.low || u > limits.high; });
  if (!out.limits_reached) return out;

  const StateSpace ctl = Realize(controller.WithGain(gain));
  const StateSpace pl = Realize(plant);
  const double delay = plant.delay();
  if (delay == 0.0 && pl.d != 0.0) {
    throw UsageError(
        "--saturate in a closed loop needs a strictly proper plant or a dead time (the plant "
        "passes its input straight to its output, so the clipped loop has no unique solution)");
  }
  Loop loop(ctl, pl, delay, limits);
  Eigen::MatrixXd a_cl;
  Eigen::VectorXd b_cl;
  loop.Linear(a_cl, b_cl);

  // Start: at rest for r[0] when the unclipped loop has a steady state, else the zero state.
  Eigen::VectorXd z = Eigen::VectorXd::Zero(loop.size());
  bool at_rest = false;
  if (options.initial == SimulateOptions::Initial::kSteadyState && loop.size() > 0) {
    Eigen::FullPivLU<Eigen::MatrixXd> lu(a_cl);
    if (lu.isInvertible()) {
      z = lu.solve(-b_cl * r[0]);
      at_rest = true;
    }
  }
  // The actuator before t[0]: its resting value, or 0 from the zero state.
  double u_before = at_rest ? Clip(loop.UnclippedActuator(z, r[0]), limits) : 0.0;

  // Internal step: no longer than the shortest sample interval, the dead time and 1/20 of the
  // fastest time constant.
  double h_max = std::numeric_limits<double>::infinity();
  for (size_t k = 1; k < t.size(); ++k) h_max = std::min(h_max, t[k] - t[k - 1]);
  if (delay > 0.0) h_max = std::min(h_max, delay);
  double rate = std::max({LargestRate(a_cl), LargestRate(ctl.a), LargestRate(pl.a)});
  if (rate > 0.0) h_max = std::min(h_max, 1.0 / (20.0 * rate));

  History history(u_before);
  auto& y_out = out.response.y;
  auto& u_out = out.response.u;
  const size_t n = t.size();
  for (size_t k = 0; k < n; ++k) {
    // The sample at t[k] with r[k].
    double ud = delay > 0.0 ? history.At(t[k] - delay) : 0.0;
    double y = delay > 0.0 ? loop.Output(z, ud) : loop.Output(z, 0.0);
    double u = loop.Actuator(z, r[k], y);
    y_out[k] = y;
    u_out[k] = u;
    history.Add(t[k], u);
    if (k + 1 == n) break;
    const double span = t[k + 1] - t[k];
    const long steps = std::max(1L, static_cast<long>(std::ceil(span / h_max - 1e-9)));
    const double h = span / static_cast<double>(steps);
    for (long s = 0; s < steps; ++s) {
      const double t0 = t[k] + h * static_cast<double>(s);
      // The delayed actuator is taken just after t0 and just before t0 + h, so a jump at
      // either end of the step stays outside it.
      auto f = [&](const Eigen::VectorXd& zz, double tt, bool left) {
        return loop.Derivative(zz, r[k], delay > 0.0 ? history.At(tt - delay, left) : 0.0);
      };
      Eigen::VectorXd k1 = f(z, t0, false);
      Eigen::VectorXd k2 = f(z + 0.5 * h * k1, t0 + 0.5 * h, false);
      Eigen::VectorXd k3 = f(z + 0.5 * h * k2, t0 + 0.5 * h, false);
      Eigen::VectorXd k4 = f(z + h * k3, t0 + h, true);
      z += (h / 6.0) * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
      const double t1 = s + 1 == steps ? t[k + 1] : t0 + h;
      double ud1 = delay > 0.0 ? history.At(t1 - delay) : 0.0;
      history.Add(t1, loop.Actuator(z, r[k], loop.Output(z, ud1)));
    }
    out.internal_steps += steps;
  }
  return out;
}

}  // namespace lw
