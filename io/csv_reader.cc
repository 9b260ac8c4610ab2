// See csv_reader.h for the format. The parser works on one contiguous buffer: each line is found
// with memchr and each cell converted with std::from_chars straight from the buffer.
#include "io/csv_reader.h"

#include <fcntl.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <string>

#include "lti/error.h"

namespace lw {
namespace {

bool IsBlank(char c) { return c == ' ' || c == '\t'; }

// Printable excerpt of a cell for a message: at most 40 characters, control bytes as '?'.
std::string Excerpt(std::string_view text) {
  std::string out;
  const size_t n = std::min<size_t>(text.size(), 40);
  for (size_t i = 0; i < n; ++i) {
    const unsigned char c = static_cast<unsigned char>(text[i]);
    out.push_back(c < 0x20 || c == 0x7f ? '?' : static_cast<char>(c));
  }
  if (text.size() > n) out += "...";
  return out;
}

// 'text' (an excerpt) for messages.
std::string Quote(std::string_view text) {
  std::string out(1, '\'');
  out += Excerpt(text);
  out.push_back('\'');
  return out;
}

// A view of one line without its line end.
struct Line {
  const char* begin;
  const char* end;
  // First character that is not a blank (end when the line is blank).
  const char* first() const {
    const char* p = begin;
    while (p < end && IsBlank(*p)) ++p;
    return p;
  }
  bool blank() const { return first() == end; }
  bool comment() const {
    const char* p = first();
    return p < end && *p == '#';
  }
};

class Parser {
 public:
  Parser(std::string_view content, std::string name, const CsvReadOptions& options)
      : p_(content.data()), end_(content.data() + content.size()), options_(options) {
    table_.path = std::move(name);
    if (content.size() >= 3 && std::memcmp(p_, "\xEF\xBB\xBF", 3) == 0) p_ += 3;
  }

  Table Run() {
    Line line{};
    while (NextLine(line)) {
      if (line.blank()) continue;
      if (line.comment()) {
        AddComment(line);
        continue;
      }
      ReadHeader(line);
      ReadRows();
      return std::move(table_);
    }
    throw DataError(table_.path + ": no header row (the file is " +
                    (line_number_ == 0 ? "empty)" : "only blank or comment lines)"));
  }

 private:
  // Advances to the next line; false at the end of the buffer.
  bool NextLine(Line& line) {
    if (p_ >= end_) return false;
    const char* nl = static_cast<const char*>(std::memchr(p_, '\n', end_ - p_));
    const char* eol = nl ? nl : end_;
    line.begin = p_;
    line.end = (eol > p_ && eol[-1] == '\r') ? eol - 1 : eol;
    p_ = nl ? nl + 1 : end_;
    ++line_number_;
    return true;
  }

  void AddComment(const Line& line) {
    const char* p = line.first() + 1;  // after the '#'
    while (p < line.end && IsBlank(*p)) ++p;
    table_.comments.emplace_back(p, line.end);
  }

  [[noreturn]] void Fail(size_t column, const std::string& what) const {
    std::string where = table_.path + ", line " + std::to_string(line_number_);
    if (column > 0) where += ", column " + std::to_string(column);
    throw DataError(where + ": " + what);
  }

