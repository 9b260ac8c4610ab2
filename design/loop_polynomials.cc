#include "design/loop_polynomials.h"

#include <cmath>

#include "lti/error.h"
#include "lti/pade.h"

namespace lw {

LoopPolynomials LoopPolynomials::FromPolynomials(Polynomial a, Polynomial b) {
  if (b.is_zero()) throw UsageError("locus: b(s) is zero, so the parameter changes nothing");
  if (a.is_zero()) throw UsageError("locus: a(s) is zero");
  if (b.degree() > a.degree()) {
    throw UsageError("locus: degree of b(s) (" + std::to_string(b.degree()) +
                     ") exceeds degree of a(s) (" + std::to_string(a.degree()) +
                     "); the loop must be proper");
  }
  LoopPolynomials lp;
  lp.a = std::move(a);
  lp.b = std::move(b);
  return lp;
}

LoopPolynomials LoopPolynomials::ForGain(const TransferFunction& plant,
                                         const Controller& controller, int pade_order) {
  TransferFunction g = plant.delay() > 0.0 ? ApplyPade(plant, pade_order) : plant;
  TransferFunction l = controller.Shape() * g;
  LoopPolynomials lp = FromPolynomials(l.den(), l.num());
  lp.pade_order = plant.delay() > 0.0 ? pade_order : 0;
  lp.delay = plant.delay();
  return lp;
}

LoopPolynomials LoopPolynomials::ForPiZero(const TransferFunction& plant, double gain,
                                           int pade_order) {
  if (!(gain > 0.0) || !std::isfinite(gain)) {
    throw UsageError("PI zero locus: the gain must be a number > 0");
  }
  TransferFunction g = plant.delay() > 0.0 ? ApplyPade(plant, pade_order) : plant;
  Polynomial s({1.0, 0.0});
  Polynomial kn = g.num() * gain;
  LoopPolynomials lp = FromPolynomials(s * g.den() + s * kn, kn);
  lp.pade_order = plant.delay() > 0.0 ? pade_order : 0;
  lp.delay = plant.delay();
  return lp;
}

double LoopPolynomials::FrequencyScale() const {
  // Vieta: the product of the nonzero roots' magnitudes is |c_low / c_lead|, c_low the lowest
  // nonzero coefficient (the trailing zero coefficients are the roots at the origin).
  double log_sum = 0.0;
  int count = 0;
  for (const Polynomial* p : {&a, &b}) {
    const auto& c = p->coefficients();
    size_t last = c.size();
    while (last > 0 && c[last - 1] == 0.0) --last;
    if (last < 2) continue;  // no nonzero roots
    log_sum += std::log(std::abs(c[last - 1])) - std::log(std::abs(c[0]));
    count += static_cast<int>(last) - 1;
  }
  return count ? std::exp(log_sum / count) : 1.0;
}

}  // namespace lw
