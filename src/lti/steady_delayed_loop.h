// The dead-time closed loop of delayed_loop.h over a stretch where every internal step is alike:
// equal steps of length h <= T, the reference r held, and no non-smooth point of u left to come
// back through the delay (every stored piece the delay can still reach is smooth). Then one
// internal step is the same linear map every time. Internal to lw_lti (used by
// SimulateClosedLoop); not part of the public manual.
//
// With T = M h + phi (M >= 1 whole steps, 0 <= phi < h), the delayed signal w(t) = u(t - T) over
// step s reads two stored cubics of u: piece s - M - 1 for the first phi seconds and piece s - M
// for the rest (only piece s - M when phi = 0). Writing each piece in its own normalised time
// sigma = (t - start) / h in [0, 1), c = its four coefficients, the step is
//   [z_{s+1}; c_s] = G [z_s; c_{s-M-1}; c_{s-M}; r],
// where G composes exactly what DelayedLoop::Step does for such a step: the Van Loan hold blocks
// (zoh.h) of each part between the nodes s h + {0, 1/3, 2/3, 1} h and the switch point s h + phi,
// u at the four nodes, and the cubic through them. The arithmetic is the same map in another
// order, so the two agree to rounding; G costs (N + 4)(N + 9) multiply-adds per step for N loop
// states, no lookups and no allocation. y and u at the step's start are two more rows.
#ifndef LOOPWRIGHT_LTI_STEADY_DELAYED_LOOP_H_
#define LOOPWRIGHT_LTI_STEADY_DELAYED_LOOP_H_

#include <array>
#include <cstddef>
#include <functional>
#include <vector>

#include <Eigen/Dense>

#include "lti/delayed_loop.h"
#include "lti/zoh.h"

namespace lw {

class SteadyDelayedLoop {
 public:
  using Cubic = std::array<double, 4>;  // coefficients in sigma^k, sigma = (t - start) / h

  // delay T > 0 and step h > 0. usable() is false when h is longer than T (such steps read
  // their own u: DelayedLoop's implicit steps); phi within 1e-9 h of 0 or h counts as 0.
  // `blocks` gives the degree-3 hold blocks of m for a part's length (DelayedLoop::Blocks, so
  // the parts the loop has already stepped reuse its blocks).
  SteadyDelayedLoop(const LoopModel& m, double delay, double h,
                    const std::function<const HoldBlocks&(double)>& blocks);

  bool usable() const { return usable_; }
  // How many stored pieces Run needs: M + 1, those of the steps before the first one.
  std::size_t history() const { return static_cast<std::size_t>(whole_) + 1; }

  // From state z at the start of step 0 and the pieces of steps -M-1 .. -1 (oldest first,
  // normalised), writes y and u at the start of steps 0, per_sample, 2 per_sample, ... into
  // y[i], u[i] for i < samples (the last sample's steps are not taken).
  void Run(const Eigen::VectorXd& z, const std::vector<Cubic>& pieces, double r, long per_sample,
           std::size_t samples, double* y, double* u) const;

 private:
  bool usable_ = false;
  int n_ = 0;                   // loop states N
  int whole_ = 0;               // M
  int rows_ = 0;                // N + 4
  int cols_ = 0;                // N + 9: z, the older piece, the newer piece, r
  std::vector<double> g_;       // rows_ x cols_, column-major
  Eigen::RowVectorXd y0_, u0_;  // y and u at the step's start, on the same columns
};

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_STEADY_DELAYED_LOOP_H_
