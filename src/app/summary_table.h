// The compact summary table commands print at the end of their human output: one header row,
// aligned columns, and verdict cells ("OK", "FAIL", ...) coloured when the terminal allows it.
//
//   SummaryTable t({"quantity", "value", "limit", "verdict"});
//   t.AddRow({"overshoot", "8.2 %", "<= 10 %", OkFail(true)});
//   t.AddRow({"settling time", "4.1 s", "<= 3 s", OkFail(false)});
//   t.Print(ctx);
//
// prints (colour only when ctx.color, i.e. stdout is a terminal and NO_COLOR is unset):
//
//   quantity       value  limit    verdict
//   -------------  -----  -------  -------
//   overshoot      8.2 %  <= 10 %  OK
//   settling time  4.1 s  <= 3 s   FAIL
//
// Columns are separated by two spaces. A column whose non-empty cells all look like numbers
// ("3.2", "-1e-05", "12 %", "4.1 s", "n/a", "inf") is right-aligned, any other column is
// left-aligned (a header sits the same way as its column). Widths count UTF-8 code points of the
// plain text; colour escapes are added after padding, so coloured and plain output line up
// identically. Rows shorter than the header are padded with empty cells; longer rows widen the
// table (their extra columns have an empty header).
#ifndef LOOPWRIGHT_APP_SUMMARY_TABLE_H_
#define LOOPWRIGHT_APP_SUMMARY_TABLE_H_

#include <iosfwd>
#include <string>
#include <vector>

#include "app/command.h"

namespace lw::app {

// How a cell is coloured when colour is on: kOk green, kCaution yellow, kFail red, kPlain and
// kHeading as is (kHeading bold). Without colour every mark prints its text unchanged.
enum class CellMark { kPlain, kOk, kCaution, kFail, kHeading };

struct SummaryCell {
  SummaryCell(std::string t) : text(std::move(t)) {}  // NOLINT: implicit from text on purpose
  SummaryCell(const char* t) : text(t) {}             // NOLINT
  SummaryCell(std::string t, CellMark m) : text(std::move(t)), mark(m) {}
  std::string text;
  CellMark mark = CellMark::kPlain;
};

// "OK" marked kOk when ok, else "FAIL" marked kFail.
SummaryCell OkFail(bool ok);
// ok_text marked kOk when ok, else fail_text marked kFail (e.g. "inside" / "outside").
SummaryCell Verdict(bool ok, std::string ok_text, std::string fail_text);

class SummaryTable {
 public:
  explicit SummaryTable(std::vector<std::string> header);
  void AddRow(std::vector<SummaryCell> row);
  size_t rows() const { return rows_.size(); }

  // The table as text: each line starts with `indent` spaces and ends with '\n' (no trailing
  // blanks); the header is bold and underlined with dashes. ANSI colour only when `color`.
  std::string Render(bool color, int indent = 2) const;
  // Render(ctx.color, indent) written to ctx.out.
  void Print(const Context& ctx, int indent = 2) const;

 private:
  std::vector<std::string> header_;
  std::vector<std::vector<SummaryCell>> rows_;
};

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_SUMMARY_TABLE_H_
