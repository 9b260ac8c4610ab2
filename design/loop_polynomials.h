// The characteristic equation of a loop in which one parameter p enters linearly,
//   a(s) + p b(s) = 0,
// the form every locus and gain band in design/ works on.
//
// For the controller gain K of C(s) = K shape(s) (lti/controller.h) around the plant
// G(s) = Np/Dp exp(-T s) in unity negative feedback, 1 + K shape G = 0 gives
//   a = Dp Dc,  b = Np Nc,   (shape = Nc/Dc)
// with exp(-T s) first replaced by its [n/n] Padé approximant (lti/pade.h) when T > 0: the
// closed-loop poles of a loop with dead time are infinitely many; the rational locus is an
// approximation whose order is always reported (`pade_order`).
//
// Any other parameter that enters linearly fits too, e.g. the zero Z of a PI controller at a
// fixed gain K: s Dp + K (s + Z) Np = (s Dp + K s Np) + Z (K Np), so a = s Dp + K s Np, b = K Np
// (ForPiZero below).
#ifndef LOOPWRIGHT_DESIGN_LOOP_POLYNOMIALS_H_
#define LOOPWRIGHT_DESIGN_LOOP_POLYNOMIALS_H_

#include <complex>
#include <string>
#include <vector>

#include "lti/controller.h"
#include "lti/polynomial.h"
#include "lti/transfer_function.h"

namespace lw {

struct LoopPolynomials {
  Polynomial a;        // the equation at p = 0
  Polynomial b;        // what p multiplies
  int pade_order = 0;  // the Padé order used for the dead time, 0 when there was none
  double delay = 0.0;  // the dead time (s) the approximant stands for

  // Gain K of `controller` around `plant`. pade_order (1..8) is used when the plant has dead
  // time. Throws UsageError for a bad Padé order or an improper loop.
  static LoopPolynomials ForGain(const TransferFunction& plant, const Controller& controller,
                                 int pade_order);
  // The zero Z of a PI controller K (s + Z)/s at the fixed gain K > 0.
  static LoopPolynomials ForPiZero(const TransferFunction& plant, double gain, int pade_order);
  // From a(s) and b(s) directly. Throws UsageError when b is zero or degree(b) > degree(a).
  static LoopPolynomials FromPolynomials(Polynomial a, Polynomial b);

  // a + p b.
  Polynomial Characteristic(double p) const { return a + b * p; }
  // The closed-loop poles at p (roots of a + p b; Polynomial::roots order).
  std::vector<std::complex<double>> PolesAt(double p) const { return Characteristic(p).roots(); }
  // A frequency scale (rad/s) of the problem: the geometric mean magnitude of the nonzero roots
  // of a and b, 1 when there are none. Used to scale sampling ranges. From the coefficients
  // (Vieta: the nonzero roots of c_0 s^n + ... + c_k s^(n-k), c_k the lowest nonzero
  // coefficient, multiply to |c_k / c_0| in magnitude), so no roots are solved for.
  double FrequencyScale() const;
  // Whether a loop that a gain K > 0 makes stable follows r: +1 when it does, -1 when no stable
  // loop with K > 0 does. A stable a + K b has every coefficient of the sign of its leading
  // one, which is a's (degree b < degree a), so the closed loop K b / (a + K b) starts at low
  // frequency with the sign of b's lowest nonzero coefficient times a's leading coefficient
  // (a Padé factor is 1 at s = 0 and has a positive leading denominator coefficient). For an
  // open-loop stable a, whose lowest and leading coefficients share a sign, this is the sign
  // of K C(s) G(s) as s -> 0+: -1 for a reverse-acting plant (more actuator, less output) or a
  // controller zero in the right half-plane. For an unstable plant such as 1/(s - 1), whose
  // G(0) < 0, it is +1: K > 1 makes the loop stable and y follows r (Routh-Hurwitz on
  // s - 1 + K). (A biproper loop, degree b = degree a, is judged at small K.)
  int LowFrequencySign() const;
};

// Empty when loop.LowFrequencySign() > 0; otherwise one sentence saying that no gain K > 0 can
// be designed for it and why: the plant's negative gain, named ("G(0) = -1.5", or
// "G(s) -> -0.8/s as s -> 0"); an unstable plant's coefficient signs; or, when the plant alone
// would follow r, the controller's zeros. A band of such a loop would be a band of positive
// feedback.
std::string PositiveFeedbackNote(const LoopPolynomials& loop, const TransferFunction& plant);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_LOOP_POLYNOMIALS_H_
