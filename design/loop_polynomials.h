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
  // The sign of b(s)/a(s) as s -> 0+, from their lowest nonzero coefficients (a Padé factor is 1
  // there): +1 when a gain K > 0 closes a negative feedback loop at low frequency, -1 when the
  // plant (a reverse-acting process: more actuator, less output) or the controller shape
  // reverses it, so that every K > 0 feeds back positively and drives y away from r.
  int LowFrequencySign() const;
};

// Empty when loop.LowFrequencySign() > 0; otherwise one sentence saying that no gain K > 0 can
// be designed for it, naming the plant's low-frequency gain ("G(0) = -1.5", or
// "G(s) -> -0.8/s as s -> 0"). A band of such a loop would be a band of positive feedback.
std::string PositiveFeedbackNote(const LoopPolynomials& loop, const TransferFunction& plant);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_LOOP_POLYNOMIALS_H_