  // Splits the header honouring quotes; sets delim_ when it is to be detected.
  void ReadHeader(const Line& line) {
    delim_ = options_.delimiter != 0 ? options_.delimiter : DetectDelimiter(line);
    table_.delimiter = delim_;
    std::vector<std::string> names;
    const char* p = line.begin;
    while (true) {
      while (p < line.end && IsSpace(*p)) ++p;
      std::string name;
      if (p < line.end && *p == '"') {
        ++p;
        while (true) {
          if (p >= line.end) Fail(names.size() + 1, "unterminated quote in the header row");
          if (*p == '"') {
            if (p + 1 < line.end && p[1] == '"') {
              name.push_back('"');
              p += 2;
              continue;
            }
            ++p;
            break;
          }
          name.push_back(*p++);
        }
        while (p < line.end && IsSpace(*p)) ++p;
        if (p < line.end && *p != delim_)
          Fail(names.size() + 1, "unexpected text after the quoted column name " + Quote(name));
      } else {
        const char* start = p;
        while (p < line.end && *p != delim_) ++p;
        const char* stop = p;
        while (stop > start && IsSpace(stop[-1])) --stop;
        name.assign(start, stop);
      }
      names.push_back(std::move(name));
      if (p >= line.end) break;
      ++p;  // delimiter
      const char* rest = p;
      while (rest < line.end && IsBlank(*rest)) ++rest;
      if (rest == line.end) break;  // one trailing delimiter
    }
    bool all_numbers = true;
    for (size_t c = 0; c < names.size(); ++c) {
      if (names[c].empty()) Fail(c + 1, "empty column name in the header row");
      if (std::any_of(names[c].begin(), names[c].end(),
                      [](char ch) { return static_cast<unsigned char>(ch) < 0x20 || ch == 0x7f; }))
        Fail(c + 1, "column name " + Quote(names[c]) + " contains a control character");
      for (size_t k = 0; k < c; ++k)
        if (names[k] == names[c])
          Fail(c + 1, "column name " + Quote(names[c]) + " is also the name of column " +
                          std::to_string(k + 1));
      double v;
      const std::string& n = names[c];
      const auto [ptr, ec] = std::from_chars(n.data(), n.data() + n.size(), v);
      if (ec != std::errc() || ptr != n.data() + n.size()) all_numbers = false;
    }
    if (all_numbers) Fail(0, "expected a header row naming the columns, found only numbers");
    table_.names = std::move(names);
  }

  char DetectDelimiter(const Line& line) const {
    size_t tabs = 0, semicolons = 0, commas = 0;
    bool quoted = false;
    for (const char* p = line.begin; p < line.end; ++p) {
      if (*p == '"') quoted = !quoted;
      if (quoted) continue;
      tabs += *p == '\t';
      semicolons += *p == ';';
      commas += *p == ',';
    }
    if (tabs == 0 && semicolons == 0 && commas == 0) return ',';
    if (tabs >= semicolons && tabs >= commas) return '\t';
    return semicolons >= commas ? ';' : ',';
  }

  // Blanks around cells: spaces, and tabs unless the tab is the delimiter.
  bool IsSpace(char c) const { return c == ' ' || (c == '\t' && delim_ != '\t'); }

  void ReadRows() {
    const size_t ncol = table_.names.size();
    const size_t max_rows = static_cast<size_t>(std::count(p_, end_, '\n')) + 1;
    table_.columns.assign(ncol, {});
    for (auto& column : table_.columns) column.reserve(max_rows);
    size_t rows = 0;
    bool in_run = false;
    Line line{};
    while (NextLine(line)) {
      const char* first = line.first();
      if (first == line.end || *first == '#') {
        if (first != line.end) AddComment(line);
        in_run = false;
        continue;
      }
      if (!in_run) {
        table_.row_runs.emplace_back(rows, line_number_);
        in_run = true;
      }
      ReadRow(line, ncol);
      ++rows;
    }
  }

  void ReadRow(const Line& line, size_t ncol) {
    const char* p = line.begin;
    const char* const e = line.end;
    for (size_t c = 0; c < ncol; ++c) {
      while (p < e && IsSpace(*p)) ++p;
      const char* cell = p;
      double v;
      const char* after;
      if (p < e && *p == '"') {
        after = ParseQuoted(p, e, c, v);
      } else {
        const char* s = (p < e && *p == '+' && p + 1 < e && p[1] != '-' && p[1] != '+') ? p + 1 : p;
        auto [ptr, ec] = std::from_chars(s, e, v);
        if (ec == std::errc::result_out_of_range) {
          v = std::strtod(std::string(s, ptr).c_str(), nullptr);
        } else if (ec != std::errc()) {
          CellFailure(line, cell, c, ncol);
        }
        after = ptr;
      }
      const char* q = after;
      while (q < e && IsSpace(*q)) ++q;
      if (q < e && *q != delim_) CellFailure(line, cell, c, ncol);
      if (!std::isfinite(v))
        Fail(c + 1, "NaN or infinity is not allowed (" + Quote(CellText(cell, e)) + ")");
      table_.columns[c].push_back(v);
      if (c + 1 < ncol) {
        if (q >= e) CountFailure(line, ncol);
        p = q + 1;
      } else if (q < e) {
        ++q;  // a delimiter after the last cell: allowed once, then only blanks
        while (q < e && IsBlank(*q)) ++q;
        if (q < e) CountFailure(line, ncol);
      }
    }
  }

