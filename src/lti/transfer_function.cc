#include "lti/transfer_function.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "lti/error.h"
#include "lti/number_text.h"
#include "lti/pade.h"

namespace lw {
namespace {

// Number of trailing coefficients that are zero relative to the largest one: the multiplicity of
// s = 0 as a root, to the tolerance integrators() documents.
int ZerosAtOrigin(const Polynomial& p) {
  const auto& c = p.coefficients();
  double scale = 0.0;
  for (double v : c) scale = std::max(scale, std::abs(v));
  int count = 0;
  for (auto it = c.rbegin(); it != c.rend() && std::abs(*it) <= 1e-12 * scale; ++it) ++count;
  return count;
}

// The polynomial divided by s^k, dropping its k lowest coefficients.
Polynomial DropLowest(const Polynomial& p, int k) {
  std::vector<double> c = p.coefficients();
  c.resize(c.size() - static_cast<size_t>(std::min<int>(k, static_cast<int>(c.size()))));
  return Polynomial(std::move(c));
}

// A polynomial as a factor in a product or quotient: parenthesised when it has several terms.
std::string AsFactor(const Polynomial& p) {
  const auto& c = p.coefficients();
  const auto terms = std::count_if(c.begin(), c.end(), [](double v) { return v != 0.0; });
  std::string text = p.ToString();
  if (terms > 1) text.insert(0, 1, '(').push_back(')');
  return text;
}

void CheckDelay(double delay) {
  if (!std::isfinite(delay) || delay < 0.0) {
    throw UsageError("dead time " + ShortestText(delay) +
                     " s is not allowed; the dead time must be a finite number >= 0 seconds");
  }
}

}  // namespace

TransferFunction::TransferFunction()
    : num_(Polynomial::Constant(1.0)), den_(Polynomial::Constant(1.0)) {}

TransferFunction::TransferFunction(Polynomial num, Polynomial den, double delay) : delay_(delay) {
  if (den.is_zero()) {
    throw UsageError("transfer function denominator is zero; it must be a nonzero polynomial");
  }
  CheckDelay(delay);
  const double lead = den.leading();
  if (lead != 1.0) {
    std::vector<double> n = num.coefficients(), d = den.coefficients();
    for (double& v : n) v /= lead;
    for (double& v : d) v /= lead;
    num = Polynomial(std::move(n));
    den = Polynomial(std::move(d));
  }
  num_ = std::move(num);
  den_ = std::move(den);
}

TransferFunction::TransferFunction(std::vector<double> num, std::vector<double> den, double delay)
    : TransferFunction(Polynomial(std::move(num)), Polynomial(std::move(den)), delay) {}

std::vector<std::complex<double>> TransferFunction::poles() const { return den_.roots(); }

std::vector<std::complex<double>> TransferFunction::zeros() const { return num_.roots(); }

double TransferFunction::dc_gain() const {
  if (num_.is_zero()) return 0.0;
  // Cancel common powers of s exactly, then evaluate at 0.
  const int zn = ZerosAtOrigin(num_);
  const int zd = ZerosAtOrigin(den_);
  const int common = std::min(zn, zd);
  const Polynomial n = DropLowest(num_, common);
  const Polynomial d = DropLowest(den_, common);
  if (zn > common) return 0.0;
  const double n0 = n.coefficients().back();
  if (zd > common) {
    // Integrator: G(s) -> N(0) / (d_k s^k) as s -> 0+; the sign is that of N(0)/d_k.
    const double dk = d.coefficient(zd - common);
    return (n0 / dk > 0) ? std::numeric_limits<double>::infinity()
                         : -std::numeric_limits<double>::infinity();
  }
  return n0 / d.coefficients().back();
}

int TransferFunction::integrators() const { return ZerosAtOrigin(den_); }

bool TransferFunction::is_stable() const {
  for (const auto& p : poles()) {
    if (!(p.real() < 0.0)) return false;
  }
  return true;
}

std::complex<double> TransferFunction::operator()(std::complex<double> s) const {
  std::complex<double> g = num_(s) / den_(s);
  if (delay_ > 0.0) g *= std::exp(-delay_ * s);
  return g;
}

std::complex<double> TransferFunction::frequency_response(double w) const {
  return (*this)(std::complex<double>(0.0, w));
}

TransferFunction TransferFunction::Series(const TransferFunction& h) const {
  return TransferFunction(num_ * h.num_, den_ * h.den_, delay_ + h.delay_);
}

TransferFunction TransferFunction::operator*(double k) const {
  return TransferFunction(num_ * k, den_, delay_);
}

TransferFunction TransferFunction::WithDelay(double delay) const {
  return TransferFunction(num_, den_, delay);
}

std::string TransferFunction::ToString() const {
  std::string text = AsFactor(num_);
  if (den_.degree() > 0 || den_.leading() != 1.0) {
    text.append("/").append(AsFactor(den_));
  }
  if (delay_ > 0.0) text.append(" * exp(-").append(ShortestText(delay_)).append("*s)");
  return text;
}

UnityFeedback::UnityFeedback(TransferFunction open_loop) : open_loop_(std::move(open_loop)) {}

std::complex<double> UnityFeedback::operator()(std::complex<double> s) const {
  const std::complex<double> n = open_loop_.num()(s) * std::exp(-open_loop_.delay() * s);
  return n / (open_loop_.den()(s) + n);
}

TransferFunction UnityFeedback::Exact() const {
  if (!is_rational()) {
    throw UsageError("the loop has a dead time of " + ShortestText(open_loop_.delay()) +
                     " s, so its closed loop is not rational; ask for a Padé order (1 to 8) "
                     "to get a rational approximation");
  }
  return TransferFunction(open_loop_.num(), open_loop_.den() + open_loop_.num());
}

TransferFunction UnityFeedback::WithPade(int order) const {
  const TransferFunction l = ApplyPade(open_loop_, order);
  return TransferFunction(l.num(), l.den() + l.num());
}

Polynomial UnityFeedback::CharacteristicPolynomial(int pade_order) const {
  if (is_rational()) return open_loop_.den() + open_loop_.num();
  if (pade_order < 1 || pade_order > 8) {
    throw UsageError("Padé order " + std::to_string(pade_order) +
                     " is not allowed for a loop with dead time " +
                     ShortestText(open_loop_.delay()) + " s; the order must be 1 to 8");
  }
  const TransferFunction l = ApplyPade(open_loop_, pade_order);
  return l.den() + l.num();
}

}  // namespace lw
