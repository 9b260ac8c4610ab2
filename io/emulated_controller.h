// The controller the rig emulator runs in closed-loop mode: C(s) = K shape(s) (lti/controller.h)
// discretised with the bilinear (Tustin) substitution s = (2/h) (z - 1)/(z + 1), the usual way a
// firmware carries a continuous design to a sampled loop (e.g. Franklin, Powell & Workman,
// Digital Control of Dynamic Systems, chapter 6, from memory). With the realisation
// x' = A x + B e, u = C x + D e of C(s) (lti/state_space.h) and M = (I - A h/2)^-1:
//   x[k+1] = Ad x[k] + Bd e[k],   u[k] = Cd x[k] + Dd e[k],
//   Ad = M (I + A h/2),  Bd = M B h,  Cd = C M,  Dd = D + C M B h/2,
// whose transfer function is C((2/h)(z - 1)/(z + 1)) exactly.
//
// Each sample the firmware computes e[k] = r[k] - y[k] from the measured output, u[k] from the
// equations above, clips u[k] to the actuator range and holds it for one period. The state is
// updated with the unclipped e[k] only (no anti-windup), as lti/saturated_loop.h's loop does.
//
// The switch into closed loop is bumpless where the controller allows it: Start() places the
// state so that the first output equals the actuator value already applied. A controller with an
// integrator (pi, pid) can always do that (its integrator is preloaded); one without (p, lead)
// starts at rest for the first error, so its first output is C(0) e[0] whatever came before.
#ifndef LOOPWRIGHT_IO_EMULATED_CONTROLLER_H_
#define LOOPWRIGHT_IO_EMULATED_CONTROLLER_H_

#include <Eigen/Dense>

#include "lti/controller.h"

namespace lw {

class EmulatedController {
 public:
  // gain K > 0 finite, period h > 0 s. Throws UsageError otherwise.
  EmulatedController(const Controller& controller, double gain, double period);

  // Sets the state for the first sample (see the file comment): first error e0, actuator value
  // held until now u_now.
  void Start(double e0, double u_now);
  // u[k] for e[k]; advances the state to k + 1.
  double Update(double e);

  // The discrete realisation (for tests).
  const Eigen::MatrixXd& ad() const { return ad_; }
  const Eigen::VectorXd& bd() const { return bd_; }
  const Eigen::RowVectorXd& cd() const { return cd_; }
  double dd() const { return dd_; }

 private:
  Eigen::MatrixXd ad_;
  Eigen::VectorXd bd_;
  Eigen::RowVectorXd cd_;
  double dd_ = 0.0;
  Eigen::VectorXd x_;
  Eigen::VectorXd integrator_;  // a state direction with Ad v = v and Cd v != 0, or empty
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_EMULATED_CONTROLLER_H_
