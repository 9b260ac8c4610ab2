// The roots of the one-parameter family p_k(s) = a(s) + k b(s) (real polynomials, k real) at a
// sequence of values of k that mostly change little from one call to the next: a root locus
// walked along k. Each answer equals what Polynomial(a + k b).roots() returns (all degree()
// roots, sorted by real part then imaginary part, conjugate pairs exact, roots at the origin
// exactly 0) to the rounding level of the coefficients; it is only found faster.
//
// Method. The roots at the previous k, each moved by its first-order change
//   dr = -(k - k_prev) b(r) / p'_{k_prev}(r)      (implicit function theorem)
// when that move is under a quarter of the distance to the nearest other root, start the
// Aberth-Ehrlich simultaneous iteration (O. Aberth, Math. Comp. 27, 1973; L. W. Ehrlich,
// Comm. ACM 10, 1967; from memory)
//   r_i <- r_i - w_i / (1 - w_i sum_{j != i} 1 / (r_i - r_j)),   w_i = p(r_i) / p'(r_i),
// which converges cubically to simple roots from close starting values. It runs on the real
// roots and the upper half-plane roots only, the lower ones being their exact conjugates, so a
// real root stays real and a pair stays an exact pair. A root is done when |p(r)| is down to the
// rounding level of evaluating p there (4 eps sum_k |c_k| |r|^k, the rule Polynomial::roots()
// polishes to). The result is accepted only when every root is done within 30 sweeps, no two
// roots are closer than 1e-6 of their size, and the roots' sum matches the coefficients (Vieta)
// to 1e-9; otherwise the roots come from Polynomial::roots() (companion eigenvalues). That is
// what happens on the first call, when the degree changes, where two real roots meet and leave
// as a complex pair or the reverse (the real/pair pattern cannot change inside the iteration),
// and after a jump in k too large for the starting values.
//
// Not thread-safe: one tracker per thread. Holds no reference to a or b after construction.
#ifndef LOOPWRIGHT_LTI_ROOT_TRACKER_H_
#define LOOPWRIGHT_LTI_ROOT_TRACKER_H_

#include <complex>
#include <vector>

#include "lti/polynomial.h"

namespace lw {

class RootTracker {
 public:
  RootTracker(const Polynomial& a, const Polynomial& b);

  // All roots of a + k b (k finite). The reference stays valid until the next call.
  const std::vector<std::complex<double>>& RootsAt(double k);

  // How many calls were answered by the iteration (warm) and by the eigenvalues (cold).
  int warm_solves() const { return warm_; }
  int cold_solves() const { return cold_; }

 private:
  bool Iterate();          // Aberth-Ehrlich from real_ / pair_; true when accepted
  void Predict(double k);  // move real_ / pair_ from k_ to k (first order)
  void Publish();          // real_ / pair_ (and the zeros at the origin) -> roots_, sorted
  void Cold();             // roots_ from the eigenvalues; real_ / pair_ from roots_

  std::vector<double> a_, b_;  // ascending powers, same length
  std::vector<double> c_;      // descending coefficients of a + k b at the last k
  size_t lo_ = 0;              // c_[lo_] is the first nonzero coefficient
  int degree_ = -1;            // of c_ without trailing zeros (roots at the origin split off)
  int zeros_ = 0;              // roots at the origin
  bool have_ = false;          // real_ / pair_ hold roots at k_
  double k_ = 0.0;
  std::vector<double> real_;                // real roots (nonzero)
  std::vector<std::complex<double>> pair_;  // one of each complex pair, Im > 0
  std::vector<std::complex<double>> roots_;
  std::vector<double> near_;  // Predict's scratch
  int warm_ = 0, cold_ = 0;
};

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_ROOT_TRACKER_H_
