// How commands write to the user: numbers with sensible significant digits, compact aligned
// tables, optional colour, warnings, and exactly one JSON document for --json.
//
// Human output is short plain text; colour is used only when Context::color is set (stdout is a
// terminal and NO_COLOR is unset). With --json a command prints one document and nothing else on
// stdout; warnings go to stderr either way.
#ifndef LOOPWRIGHT_APP_OUTPUT_H_
#define LOOPWRIGHT_APP_OUTPUT_H_

#include <complex>
#include <iosfwd>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/command.h"

namespace lw::app {

// v with `significant` significant digits, without trailing zeros and without an exponent
// between 1e-4 and 1e6: 0.1234567 -> "0.1235", 2.0 -> "2", 1234567 -> "1.235e+06". NaN -> "n/a",
// infinities -> "inf" / "-inf". significant is clamped to 1..17.
std::string FormatNumber(double v, int significant = 4);

// An estimate and its interval, low <= value <= high, as text: each with `significant` digits, or
// with as many more (up to 10) as it takes for two of them that differ to read differently, so
// an interval never prints with zero width: 101325 with 101324.96 .. 101325.04 reads
// "101325", "101324.96", "101325.04" instead of "101325" three times. Non-finite bounds print
// "n/a", and the interval then reads "undetermined".
struct EstimateText {
  std::string value, low, high;
  std::string interval;  // "low .. high", or "undetermined" without finite bounds
};
EstimateText FormatEstimate(double value, double low, double high, int significant = 4);

// The same for a named fit parameter, its interval cut at the parameter's physical range
// (identify/model_structure.h PhysicalRange: a dead time or a time constant is never negative,
// a damping ratio lies in [0, 1]). A cut interval reads "0 .. 0.06462 †" (kCutMark: "*" already
// marks the chosen structure in fit's candidates), and `note` says why:
// "the symmetric 95 % interval reaches -0.05167, past the physical bound 0: the data do not rule
// out 0" (the caller names the parameter before it). Uncut, it is FormatEstimate's text and
// `note` is empty. Tables of estimates (fit, fit --compare, drift) print the note under them,
// after the mark.
inline constexpr std::string_view kCutMark = "†";
struct ParameterText : EstimateText {
  std::string note;  // empty unless the interval was cut
};
ParameterText FormatParameter(std::string_view name, double value, double low, double high);
// The notes of a table's cut intervals, one line each under the table: "  † dead_time: ...".
void PrintCutNotes(std::ostream& out, const std::vector<std::string>& notes);

// FormatNumber followed by a space and the unit when the unit is not empty: "3.2 s"; NaN is
// "n/a" alone.
std::string FormatQuantity(double v, std::string_view unit, int significant = 4);

// A pole (or zero) as text: "-2" when real (an imaginary part below 1e-12 |p| counts as none),
// "-1.5 ± j2.398" for a complex one, which stands for the conjugate pair; "" when not finite.
std::string PoleText(std::complex<double> p);
// Whether p is the member of a conjugate pair that PoleText lists (imag > 0) or real: a list of
// poles shows each pair once.
bool ListedPole(std::complex<double> p);

// A JSON number, or null when v is NaN or infinite (JSON has no such numbers).
nlohmann::json JsonNumber(double v);
// A JSON array of numbers, each as JsonNumber.
nlohmann::json JsonNumbers(const std::vector<double>& v);

// Prints doc on ctx.out, indented by 2, with a trailing newline.
void PrintJson(Context& ctx, const nlohmann::json& doc);

// Colour helpers: the text wrapped in an ANSI colour when ctx.color, else the text unchanged.
std::string Bold(const Context& ctx, std::string_view text);
std::string Good(const Context& ctx, std::string_view text);     // green
std::string Caution(const Context& ctx, std::string_view text);  // yellow
std::string Bad(const Context& ctx, std::string_view text);      // red

// "warning: <text>" on ctx.err (one line each).
void Warn(Context& ctx, std::string_view text);

// A compact table: a header row, then rows; columns are separated by two spaces, text is
// left-aligned and cells that look like numbers are right-aligned. Rows shorter than the header
// are padded with empty cells. Alignment counts UTF-8 code points, not bytes.
class TextTable {
 public:
  explicit TextTable(std::vector<std::string> header);
  void AddRow(std::vector<std::string> row);
  // Prints the table, each line starting with `indent` spaces; the header is underlined with
  // dashes.
  void Print(std::ostream& out, int indent = 2) const;

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<std::string>> rows_;
};

// "key: value" lines with the keys padded to one width, for short summaries.
class KeyValueList {
 public:
  void Add(std::string key, std::string value);
  void Print(std::ostream& out, int indent = 2) const;

 private:
  std::vector<std::pair<std::string, std::string>> items_;
};

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_OUTPUT_H_
