// Real polynomials in s, stored in descending powers:
//   p(s) = c[0] s^n + c[1] s^(n-1) + ... + c[n].
// This is the order every file and JSON document of loopwright uses for "num" and "den".
#ifndef LOOPWRIGHT_LTI_POLYNOMIAL_H_
#define LOOPWRIGHT_LTI_POLYNOMIAL_H_

#include <complex>
#include <string>
#include <vector>

namespace lw {

class Polynomial {
 public:
  // The zero polynomial (degree -1).
  Polynomial();
  // From coefficients in descending powers. Leading zeros are trimmed; an empty or all-zero vector
  // gives the zero polynomial. Throws UsageError on a NaN or infinite coefficient.
  explicit Polynomial(std::vector<double> descending);
  // The constant polynomial c.
  static Polynomial Constant(double c);
  // leading * prod (s - r_i). Complex roots must come in conjugate pairs (to 1e-9 relative);
  // the imaginary parts of the product are discarded. Throws UsageError otherwise.
  static Polynomial FromRoots(const std::vector<std::complex<double>>& roots,
                              double leading = 1.0);

  // Degree; -1 for the zero polynomial.
  int degree() const { return static_cast<int>(c_.size()) - 1; }
  bool is_zero() const { return c_.empty(); }
  // Descending coefficients, leading one nonzero (empty for the zero polynomial).
  const std::vector<double>& coefficients() const { return c_; }
  // Coefficient of s^k (0 when k > degree()).
  double coefficient(int k) const;
  double leading() const { return c_.empty() ? 0.0 : c_.front(); }

  // Horner evaluation.
  double operator()(double s) const;
  std::complex<double> operator()(std::complex<double> s) const;

  Polynomial derivative() const;

  // All degree() roots, as eigenvalues of the companion matrix (Eigen), each then polished by
  // a few Newton steps on p when that lowers |p(r)|. Sorted by real part, then imaginary part;
  // conjugate pairs are returned as exact conjugates. Repeated roots of multiplicity m come back
  // with the usual perturbation of order eps^(1/m). Empty for degree <= 0.
  std::vector<std::complex<double>> roots() const;

  Polynomial operator+(const Polynomial& o) const;
  Polynomial operator-(const Polynomial& o) const;
  Polynomial operator*(const Polynomial& o) const;
  Polynomial operator*(double k) const;
  Polynomial operator-() const;
  bool operator==(const Polynomial& o) const { return c_ == o.c_; }

  // Readable form in ascending style with s, e.g. "2*s^2 + 0.5*s + 1".
  std::string ToString() const;

 private:
  std::vector<double> c_;
};

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_POLYNOMIAL_H_
