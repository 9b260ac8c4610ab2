#include "design/loop_polynomials.h"

#include <cmath>

#include "lti/error.h"
#include "lti/number_text.h"
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

namespace {

// The lowest nonzero coefficient of p (0 for the zero polynomial) and, in `power`, its power of s.
double LowestCoefficient(const Polynomial& p, int* power = nullptr) {
  const auto& c = p.coefficients();  // descending
  for (size_t i = c.size(); i-- > 0;) {
    if (c[i] != 0.0) {
      if (power) *power = static_cast<int>(c.size() - 1 - i);
      return c[i];
    }
  }
  if (power) *power = 0;
  return 0.0;
}

// The plant at low frequency: "G(0) = -1.5", or "G(s) -> -0.8/s as s -> 0" with poles at the
// origin (the lowest nonzero coefficients of numerator and denominator).
std::string LowFrequencyText(const TransferFunction& g) {
  int pn = 0, pd = 0;
  const double ratio = LowestCoefficient(g.num(), &pn) / LowestCoefficient(g.den(), &pd);
  const int k = pd - pn;
  if (k == 0) return "G(0) = " + SignificantText(ratio, 4);
  std::string text = "G(s) -> " + SignificantText(ratio, 4) + "/s";
  if (k != 1) {
    text += '^';
    text += std::to_string(k);
  }
  text += " as s -> 0";
  return text;
}

// The highest-power coefficient (0 for the zero polynomial; leading zeros are trimmed).
double LeadingCoefficient(const Polynomial& p) {
  return p.coefficients().empty() ? 0.0 : p.coefficients().front();
}

// The sign LowFrequencySign gives for numerator n over denominator d.
int FollowingSign(const Polynomial& n, const Polynomial& d) {
  return LowestCoefficient(n) * LeadingCoefficient(d) < 0.0 ? -1 : 1;
}

}  // namespace

std::string PositiveFeedbackNote(const LoopPolynomials& loop, const TransferFunction& plant) {
  if (loop.LowFrequencySign() > 0) return "";
  const std::string turn =
      "; loopwright designs loops where K > 0 is negative feedback: turn the sign at the rig "
      "(the actuator's or the measurement's direction) and record the step test again";
  if (FollowingSign(plant.num(), plant.den()) > 0) {
    // The plant alone would follow r: the controller's shape reverses the loop.
    return "the controller's zeros make its low-frequency gain negative (a zero in the right "
           "half-plane), so no gain K > 0 gives a stable loop in which y follows r; choose "
           "zeros > 0 rad/s (in the left half-plane)";
  }
  if (LowestCoefficient(plant.den()) * LeadingCoefficient(plant.den()) > 0.0) {
    return "the plant's gain is negative (" + LowFrequencyText(plant) +
           "), so every controller gain K > 0 feeds back positively and drives y away from r" +
           turn;
  }
  // An unstable plant: G(0) may have either sign; what counts is the coefficient pair.
  return "the plant is unstable and its numerator's lowest coefficient (" +
         SignificantText(LowestCoefficient(plant.num()), 4) +
         ") and its denominator's leading coefficient (" +
         SignificantText(LeadingCoefficient(plant.den()), 4) +
         ") have opposite signs, so no gain K > 0 gives a stable loop in which y follows r" + turn;
}

int LoopPolynomials::LowFrequencySign() const { return FollowingSign(b, a); }

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
