// Reading numeric tables from delimited text files (recordings of a rig, simulation output).
//
// The format read:
//   - An optional UTF-8 byte order mark; LF or CRLF line ends.
//   - Lines whose first non-blank character is '#' are comments, anywhere in the file; their text
//     (without the '#' and the blanks after it) is kept in Table::comments, in file order.
//   - Blank lines (nothing but spaces and tabs) are skipped anywhere.
//   - The first other line is the header row naming the columns. A name may be quoted with
//     double quotes (then it may contain the delimiter; "" stands for one quote). Names are
//     trimmed of surrounding blanks; an empty or repeated name, a name holding a control
//     character, or a header of nothing but numbers (a file without a header row), is an error.
//   - Every following line is one row with exactly as many cells as the header has names. A cell
//     is a decimal number as std::from_chars reads it (1, -2.5, .5, 3e-4, with an optional leading
//     '+'), possibly surrounded by blanks or double quotes. NaN and infinity are rejected.
//   - A single trailing delimiter at the end of a line (header or row) is ignored, as some
//     spreadsheet exports write one; "1,2," is therefore two cells, and "1,,3" has an empty cell.
//   - The delimiter is a comma, semicolon or tab (or '|' when given). With delimiter = 0 it is
//     detected from the header row: the one of tab, ';' and ',' that occurs most often outside
//     quotes (in that order of preference on a tie; ',' for a single column). Decimal commas are
//     not read: "0,5" is not a number.
//
// Errors throw DataError with one sentence naming the file, the 1-based file line and the 1-based
// column (cell index) where known, e.g.
//   "run.csv, line 7, column 2: 'abc' is not a number"
//   "run.csv, line 9, column 3: expected 3 cells, found 2"
//   "run.csv, line 4, column 1: NaN or infinity is not allowed ('nan')"
//   "run.csv: no header row (the file is empty)"
//
// Speed and memory: the file is mapped (or read) once, rows are counted with memchr to reserve
// the columns, and cells are converted in place with std::from_chars: no allocation per cell.
// Memory is the file's bytes plus 8 bytes per cell.
#ifndef LOOPWRIGHT_IO_CSV_READER_H_
#define LOOPWRIGHT_IO_CSV_READER_H_

#include <cstddef>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace lw {

struct CsvReadOptions {
  // ',', ';', '\t' or '|'; 0 detects it from the header row (see above).
  char delimiter = 0;
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

struct Table {
  std::string path;                          // as given, for messages
  std::vector<std::string> names;            // header names, in file order
  std::vector<std::vector<double>> columns;  // columns[c][row], all the same length
  std::vector<std::string> comments;         // '#' lines, without the '#'
  char delimiter = ',';                      // the delimiter used (detected or given)
  // (first row, its 1-based file line) for each run of consecutive data lines; rows inside a run
  // are on consecutive lines. Used by LineOfRow for messages.
  std::vector<std::pair<size_t, size_t>> row_runs;

  size_t rows() const { return columns.empty() ? 0 : columns.front().size(); }
  // 1-based file line of a 0-based data row (0 when row is out of range).
  size_t LineOfRow(size_t row) const;
  // 0-based index of the column named `name_or_index`, or, when no header name matches and the
  // text is a positive integer, that 1-based position. Throws DataError naming the file, the
  // column asked for and the columns present:
  //   "run.csv: no column 'u'; columns are t, x, y"
  int ColumnIndex(std::string_view name_or_index) const;
};

// Reads the file at `path`. A file that cannot be opened or read throws DataError
// ("cannot read 'PATH': <reason>").
Table ReadCsv(const std::string& path, const CsvReadOptions& options = {});

// Parses `content` as the text of a file called `name` (used in messages and as Table::path).
Table ParseCsv(std::string_view content, std::string name, const CsvReadOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_IO_CSV_READER_H_
