// See recording.h.
#include "io/recording.h"

#include <algorithm>
#include <charconv>
#include <string_view>

#include "lti/error.h"

namespace lw {
namespace {

std::string Shortest(double v) {
  char buf[32];
  const auto [ptr, ec] = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, ptr);
}

bool IsPosition(std::string_view s) {
  return !s.empty() && std::all_of(s.begin(), s.end(), [](char c) { return c >= '0' && c <= '9'; });
}

bool HasName(const Table& table, const std::string& name) {
  return std::find(table.names.begin(), table.names.end(), name) != table.names.end();
}

// The column for `name`, or nullptr when it is optional and absent.
const std::vector<double>* Pick(const Table& table, const std::string& name, bool required) {
  if (!required && !HasName(table, name) && !IsPosition(name)) return nullptr;
  return &table.columns[table.ColumnIndex(name)];
}

}  // namespace

void ColumnNames::Validate() const {
  const std::pair<const char*, const std::string*> fields[] = {
      {"time", &time}, {"input", &input}, {"output", &output}, {"reference", &reference}};
  for (const auto& [field, value] : fields)
    if (value->empty())
      throw UsageError(std::string("column name for ") + field +
                       " is empty: give a header name or a 1-based column number");
  if (time_unit != "s" && time_unit != "ms" && time_unit != "us")
    throw UsageError("time unit '" + time_unit + "' is not one of s, ms, us");
}

double ColumnNames::UnitsPerSecond() const {
  if (time_unit == "ms") return 1e3;
  if (time_unit == "us") return 1e6;
  if (time_unit == "s") return 1.0;
  Validate();  // throws
  return 1.0;
}

Recording SelectColumns(const Table& table, const ColumnNames& names, bool need_input,
                        bool need_output, bool need_reference, size_t min_samples) {
  names.Validate();
  if (min_samples < 1) throw UsageError("min_samples is 0: it must be at least 1");
  Recording rec;
  rec.path = table.path;
  rec.time_unit = names.time_unit;
  const int time_column = table.ColumnIndex(names.time);
  const std::vector<double>* u = Pick(table, names.input, need_input);
  const std::vector<double>* y = Pick(table, names.output, need_output);
  const std::vector<double>* r = Pick(table, names.reference, need_reference);

  const size_t n = table.rows();
  if (n < min_samples)
    throw DataError(table.path + ": needs at least " + std::to_string(min_samples) +
                    (min_samples == 1 ? " sample" : " samples") + ", found " + std::to_string(n));

  const std::vector<double>& t = table.columns[time_column];
  for (size_t i = 1; i < n; ++i) {
    if (!(t[i] > t[i - 1]))
      throw DataError(table.path + ", line " + std::to_string(table.LineOfRow(i)) + ", column " +
                      std::to_string(time_column + 1) + ": time not increasing (" +
                      table.names[time_column] + " = " + Shortest(t[i]) + " after " +
                      table.names[time_column] + " = " + Shortest(t[i - 1]) + ")");
  }
  const double per_second = names.UnitsPerSecond();
  rec.t.resize(n);
  std::transform(t.begin(), t.end(), rec.t.begin(),
                 [per_second](double v) { return v / per_second; });
  if (u) rec.u = *u;
  if (y) rec.y = *y;
  if (r) rec.r = *r;
  rec.has_u = u != nullptr;
  rec.has_y = y != nullptr;
  rec.has_r = r != nullptr;
  return rec;
}

}  // namespace lw
