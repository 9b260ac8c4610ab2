// Text for a double that reads back to exactly the same value: the shortest such decimal
// (std::to_chars), e.g. 0.1 -> "0.1", 1e-05 -> "1e-05", 2.5 -> "2.5". Used wherever loopwright
// writes a number that must round-trip: formulas, controller texts, messages.
#ifndef LOOPWRIGHT_LTI_NUMBER_TEXT_H_
#define LOOPWRIGHT_LTI_NUMBER_TEXT_H_

#include <string>

namespace lw {

std::string ShortestText(double value);

// Text for a double rounded to `digits` significant digits (printf's %.Ng), e.g.
// SignificantText(0.004444, 3) -> "0.00444". For messages and summaries that need no round trip.
std::string SignificantText(double value, int digits);

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_NUMBER_TEXT_H_
