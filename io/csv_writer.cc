// See csv_writer.h.
#include "io/csv_writer.h"

#include <charconv>
#include <cmath>

#include "io/atomic_file.h"
#include "lti/error.h"

namespace lw {
namespace {

std::string OneLine(const std::string& s) {
  std::string out = s;
  for (char& c : out)
    if (c == '\n' || c == '\r') c = ' ';
  return out;
}

std::string HeaderName(const std::string& name) {
  const std::string flat = OneLine(name);
  const bool quote = flat.find_first_of(",\"#;\t|") != std::string::npos || flat.front() == ' ' ||
                     flat.back() == ' ';
  if (!quote) return flat;
  std::string out = "\"";
  for (char c : flat) {
    if (c == '"') out.push_back('"');
    out.push_back(c);
  }
  return out + "\"";
}

void Check(const std::vector<std::string>& names,
           const std::vector<std::span<const double>>& columns) {
  if (names.empty()) throw UsageError("a CSV file needs at least one column");
  if (names.size() != columns.size())
    throw UsageError("CSV writer got " + std::to_string(names.size()) + " names for " +
                     std::to_string(columns.size()) + " columns");
  for (size_t c = 0; c < names.size(); ++c) {
    if (names[c].empty())
      throw UsageError("CSV column " + std::to_string(c + 1) + " has an empty name");
    if (columns[c].size() != columns[0].size())
      throw UsageError("CSV column '" + names[c] + "' has " + std::to_string(columns[c].size()) +
                       " values, column '" + names[0] + "' has " +
                       std::to_string(columns[0].size()));
    for (size_t i = 0; i < columns[c].size(); ++i)
      if (!std::isfinite(columns[c][i]))
        throw UsageError("CSV column '" + names[c] + "', row " + std::to_string(i + 1) +
                         ": value is NaN or infinite");
  }
}

// Header and rows in chunks handed to `sink`, so a big table never needs a second full copy.
template <typename Sink>
void Format(const std::vector<std::string>& names,
            const std::vector<std::span<const double>>& columns, const std::string& provenance,
            Sink&& sink) {
  std::string out;
  if (!provenance.empty()) {
    out = "# ";
    out += OneLine(provenance);
    out.push_back('\n');
  }
  for (size_t c = 0; c < names.size(); ++c) {
    if (c) out.push_back(',');
    out += HeaderName(names[c]);
  }
  out.push_back('\n');
  const size_t rows = columns[0].size();
  char buf[32];
  for (size_t i = 0; i < rows; ++i) {
    for (size_t c = 0; c < columns.size(); ++c) {
      if (c) out.push_back(',');
      const auto [ptr, ec] = std::to_chars(buf, buf + sizeof buf, columns[c][i]);
      out.append(buf, ptr);
    }
    out.push_back('\n');
    if (out.size() >= (1 << 16)) {
      sink(out);
      out.clear();
    }
  }
  sink(out);
}

}  // namespace

std::string FormatCsv(const std::vector<std::string>& names,
                      const std::vector<std::span<const double>>& columns,
                      const std::string& provenance) {
  Check(names, columns);
  std::string all;
  Format(names, columns, provenance, [&all](const std::string& chunk) { all += chunk; });
  return all;
}

void WriteCsv(const std::string& path, const std::vector<std::string>& names,
              const std::vector<std::span<const double>>& columns, const std::string& provenance) {
  Check(names, columns);  // before the temporary file exists
  AtomicFile file(path);
  Format(names, columns, provenance, [&file](const std::string& chunk) { file.Write(chunk); });
  file.Commit();
}

}  // namespace lw
