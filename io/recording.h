// A recording: the time, input, output and reference signals chosen from a Table (csv_reader.h).
//
// Columns are chosen by header name or by 1-based position (a name that matches no header name
// and is a positive integer is a position). Time is converted to seconds from time_unit:
//   s -> t,  ms -> t / 1000,  us -> t / 1e6  (one correctly rounded division).
// Checks (DataError, one sentence naming the file and, where it applies, line and column):
//   - a required column that is missing: "run.csv: no column 'u'; columns are t, x, y";
//   - too few samples: "run.csv: needs at least 3 samples, found 2";
//   - time not strictly increasing:
//       "run.csv, line 8, column 1: time not increasing (t = 0.5 after t = 0.6)".
// NaN, infinity and non-numeric cells are already rejected by the reader.
#ifndef LOOPWRIGHT_IO_RECORDING_H_
#define LOOPWRIGHT_IO_RECORDING_H_

#include <cstddef>
#include <string>
#include <vector>

#include "io/csv_reader.h"

namespace lw {

struct ColumnNames {
  std::string time = "t";
  std::string input = "u";
  std::string output = "y";
  std::string reference = "r";
  std::string time_unit = "s";  // s, ms or us
  // Throws UsageError naming the field, its value and the rule it broke (empty names, a unit
  // other than s, ms, us).
  void Validate() const;
  // Units of time_unit per second (1, 1e3, 1e6).
  double UnitsPerSecond() const;
};

struct Recording {
  std::string path;
  std::vector<double> t;  // seconds, strictly increasing
  std::vector<double> u;  // empty when !has_u
  std::vector<double> y;  // empty when !has_y
  std::vector<double> r;  // empty when !has_r
  bool has_u = false;
  bool has_y = false;
  bool has_r = false;
  std::string time_unit = "s";  // the unit the file's time column was in
  size_t size() const { return t.size(); }
};

// Picks the columns. The time column is always required; input, output and reference are
// required when the matching need_* is true and otherwise taken when present (a column asked for
// by position that does not exist is an error even when optional). min_samples >= 1.
Recording SelectColumns(const Table& table, const ColumnNames& names, bool need_input,
                        bool need_output, bool need_reference, size_t min_samples = 3);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RECORDING_H_
