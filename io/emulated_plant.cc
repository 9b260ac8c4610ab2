#include "io/emulated_plant.h"

#include "lti/error.h"
#include "lti/state_space.h"

namespace lw {

EmulatedPlant::EmulatedPlant(const TransferFunction& plant, double period, double initial_u) {
  if (!plant.is_proper()) {
    throw UsageError("the emulated plant " + plant.ToString() +
                     " is improper (more zeros than poles)");
  }
  const StateSpace ss = Realize(plant);
  sampled_ = SampleZoh(ss, period, plant.delay());
  if (ss.order() > 0 && !HasRootAtOrigin(plant.den())) {
    x_ = SteadyState(ss, initial_u);
  } else {
    x_ = Eigen::VectorXd::Zero(ss.order());
  }
  next_.resize(x_.size());
  // u[k - m - 1] is the oldest value a step reads, u[k-1] the newest the measurement may read.
  history_.assign(static_cast<std::size_t>(sampled_.whole_delay) + 2, initial_u);
}

double EmulatedPlant::Past(int lag) const {
  const std::size_t n = history_.size();
  return history_[(newest_ + n - static_cast<std::size_t>(lag - 1)) % n];
}

double EmulatedPlant::Output() const {
  double y = x_.size() > 0 ? sampled_.c.dot(x_) : 0.0;
  if (sampled_.d != 0.0) {
    const int lag = sampled_.output_lag();
    y += sampled_.d * Past(lag >= 1 ? lag : 1);
  }
  return y;
}

void EmulatedPlant::Step(double u) {
  newest_ = (newest_ + 1) % history_.size();
  history_[newest_] = u;  // now u[k] is the newest: Past(1) is u[k] after this line
  if (x_.size() > 0) {
    const int m = sampled_.whole_delay;
    // Past(j) here is u[k + 1 - j].
    next_.noalias() = sampled_.phi * x_;
    next_ += sampled_.gamma_late * Past(m + 1);
    if (sampled_.fraction > 0.0) next_ += sampled_.gamma_early * Past(m + 2);
    x_.swap(next_);
  }
  ++k_;
}

}  // namespace lw
