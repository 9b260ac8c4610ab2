// Time responses of transfer functions with dead time, exact for sampled (zero-order-hold)
// inputs.
//
// Open loop: the input is held between samples, u(t) = u[i] for t[i] <= t < t[i+1], and the
// output y[k] = y(t[k]) is the exact response of N(s)/D(s) exp(-T s) to it (state-space
// realisation, matrix exponential per distinct interval; the dead time need not be a whole
// number of samples: each interval is split where the delayed input switches).
//
// Closed loop: unity negative feedback of C(s) = K * shape(s) (controller.h) around the plant,
//   e = r - y,  u = C e,  y = G u,
// with the exact dead time inside the loop (a history of u, no Padé). r is held between samples.
#ifndef LOOPWRIGHT_LTI_SIMULATE_H_
#define LOOPWRIGHT_LTI_SIMULATE_H_

#include <span>
#include <vector>

#include "lti/controller.h"
#include "lti/transfer_function.h"

namespace lw {

struct SimulateOptions {
  // How the state starts at t[0]:
  //   kSteadyState: at rest for the constant input u[0] (r[0] in closed loop) when the system has
  //                 a steady state; otherwise (an integrator) the zero state, with y = 0.
  //   kZero:        the zero state.
  enum class Initial { kSteadyState, kZero };
  Initial initial = Initial::kSteadyState;
};

// y(t[k]) for the held input u. t strictly increasing (uniform or not), u.size() == t.size().
// The plant must be proper. Throws UsageError on a violated precondition.
std::vector<double> Simulate(const TransferFunction& plant, std::span<const double> t,
                             std::span<const double> u, const SimulateOptions& options = {});

struct ClosedLoopResponse {
  std::vector<double> u;  // controller output (actuator), at t[k]
  std::vector<double> y;  // plant output, at t[k]
};

// Closed-loop response to the held reference r. The plant must be proper and, when it has dead
// time, strictly proper or the controller strictly proper (no algebraic loop through the delay is
// possible, but D_plant * D_controller = -1 is refused). The exact dead time is kept in the loop;
// between samples the loop is integrated with an internal step no longer than the sample period
// or a tenth of the fastest closed-loop time constant, whichever is smaller (steps longer than
// the dead time solve for their own actuator history; method in simulate.cc and delayed_loop.h).
// A dead time below 1e-9 of the shortest sample interval is treated as zero.
ClosedLoopResponse SimulateClosedLoop(const TransferFunction& plant, const Controller& controller,
                                      double gain, std::span<const double> t,
                                      std::span<const double> r,
                                      const SimulateOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_SIMULATE_H_
