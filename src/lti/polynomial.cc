// Polynomial arithmetic and root finding.
//
// Roots: the monic companion matrix is balanced (Parlett & Reinsch's diagonal scaling by powers of
// two, which leaves the eigenvalues unchanged and makes them far less sensitive to rounding), its
// eigenvalues are computed with Eigen's real Schur based EigenSolver, and each one is then given at
// most a few Newton steps on p itself, a step being kept only when it lowers |p(r)| and none
// taken once |p(r)| is down to the rounding level of evaluating p there. Roots at the
// origin (trailing zero coefficients) are split off first and returned exactly as 0.
#include "lti/polynomial.h"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

using Complex = std::complex<double>;

// Diagonal similarity scaling by powers of two until every row and column have comparable norms
// (the classic balancing algorithm; exact in binary arithmetic, so eigenvalues are unchanged).
void Balance(Eigen::MatrixXd& a) {
  const double radix = 2.0;
  const double sqrdx = radix * radix;
  const Eigen::Index n = a.rows();
  bool done = false;
  while (!done) {
    done = true;
    for (Eigen::Index i = 0; i < n; ++i) {
      double r = 0.0, c = 0.0;
      for (Eigen::Index j = 0; j < n; ++j) {
        if (j != i) {
          c += std::abs(a(j, i));
          r += std::abs(a(i, j));
        }
      }
      if (c == 0.0 || r == 0.0) continue;
      double g = r / radix;
      double f = 1.0;
      const double s = c + r;
      while (c < g) {
        f *= radix;
        c *= sqrdx;
      }
      g = r * radix;
      while (c > g) {
        f /= radix;
        c /= sqrdx;
      }
      if ((c + r) / f < 0.95 * s) {
        done = false;
        g = 1.0 / f;
        a.row(i) *= g;
        a.col(i) *= f;
      }
    }
  }
}

// p(r) and p'(r) together by Horner's scheme.
void EvalWithDerivative(const std::vector<double>& c, Complex r, Complex& p, Complex& dp) {
  p = 0.0;
  dp = 0.0;
  for (double ci : c) {
    dp = dp * r + p;
    p = p * r + ci;
  }
}

// A few Newton steps, each kept only when it lowers |p|. A root whose residual |p(r)| is already
// at the rounding level of evaluating p there (a few eps * sum |c_k| |r|^k) is as good as the
// coefficients allow and is left alone: stepping on rounding noise would only scatter the copies
// of a repeated root and spoil their mean, which the eigenvalues give accurately.
Complex Polish(const std::vector<double>& c, Complex r) {
  for (int it = 0; it < 8; ++it) {
    Complex p, dp;
    EvalWithDerivative(c, r, p, dp);
    double scale = 0.0;
    for (double ci : c) scale = scale * std::abs(r) + std::abs(ci);
    if (std::abs(p) <= 4.0 * std::numeric_limits<double>::epsilon() * scale || dp == 0.0) break;
    const Complex next = r - p / dp;
    if (!std::isfinite(next.real()) || !std::isfinite(next.imag())) break;
    Complex pn, dpn;
    EvalWithDerivative(c, next, pn, dpn);
    if (!(std::abs(pn) < std::abs(p))) break;
    r = next;
  }
  return r;
}

bool RootLess(const Complex& a, const Complex& b) {
  if (a.real() != b.real()) return a.real() < b.real();
  return a.imag() < b.imag();
}

}  // namespace

Polynomial::Polynomial() = default;

Polynomial::Polynomial(std::vector<double> descending) {
  for (double v : descending) {
    if (!std::isfinite(v)) {
      throw UsageError("polynomial coefficient " + ShortestText(v) +
                       " is not a finite number; every coefficient must be finite");
    }
  }
  auto first =
      std::find_if(descending.begin(), descending.end(), [](double v) { return v != 0.0; });
  c_.assign(first, descending.end());
}

Polynomial Polynomial::Constant(double c) { return Polynomial(std::vector<double>{c}); }

Polynomial Polynomial::FromRoots(const std::vector<std::complex<double>>& roots, double leading) {
  // Every complex root must have a partner close to its conjugate; each partner is used once.
  std::vector<bool> used(roots.size(), false);
  for (size_t i = 0; i < roots.size(); ++i) {
    const Complex r = roots[i];
    if (!std::isfinite(r.real()) || !std::isfinite(r.imag())) {
      throw UsageError("polynomial root (" + ShortestText(r.real()) + ", " +
                       ShortestText(r.imag()) + ") is not finite; every root must be finite");
    }
    const double tol = 1e-9 * std::max(1.0, std::abs(r));
    if (used[i] || std::abs(r.imag()) <= tol) continue;
    size_t best = roots.size();
    double best_d = std::numeric_limits<double>::infinity();
    for (size_t j = 0; j < roots.size(); ++j) {
      if (j == i || used[j]) continue;
      const double d = std::abs(roots[j] - std::conj(r));
      if (d < best_d) {
        best_d = d;
        best = j;
      }
    }
    if (best == roots.size() || best_d > tol) {
      throw UsageError("polynomial root " + ShortestText(r.real()) +
                       (r.imag() < 0 ? " - " : " + ") + ShortestText(std::abs(r.imag())) +
                       "j has no conjugate partner; complex roots of a real polynomial must come "
                       "in conjugate pairs");
    }
    used[i] = used[best] = true;
  }
  std::vector<Complex> c{Complex(leading, 0.0)};
  for (const Complex& r : roots) {
    std::vector<Complex> next(c.size() + 1, Complex(0.0, 0.0));
    for (size_t k = 0; k < c.size(); ++k) {
      next[k] += c[k];
      next[k + 1] -= c[k] * r;
    }
    c = std::move(next);
  }
  std::vector<double> real(c.size());
  std::transform(c.begin(), c.end(), real.begin(), [](const Complex& z) { return z.real(); });
  return Polynomial(std::move(real));
}

