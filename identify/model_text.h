// A fitted model as a short readable formula, in the factored form of its structure
// (model_structure.h), every number to `digits` significant digits (lti/number_text.h):
//
//   fopdt        2.61 exp(-37.9 s) / (239 s + 1)
//   sopdt        2.61 exp(-37.9 s) / ((239 s + 1)(45.2 s + 1))
//   underdamped  1.5 exp(-2 s) / (4 s^2 + 1.2 s + 1)      (s^2 / wn^2 + 2 zeta s / wn + 1)
//   integrating  0.05 exp(-2.5 s) / (s (6 s + 1))
//   sopdt-zero   2 (-3 s + 1) exp(-1 s) / ((10 s + 1)(2 s + 1))
//
// s is the Laplace variable; time constants and the dead time are in seconds, so the gain stands
// alone in front (the steady-state gain, per second for `integrating`). Without dead time (T = 0)
// the exp factor is left out. For people, not for reading back: the model file keeps every digit.
#ifndef LOOPWRIGHT_IDENTIFY_MODEL_TEXT_H_
#define LOOPWRIGHT_IDENTIFY_MODEL_TEXT_H_

#include <span>
#include <string>

#include "identify/model_structure.h"

namespace lw {

// Throws UsageError when params does not have the structure's size.
std::string FactoredModelText(Structure s, std::span<const double> params, int digits = 3);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_MODEL_TEXT_H_
