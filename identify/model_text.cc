#include "identify/model_text.h"

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

// "(239 s + 1)"; a negative time constant reads "(-3 s + 1)".
std::string Lag(double tau, int digits) {
  std::string text = SignificantText(tau, digits);  // "(" + text trips GCC 12's -Wrestrict
  text.insert(text.begin(), '(');
  return text + " s + 1)";
}

}  // namespace

std::string FactoredModelText(Structure s, std::span<const double> p, int digits) {
  if (static_cast<int>(p.size()) != ParameterCount(s)) {
    throw UsageError("model text for " + std::string(StructureName(s)) + ": expected " +
                     std::to_string(ParameterCount(s)) + " parameters, got " +
                     std::to_string(p.size()));
  }
  auto num = [&](double v) { return SignificantText(v, digits); };
  const double dead = p.back();
  const std::string delay = dead > 0.0 ? " exp(-" + num(dead) + " s)" : "";
  std::string text = num(p[0]);
  switch (s) {
    case Structure::kFopdt:
      return text + delay + " / " + Lag(p[1], digits);
    case Structure::kSopdt:
      return text + delay + " / (" + Lag(p[1], digits) + Lag(p[2], digits) + ")";
    case Structure::kUnderdamped: {
      const double zeta = p[1], wn = p[2];
      return text + delay + " / (" + num(1.0 / (wn * wn)) + " s^2 + " + num(2.0 * zeta / wn) +
             " s + 1)";
    }
    case Structure::kIntegrating:
      return text + delay + " / (s " + Lag(p[1], digits) + ")";
    case Structure::kSopdtZero:
      return text + " " + Lag(p[3], digits) + delay + " / (" + Lag(p[1], digits) +
             Lag(p[2], digits) + ")";
  }
  return text;
}

}  // namespace lw
