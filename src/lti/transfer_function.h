// A single-input single-output transfer function with dead time,
//   G(s) = N(s) / D(s) * exp(-T s),   T >= 0 (seconds),
// where N and D are real polynomials in s (descending coefficients, see polynomial.h).
// Time is in seconds throughout loopwright; frequencies are in rad/s.
#ifndef LOOPWRIGHT_LTI_TRANSFER_FUNCTION_H_
#define LOOPWRIGHT_LTI_TRANSFER_FUNCTION_H_

#include <complex>
#include <string>
#include <vector>

#include "lti/polynomial.h"

namespace lw {

class TransferFunction {
 public:
  // G(s) = 1.
  TransferFunction();
  // Throws UsageError when den is zero, delay is negative or not finite. The pair is normalised
  // so that den's leading coefficient is 1 (num scaled to match); no pole-zero cancellation.
  TransferFunction(Polynomial num, Polynomial den, double delay = 0.0);
  TransferFunction(std::vector<double> num, std::vector<double> den, double delay = 0.0);

  const Polynomial& num() const { return num_; }
  const Polynomial& den() const { return den_; }
  double delay() const { return delay_; }

  // Roots of den and num (see Polynomial::roots for the order).
  std::vector<std::complex<double>> poles() const;
  std::vector<std::complex<double>> zeros() const;
  // G(0) = N(0)/D(0): +inf or -inf when D(0) = 0 (an integrator) and N(0) != 0.
  double dc_gain() const;
  // Number of poles at the origin (|root| <= 1e-12 * scale of the coefficients).
  int integrators() const;
  // degree(den) - degree(num).
  int relative_degree() const { return den_.degree() - num_.degree(); }
  bool is_proper() const { return relative_degree() >= 0; }
  bool is_strictly_proper() const { return relative_degree() > 0; }
  // Every pole strictly in the left half plane.
  bool is_stable() const;

  // G(s) including the exp(-T s) factor.
  std::complex<double> operator()(std::complex<double> s) const;
  // G(j w).
  std::complex<double> frequency_response(double w) const;

  // G * H: numerators and denominators multiply, delays add (exact).
  TransferFunction Series(const TransferFunction& h) const;
  TransferFunction operator*(const TransferFunction& h) const { return Series(h); }
  TransferFunction operator*(double k) const;
  // The same rational part with the delay replaced.
  TransferFunction WithDelay(double delay) const;
  // The rational part alone (delay 0). Callers that need it say so by calling this.
  TransferFunction Rational() const { return WithDelay(0.0); }

  // "N(s)/D(s)" with " * exp(-T*s)" when T > 0; the plant formula parser reads it back.
  std::string ToString() const;

 private:
  Polynomial num_;
  Polynomial den_;
  double delay_ = 0.0;
};

// Unity negative feedback around an open loop L(s) = N(s)/D(s) exp(-T s):
//   Y/R = L / (1 + L) = N exp(-T s) / (D(s) + N(s) exp(-T s)).
// With T = 0 this is rational and exact: N / (D + N). With T > 0 it is not rational; the dead
// time is kept (evaluation is exact) and a rational form is only given through an explicit Padé
// order, never silently.
class UnityFeedback {
 public:
  explicit UnityFeedback(TransferFunction open_loop);

  const TransferFunction& open_loop() const { return open_loop_; }
  bool is_rational() const { return open_loop_.delay() == 0.0; }

  // Y/R at s, exact (dead time included).
  std::complex<double> operator()(std::complex<double> s) const;
  // The exact closed loop N/(D+N); throws UsageError when the loop has dead time.
  TransferFunction Exact() const;
  // The closed loop with exp(-T s) replaced by its Padé approximant of the given order (1..8)
  // before closing the loop; equals Exact() when T = 0.
  TransferFunction WithPade(int order) const;
  // Characteristic polynomial D + N of the rational loop (Padé of `order` applied first when the
  // loop has dead time; order is ignored when T = 0).
  Polynomial CharacteristicPolynomial(int pade_order = 0) const;

 private:
  TransferFunction open_loop_;
};

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_TRANSFER_FUNCTION_H_