  // A quoted cell "..." holding a number; returns the position after the closing quote.
  const char* ParseQuoted(const char* p, const char* e, size_t c, double& v) const {
    const char* close = static_cast<const char*>(std::memchr(p + 1, '"', e - p - 1));
    if (!close) Fail(c + 1, "unterminated quote");
    std::string_view inner(p + 1, close - p - 1);
    while (!inner.empty() && IsBlank(inner.front())) inner.remove_prefix(1);
    while (!inner.empty() && IsBlank(inner.back())) inner.remove_suffix(1);
    if (!inner.empty() && inner.front() == '+') inner.remove_prefix(1);
    const auto [ptr, ec] = std::from_chars(inner.data(), inner.data() + inner.size(), v);
    if (ec == std::errc::result_out_of_range) {
      v = std::strtod(std::string(inner).c_str(), nullptr);
    } else if (ec != std::errc() || ptr != inner.data() + inner.size() || inner.empty()) {
      Fail(c + 1, Quote(std::string_view(p, close + 1 - p)) + " is not a number");
    }
    return close + 1;
  }

  // The text of the cell starting at `cell`: up to the next delimiter, blanks trimmed.
  std::string_view CellText(const char* cell, const char* e) const {
    const char* stop = cell;
    while (stop < e && *stop != delim_) ++stop;
    while (stop > cell && IsSpace(stop[-1])) --stop;
    return std::string_view(cell, stop - cell);
  }

  // Cells on the line: delimiters outside quotes + 1, minus one trailing delimiter.
  size_t CountCells(const Line& line) const {
    size_t cells = 1;
    bool quoted = false;
    const char* last = nullptr;  // last non-blank character
    for (const char* p = line.begin; p < line.end; ++p) {
      if (*p == '"') quoted = !quoted;
      if (!quoted && *p == delim_) ++cells;
      if (!IsBlank(*p) || *p == delim_) last = p;
    }
    if (last && *last == delim_ && cells > 1) --cells;
    return cells;
  }

  [[noreturn]] void CountFailure(const Line& line, size_t ncol) const {
    const size_t found = CountCells(line);
    Fail(std::min(found, ncol) + 1,
         "expected " + std::to_string(ncol) + " cells, found " + std::to_string(found));
  }

  // A cell that does not read as a number: an empty cell, a missing one, or text.
  [[noreturn]] void CellFailure(const Line& line, const char* cell, size_t c, size_t ncol) const {
    if (CountCells(line) != ncol) CountFailure(line, ncol);
    const std::string_view text = CellText(cell, line.end);
    if (text.empty()) Fail(c + 1, "empty cell, expected a number");
    // "1,5" in a semicolon- or tab-separated file is a decimal comma (a common export setting).
    const bool decimal_comma = delim_ != ',' && text.find(',') != std::string_view::npos &&
                               text.find_first_not_of("0123456789+-,eE") == std::string_view::npos;
    Fail(c + 1, Quote(text) + " is not a number" +
                    (decimal_comma ? " (a decimal comma? write decimals with a point)" : ""));
  }

