#include "lti/pade.h"

#include <cmath>
#include <string>
#include <vector>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

void CheckOrder(int order) {
  if (order < 1 || order > 8) {
    throw UsageError("Padé order " + std::to_string(order) +
                     " is not allowed; the order must be an integer from 1 to 8");
  }
}

}  // namespace

TransferFunction PadeDelay(double delay, int order) {
  CheckOrder(order);
  if (!std::isfinite(delay) || delay < 0.0) {
    throw UsageError("dead time " + ShortestText(delay) +
                     " s cannot be approximated; it must be a finite number >= 0 seconds");
  }
  if (delay == 0.0) return TransferFunction();
  // a_k = (2n-k)! n! / ((2n)! k! (n-k)!), by the ratio a_k / a_(k-1) = (n-k+1) / ((2n-k+1) k).
  const int n = order;
  std::vector<double> num(static_cast<size_t>(n) + 1), den(static_cast<size_t>(n) + 1);
  double a = 1.0;
  for (int k = 0; k <= n; ++k) {
    if (k > 0) a *= static_cast<double>(n - k + 1) / (static_cast<double>(2 * n - k + 1) * k);
    const double term = a * std::pow(delay, k);
    // Descending storage: s^k sits at index n - k.
    den[static_cast<size_t>(n - k)] = term;
    num[static_cast<size_t>(n - k)] = (k % 2 == 0) ? term : -term;
  }
  return TransferFunction(Polynomial(std::move(num)), Polynomial(std::move(den)));
}

TransferFunction ApplyPade(const TransferFunction& g, int order) {
  CheckOrder(order);
  if (g.delay() == 0.0) return g;
  return g.Rational() * PadeDelay(g.delay(), order);
}

}  // namespace lw
