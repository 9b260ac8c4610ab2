// Numbers as text. ShortestText: text for a double that reads back to exactly the same value,
// the shortest such decimal (std::to_chars), e.g. 0.1 -> "0.1", 1e-05 -> "1e-05", 2.5 -> "2.5";
// used wherever loopwright writes a number that must round-trip: formulas, controller texts,
// messages. ParseNumberPair: the "A:B" pairs of command-line options (ranges, windows, steps).
#ifndef LOOPWRIGHT_LTI_NUMBER_TEXT_H_
#define LOOPWRIGHT_LTI_NUMBER_TEXT_H_

#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <utility>

namespace lw {

std::string ShortestText(double value);

// Text for a double rounded to `digits` significant digits (printf's %.Ng), e.g.
// SignificantText(0.004444, 3) -> "0.00444". For messages and summaries that need no round trip.
std::string SignificantText(double value, int digits);

// "A:B" split at its first colon into two finite decimal numbers (std::from_chars, a leading '+'
// allowed), e.g. "0:100" -> {0, 100}, "-2.5:+1e3" -> {-2.5, 1000}. A side left empty is
// `empty_first` / `empty_second` when that is not NaN (e.g. -inf and +inf for an open-ended
// window ":20" or "5:"), else malformed. std::nullopt when malformed: no colon, a side that is
// not a number, is not finite ("inf", "nan") or has characters after its number ("1:2:3").
// Callers check their own rule (LO < HI, A != B) and name the option in their message.
std::optional<std::pair<double, double>> ParseNumberPair(
    std::string_view text, double empty_first = std::numeric_limits<double>::quiet_NaN(),
    double empty_second = std::numeric_limits<double>::quiet_NaN());

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_NUMBER_TEXT_H_