  const char* p_;
  const char* end_;
  CsvReadOptions options_;
  char delim_ = ',';
  size_t line_number_ = 0;
  Table table_;
};

// The whole file in memory: mapped when it is a regular file, read otherwise.
class FileBytes {
 public:
  explicit FileBytes(const std::string& path) : path_(path) {
    fd_ = open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd_ < 0) Fail(errno);
    struct stat st;
    if (fstat(fd_, &st) != 0) Fail(errno);
    if (S_ISDIR(st.st_mode)) Fail(EISDIR);
    if (S_ISREG(st.st_mode) && st.st_size > 0) {
      size_ = static_cast<size_t>(st.st_size);
      void* m = mmap(nullptr, size_, PROT_READ, MAP_PRIVATE, fd_, 0);
      if (m != MAP_FAILED) {
        map_ = static_cast<const char*>(m);
        madvise(m, size_, MADV_SEQUENTIAL);
        return;
      }
    }
    char chunk[1 << 16];
    while (true) {
      const ssize_t n = read(fd_, chunk, sizeof chunk);
      if (n < 0) {
        if (errno == EINTR) continue;
        Fail(errno);
      }
      if (n == 0) break;
      copy_.append(chunk, static_cast<size_t>(n));
    }
  }
  ~FileBytes() {
    if (map_) munmap(const_cast<char*>(map_), size_);
    if (fd_ >= 0) close(fd_);
  }
  FileBytes(const FileBytes&) = delete;
  FileBytes& operator=(const FileBytes&) = delete;

  std::string_view bytes() const {
    return map_ ? std::string_view(map_, size_) : std::string_view(copy_);
  }

 private:
  [[noreturn]] void Fail(int error_number) {
    const std::string reason = std::strerror(error_number);
    if (fd_ >= 0) close(fd_);
    fd_ = -1;
    throw DataError("cannot read '" + path_ + "': " + reason);
  }

  std::string path_;
  int fd_ = -1;
  const char* map_ = nullptr;
  size_t size_ = 0;
  std::string copy_;
};

}  // namespace

void CsvReadOptions::Validate() const {
  if (delimiter == 0 || delimiter == ',' || delimiter == ';' || delimiter == '\t' ||
      delimiter == '|')
    return;
  std::string shown = std::isprint(static_cast<unsigned char>(delimiter))
                          ? std::string(1, delimiter)
                          : "\\x" + std::to_string(static_cast<unsigned char>(delimiter));
  throw UsageError("delimiter '" + shown +
                   "' is not allowed: use ',', ';', tab, '|' or 0 to detect it");
}

size_t Table::LineOfRow(size_t row) const {
  if (row >= rows() || row_runs.empty()) return 0;
  auto it = std::upper_bound(
      row_runs.begin(), row_runs.end(), row,
      [](size_t r, const std::pair<size_t, size_t>& run) { return r < run.first; });
  --it;
  return it->second + (row - it->first);
}

int Table::ColumnIndex(std::string_view name_or_index) const {
  for (size_t c = 0; c < names.size(); ++c)
    if (names[c] == name_or_index) return static_cast<int>(c);
  std::string present;
  for (size_t c = 0; c < names.size(); ++c) present += (c ? ", " : "") + names[c];
  const bool digits =
      !name_or_index.empty() && std::all_of(name_or_index.begin(), name_or_index.end(),
                                            [](char ch) { return ch >= '0' && ch <= '9'; });
  if (digits) {
    size_t index = 0;
    const auto [ptr, ec] =
        std::from_chars(name_or_index.data(), name_or_index.data() + name_or_index.size(), index);
    if (ec == std::errc() && index >= 1 && index <= names.size())
      return static_cast<int>(index - 1);
    throw DataError(path + ": no column " + std::string(name_or_index) + "; the file has " +
                    std::to_string(names.size()) +
                    (names.size() == 1 ? " column (" : " columns (") + present + ")");
  }
  throw DataError(path + ": no column '" + std::string(name_or_index) + "'; columns are " +
                  present);
}

Table ParseCsv(std::string_view content, std::string name, const CsvReadOptions& options) {
  options.Validate();
  return Parser(content, std::move(name), options).Run();
}

Table ReadCsv(const std::string& path, const CsvReadOptions& options) {
  options.Validate();
  FileBytes file(path);
  return Parser(file.bytes(), path, options).Run();
}

}  // namespace lw
