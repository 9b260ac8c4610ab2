// The plant inside the rig emulator (io/rig_emulator.h): a transfer function with dead time
// driven by an actuator that changes only at sample instants, stepped one sample period at a
// time with the exact zero-order-hold discretisation of lti/zoh.h,
//   x[k+1] = Phi x[k] + Gamma_late u[k-m] + Gamma_early u[k-m-1],
// where u[k] is the actuator value held on [k h, (k+1) h) and the dead time T = (m + f) h.
// Between samples nothing is approximated: at the sample instants the states equal those of the
// continuous plant driven by the held actuator (the same results lti/simulate.h's Simulate gives
// for that input).
//
// The measurement at instant k is taken just before the actuator is updated there, as a firmware
// reads its sensor before it writes the new actuator value:
//   y[k] = c x[k] + d u_seen,  u_seen = u[k - output_lag] when output_lag >= 1, else u[k-1].
// For a strictly proper plant (d = 0) this is exactly Simulate's y[k]; only a plant with a direct
// gain and no dead time sees the previous actuator value instead of the new one.
#ifndef LOOPWRIGHT_IO_EMULATED_PLANT_H_
#define LOOPWRIGHT_IO_EMULATED_PLANT_H_

#include <cstdint>
#include <vector>

#include <Eigen/Dense>

#include "lti/transfer_function.h"
#include "lti/zoh.h"

namespace lw {

class EmulatedPlant {
 public:
  // plant proper, period h > 0 s. The plant starts at rest with the actuator at initial_u for
  // all past time when it has a steady state (no pole at the origin); an integrating plant starts
  // from the zero state with the actuator history at initial_u. Throws UsageError for an
  // improper plant or a bad period (lti/zoh.h's rules).
  EmulatedPlant(const TransferFunction& plant, double period, double initial_u);

  // y[k] at the current instant k (see the file comment); noise free.
  double Output() const;
  // Holds u over [k h, (k+1) h) and advances to instant k + 1.
  void Step(double u);
  // The current instant k (0 at construction).
  std::int64_t instant() const { return k_; }
  double period() const { return sampled_.period; }

 private:
  // u[k - lag] from the history (lag >= 1).
  double Past(int lag) const;

  SampledStateSpace sampled_;
  Eigen::VectorXd x_;
  Eigen::VectorXd next_;
  std::vector<double> history_;  // ring of the last history_.size() actuator values
  std::size_t newest_ = 0;       // index of u[k-1] in history_
  std::int64_t k_ = 0;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_EMULATED_PLANT_H_
