// Text for a double that reads back to exactly the same value: the shortest such decimal
// (std::to_chars), e.g. 0.1 -> "0.1", 1e-05 -> "1e-05", 2.5 -> "2.5". Used wherever loopwright
// writes a number that must round-trip: formulas, controller texts, messages.
#ifndef LOOPWRIGHT_LTI_NUMBER_TEXT_H_
#define LOOPWRIGHT_LTI_NUMBER_TEXT_H_

#include <string>

namespace lw {

std::string ShortestText(double value);

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_NUMBER_TEXT_H_
