// State-space realisation of the rational part of a transfer function,
//   x'(t) = A x(t) + b u(t),   y(t) = c x(t) + d u(t),
// with N(s)/D(s) = c (sI - A)^-1 b + d exactly.
//
// Realisation used by Realize(): the controllable canonical (companion) form of the monic
// denominator D(s) = s^n + a1 s^(n-1) + ... + an,
//   A = [-a1 -a2 ... -an; 1 0 ... 0; 0 1 ... 0; ...],  b = e1,
//   c = coefficients of the strictly proper remainder N(s) - d D(s),  d = N's s^n coefficient,
// followed by a diagonal similarity A <- S^-1 A S that balances the row and column norms of A
// (Parlett & Reinsch's balancing as in LAPACK's xGEBAL, from memory) and a last scaling that
// gives b and c equal norms. Every scale factor is a power of two, so the balancing changes no
// rounding of the transfer function; it removes the large spread of companion-form entries that
// makes the matrix exponential lose accuracy when the poles span decades. The states of this
// realisation have no physical meaning; only y and the transfer function do.
#ifndef LOOPWRIGHT_LTI_STATE_SPACE_H_
#define LOOPWRIGHT_LTI_STATE_SPACE_H_

#include <Eigen/Dense>

#include "lti/transfer_function.h"

namespace lw {

struct StateSpace {
  Eigen::MatrixXd a;     // n x n (n = degree of D; 0 for a static gain)
  Eigen::VectorXd b;     // n
  Eigen::RowVectorXd c;  // n
  double d = 0.0;

  int order() const { return static_cast<int>(a.rows()); }
};

// Realisation of g.Rational() as described above (the dead time is ignored: callers delay the
// input themselves). Throws UsageError when g is improper (degree N > degree D).
StateSpace Realize(const TransferFunction& g);

// True when p(0) is zero to 1e-12 times p's largest coefficient magnitude, i.e. p has a root at
// the origin (the same test TransferFunction::integrators() documents).
bool HasRootAtOrigin(const Polynomial& p);

// The equilibrium x with A x + b u = 0 for the constant input u. Precondition: A is invertible
// (g has no pole at the origin); throws UsageError otherwise.
Eigen::VectorXd SteadyState(const StateSpace& ss, double u);

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_STATE_SPACE_H_