double Polynomial::coefficient(int k) const {
  if (k < 0 || k > degree()) return 0.0;
  return c_[static_cast<size_t>(degree() - k)];
}

double Polynomial::operator()(double s) const {
  double v = 0.0;
  for (double ci : c_) v = v * s + ci;
  return v;
}

std::complex<double> Polynomial::operator()(std::complex<double> s) const {
  Complex v = 0.0;
  for (double ci : c_) v = v * s + ci;
  return v;
}

Polynomial Polynomial::derivative() const {
  const int n = degree();
  if (n <= 0) return Polynomial();
  std::vector<double> d(static_cast<size_t>(n));
  for (int i = 0; i < n; ++i) d[static_cast<size_t>(i)] = c_[static_cast<size_t>(i)] * (n - i);
  return Polynomial(std::move(d));
}

std::vector<std::complex<double>> Polynomial::roots() const {
  std::vector<Complex> out;
  if (degree() <= 0) return out;
  // Split off the roots at the origin exactly.
  std::vector<double> c = c_;
  while (c.size() > 1 && c.back() == 0.0) {
    c.pop_back();
    out.emplace_back(0.0, 0.0);
  }
  const Eigen::Index n = static_cast<Eigen::Index>(c.size()) - 1;
  if (n == 1) {
    out.emplace_back(-c[1] / c[0], 0.0);
  } else if (n > 1) {
    // Companion matrix of the monic polynomial: first row -c[k]/c[0], ones on the subdiagonal.
    Eigen::MatrixXd a = Eigen::MatrixXd::Zero(n, n);
    for (Eigen::Index k = 0; k < n; ++k) a(0, k) = -c[static_cast<size_t>(k + 1)] / c[0];
    for (Eigen::Index k = 1; k < n; ++k) a(k, k - 1) = 1.0;
    Balance(a);
    Eigen::EigenSolver<Eigen::MatrixXd> solver(a, /*computeEigenvectors=*/false);
    if (solver.info() != Eigen::Success) {
      throw JobFailed("the eigenvalue iteration for the roots of " + ToString() +
                      " did not converge");
    }
    const Eigen::VectorXcd ev = solver.eigenvalues();
    // Eigen returns a complex pair as exact conjugates; polish the upper one and mirror it so
    // the pair stays exact. Real eigenvalues are polished on the real line.
    std::vector<Complex> found;
    for (Eigen::Index k = 0; k < n; ++k) {
      const Complex r = ev(k);
      if (r.imag() == 0.0) {
        found.push_back(Polish(c, r));
        found.back().imag(0.0);
      } else if (r.imag() > 0.0) {
        const Complex p = Polish(c, r);
        found.push_back(p);
        found.push_back(std::conj(p));
      }
    }
    if (static_cast<Eigen::Index>(found.size()) != n) {
      // Not the pairing structure expected: keep the eigenvalues as they are.
      found.assign(ev.data(), ev.data() + n);
    }
    out.insert(out.end(), found.begin(), found.end());
  }
  std::sort(out.begin(), out.end(), RootLess);
  return out;
}

Polynomial Polynomial::operator+(const Polynomial& o) const {
  const size_t n = std::max(c_.size(), o.c_.size());
  std::vector<double> r(n, 0.0);
  for (size_t i = 0; i < c_.size(); ++i) r[n - c_.size() + i] += c_[i];
  for (size_t i = 0; i < o.c_.size(); ++i) r[n - o.c_.size() + i] += o.c_[i];
  return Polynomial(std::move(r));
}

Polynomial Polynomial::operator-(const Polynomial& o) const { return *this + (-o); }

Polynomial Polynomial::operator*(const Polynomial& o) const {
  if (is_zero() || o.is_zero()) return Polynomial();
  std::vector<double> r(c_.size() + o.c_.size() - 1, 0.0);
  for (size_t i = 0; i < c_.size(); ++i) {
    for (size_t j = 0; j < o.c_.size(); ++j) r[i + j] += c_[i] * o.c_[j];
  }
  return Polynomial(std::move(r));
}

Polynomial Polynomial::operator*(double k) const {
  std::vector<double> r = c_;
  for (double& v : r) v *= k;
  return Polynomial(std::move(r));
}

Polynomial Polynomial::operator-() const {
  std::vector<double> r = c_;
  for (double& v : r) v = -v;
  return Polynomial(std::move(r));
}

std::string Polynomial::ToString() const {
  if (is_zero()) return "0";
  std::ostringstream os;
  const int n = degree();
  bool first = true;
  for (int i = 0; i <= n; ++i) {
    const double v = c_[static_cast<size_t>(i)];
    if (v == 0.0) continue;
    const int power = n - i;
    const double mag = std::abs(v);
    if (first) {
      if (v < 0) os << '-';
    } else {
      os << (v < 0 ? " - " : " + ");
    }
    first = false;
    if (power == 0) {
      os << ShortestText(mag);
      continue;
    }
    if (mag != 1.0) os << ShortestText(mag) << '*';
    os << 's';
    if (power > 1) os << '^' << power;
  }
  return os.str();
}

}  // namespace lw
