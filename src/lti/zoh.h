// Exact discretisation of x' = A x + B v(t) over one interval when the input is held
// (zero-order hold) or, more generally, is a polynomial in time over the interval.
//
// Van Loan's block exponential (C. F. Van Loan, "Computing integrals involving the matrix
// exponential", IEEE Trans. Automatic Control 23(3), 1978; from memory): for a polynomial input
// v(sigma) = sum_{k=0..p} v_k sigma^k on 0 <= sigma <= L (v_k in R^m),
//   x(L) = Phi(L) x(0) + sum_k Gamma_k(L) v_k,
//   Phi(L) = exp(A L),   Gamma_k(L) = int_0^L exp(A (L - sigma)) B sigma^k dsigma,
// and every block is read off one exponential of the upper block-triangular matrix
//   M = [ A  B  0 ... 0 ;  0  J ],   J = the nilpotent shift on (v, v', ..., v^(p)),
// whose first n rows of exp(M L) are [Phi, G_0, ..., G_p] with Gamma_k = k! G_k. Eigen's
// unsupported MatrixFunctions computes exp(M L) (scaling and squaring with a Padé approximant).
//
// Zero-order hold with a dead time T = (m + f) h, m whole samples, 0 <= f < 1 (the
// split-interval form of the modified z-transform; e.g. Åström & Wittenmark, Computer-Controlled
// Systems, chapter 2, from memory). The plant sees v(t) = u(t - T) with u held between samples,
// so within [k h, (k+1) h) the delayed input is u[k-m-1] for the first f h seconds and u[k-m]
// for the remaining (1 - f) h seconds:
//   x[k+1] = Phi x[k] + Gamma_late u[k-m] + Gamma_early u[k-m-1],
//   Phi         = exp(A h),
//   Gamma_late  = int_0^{(1-f)h} exp(A s) ds B,
//   Gamma_early = exp(A (1-f) h) int_0^{f h} exp(A s) ds B,
//   y[k] = c x[k] + d u(k h - T),  with u(k h - T) = u[k-m] when f = 0 and u[k-m-1] otherwise
// (the held input is right-continuous: u(t) = u[i] for t[i] <= t < t[i+1]).
#ifndef LOOPWRIGHT_LTI_ZOH_H_
#define LOOPWRIGHT_LTI_ZOH_H_

#include <cstdint>
#include <unordered_map>
#include <vector>

#include <Eigen/Dense>

#include "lti/state_space.h"

namespace lw {

struct HoldBlocks {
  Eigen::MatrixXd phi;                 // exp(A L), n x n
  std::vector<Eigen::MatrixXd> gamma;  // gamma[k] = Gamma_k(L), n x m, k = 0..degree
};

// The blocks above for x' = a x + b v, interval length >= 0 and input polynomial degree >= 0.
// Throws UsageError on a negative or non-finite length or a negative degree.
HoldBlocks ExactHold(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b, double length,
                     int degree = 0);

// ExactHold blocks cached by interval length, rounded to `resolution` times the longest length
// that will be asked for (`scale`): a length within that of a cached one reuses its blocks.
// Lengths are differences of absolute times, which carry rounding of order 1e-16 |t|; rounding
// against the scale rather than the length itself lets a long record at a fixed rate reuse a
// handful of entries.
class HoldCache {
 public:
  HoldCache(Eigen::MatrixXd a, Eigen::MatrixXd b, int degree, double scale, double resolution);
  const HoldBlocks& Get(double length);

 private:
  Eigen::MatrixXd a_, b_;
  int degree_;
  double unit_;
  std::unordered_map<int64_t, HoldBlocks> map_;
};

// A state-space model sampled with a zero-order hold and a dead time (equations above).
struct SampledStateSpace {
  Eigen::MatrixXd phi;
  Eigen::VectorXd gamma_late;   // multiplies u[k - whole_delay]
  Eigen::VectorXd gamma_early;  // multiplies u[k - whole_delay - 1]; zero when fraction == 0
  Eigen::RowVectorXd c;
  double d = 0.0;
  double period = 0.0;    // h, s
  int whole_delay = 0;    // m
  double fraction = 0.0;  // f in [0, 1); values within 1e-9 of 0 or 1 are snapped to a whole m
  // y[k] uses u[k - output_lag]: whole_delay when fraction == 0, whole_delay + 1 otherwise.
  int output_lag() const { return fraction > 0.0 ? whole_delay + 1 : whole_delay; }
};

// Exact ZOH sampling of ss with period h > 0 and dead time T >= 0 (both finite, s). Throws
// UsageError otherwise, or when T / h exceeds 1e9 samples.
SampledStateSpace SampleZoh(const StateSpace& ss, double period, double delay);

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_ZOH_H_
