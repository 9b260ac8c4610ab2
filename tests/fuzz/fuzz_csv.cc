// libFuzzer target for the CSV reader (io/csv_reader.h) and column selection (io/recording.h).
// Any input must either parse or throw an lw::Error; anything else (a crash, a sanitizer report,
// another exception, a broken invariant) is a bug. On success the table is written back with
// the CSV writer and read again: the numbers must come back bit for bit.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <span>
#include <string_view>

#include "io/csv_reader.h"
#include "io/csv_writer.h"
#include "io/recording.h"
#include "lti/error.h"

namespace {

void Require(bool ok) {
  if (!ok) std::abort();
}

bool SameBits(double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; }

void CheckTable(const lw::Table& t) {
  Require(!t.names.empty());
  Require(t.names.size() == t.columns.size());
  for (const auto& column : t.columns) {
    Require(column.size() == t.rows());
    for (double v : column) Require(std::isfinite(v));
  }
  for (size_t r = 0; r < t.rows(); ++r) Require(t.LineOfRow(r) >= 2);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  lw::Table table;
  try {
    table = lw::ParseCsv(text, "fuzz.csv");
  } catch (const lw::Error&) {
    return 0;
  }
  CheckTable(table);

  // Column selection: by position (always present) and by the default names.
  try {
    lw::ColumnNames by_position{.time = "1", .input = "2", .output = "3", .reference = "4"};
    const lw::Recording r = lw::SelectColumns(table, by_position, false, false, false, 1);
    Require(r.t.size() == table.rows());
    for (size_t i = 1; i < r.t.size(); ++i) Require(r.t[i] > r.t[i - 1]);
  } catch (const lw::Error&) {
  }
  try {
    lw::SelectColumns(table, lw::ColumnNames{}, true, true, true);
  } catch (const lw::Error&) {
  }

  // Write and read back.
  std::vector<std::span<const double>> columns;
  for (const auto& c : table.columns) columns.emplace_back(c);
  const std::string again = lw::FormatCsv(table.names, columns, "fuzz round trip");
  const lw::Table back = lw::ParseCsv(again, "again.csv");  // must not throw
  Require(back.names == table.names);
  Require(back.rows() == table.rows());
  for (size_t c = 0; c < table.columns.size(); ++c)
    for (size_t r = 0; r < table.rows(); ++r)
      Require(SameBits(back.columns[c][r], table.columns[c][r]));
  return 0;
}
