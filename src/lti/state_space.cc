#include "lti/state_space.h"

#include <algorithm>
#include <cmath>
#include <string>

#include "lti/error.h"

namespace lw {
namespace {

// Balances A by a diagonal similarity with power-of-two entries: returns the scale vector s with
// A <- diag(s)^-1 A diag(s) applied in place.
Eigen::VectorXd BalanceInPlace(Eigen::MatrixXd& a) {
  const int n = static_cast<int>(a.rows());
  Eigen::VectorXd s = Eigen::VectorXd::Ones(n);
  for (int sweep = 0; sweep < 200; ++sweep) {
    bool converged = true;
    for (int i = 0; i < n; ++i) {
      double col = 0.0, row = 0.0;
      for (int j = 0; j < n; ++j) {
        if (j == i) continue;
        col += std::abs(a(j, i));
        row += std::abs(a(i, j));
      }
      if (col == 0.0 || row == 0.0) continue;
      const double before = col + row;
      double f = 1.0;
      while (col < row / 2.0) {
        col *= 2.0;
        row /= 2.0;
        f *= 2.0;
      }
      while (col >= row * 2.0) {
        col /= 2.0;
        row *= 2.0;
        f /= 2.0;
      }
      if (col + row < 0.95 * before) {
        converged = false;
        s(i) *= f;
        a.col(i) *= f;
        a.row(i) /= f;
      }
    }
    if (converged) break;
  }
  return s;
}

double PowerOfTwoNear(double x) {
  return std::ldexp(1.0, static_cast<int>(std::lround(std::log2(x))));
}

}  // namespace

bool HasRootAtOrigin(const Polynomial& p) {
  if (p.is_zero()) return true;
  double scale = 0.0;
  for (double c : p.coefficients()) scale = std::max(scale, std::abs(c));
  return std::abs(p.coefficient(0)) <= 1e-12 * scale;
}

StateSpace Realize(const TransferFunction& g) {
  if (!g.is_proper()) {
    throw UsageError("cannot realise the improper transfer function " + g.Rational().ToString() +
                     ": the numerator degree must not exceed the denominator degree");
  }
  const Polynomial& den = g.den();
  const Polynomial& num = g.num();
  const int n = den.degree();
  const double lead = den.leading();
  StateSpace ss;
  ss.d = num.coefficient(n) / lead;
  ss.a = Eigen::MatrixXd::Zero(n, n);
  ss.b = Eigen::VectorXd::Zero(n);
  ss.c = Eigen::RowVectorXd::Zero(n);
  if (n == 0) return ss;
  for (int j = 0; j < n; ++j) {
    // Row 0 holds -a_{j+1}; c holds the remainder's coefficient of s^(n-1-j).
    ss.a(0, j) = -den.coefficient(n - 1 - j) / lead;
    ss.c(j) = num.coefficient(n - 1 - j) / lead - ss.d * den.coefficient(n - 1 - j) / lead;
  }
  for (int i = 1; i < n; ++i) ss.a(i, i - 1) = 1.0;
  ss.b(0) = 1.0;

  const Eigen::VectorXd s = BalanceInPlace(ss.a);
  ss.b = ss.b.cwiseQuotient(s);
  ss.c = ss.c.cwiseProduct(s.transpose());
  const double nb = ss.b.norm(), nc = ss.c.norm();
  if (nb > 0.0 && nc > 0.0) {
    const double k = PowerOfTwoNear(std::sqrt(nc / nb));
    ss.b *= k;
    ss.c /= k;
  }
  return ss;
}

Eigen::VectorXd SteadyState(const StateSpace& ss, double u) {
  if (ss.order() == 0) return Eigen::VectorXd();
  Eigen::FullPivLU<Eigen::MatrixXd> lu(ss.a);
  if (!lu.isInvertible()) {
    throw UsageError(
        "the model has a pole at the origin, so it has no steady state for a "
        "constant input");
  }
  return lu.solve(-ss.b * u);
}

}  // namespace lw
