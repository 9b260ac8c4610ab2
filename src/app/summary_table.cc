#include "app/summary_table.h"

#include <algorithm>
#include <cstdlib>
#include <ostream>

namespace lw::app {
namespace {

size_t CodePoints(const std::string& s) {
  return static_cast<size_t>(
      std::count_if(s.begin(), s.end(), [](char c) { return (c & 0xC0) != 0x80; }));
}

// A number, optionally followed by a space and a unit or by '%'; or n/a / inf / -inf.
bool IsNumberText(const std::string& s) {
  if (s == "n/a" || s == "inf" || s == "-inf") return true;
  if (s.empty()) return false;
  char* end = nullptr;
  std::strtod(s.c_str(), &end);
  if (end == s.c_str()) return false;
  return *end == '\0' || *end == ' ' || *end == '%';
}

const char* AnsiCode(CellMark m) {
  switch (m) {
    case CellMark::kOk:
      return "32";
    case CellMark::kCaution:
      return "33";
    case CellMark::kFail:
      return "31";
    case CellMark::kHeading:
      return "1";
    case CellMark::kPlain:
      break;
  }
  return nullptr;
}

}  // namespace

SummaryCell OkFail(bool ok) { return Verdict(ok, "OK", "FAIL"); }

SummaryCell Verdict(bool ok, std::string ok_text, std::string fail_text) {
  return ok ? SummaryCell(std::move(ok_text), CellMark::kOk)
            : SummaryCell(std::move(fail_text), CellMark::kFail);
}

SummaryTable::SummaryTable(std::vector<std::string> header) : header_(std::move(header)) {}

void SummaryTable::AddRow(std::vector<SummaryCell> row) { rows_.push_back(std::move(row)); }

std::string SummaryTable::Render(bool color, int indent) const {
  size_t ncol = header_.size();
  for (const auto& r : rows_) ncol = std::max(ncol, r.size());
  std::vector<size_t> width(ncol, 0);
  std::vector<bool> right(ncol, false);
  std::vector<bool> any(ncol, false);
  for (size_t c = 0; c < header_.size(); ++c) width[c] = CodePoints(header_[c]);
  std::vector<bool> numeric(ncol, true);
  for (const auto& r : rows_) {
    for (size_t c = 0; c < r.size(); ++c) {
      width[c] = std::max(width[c], CodePoints(r[c].text));
      if (r[c].text.empty()) continue;
      any[c] = true;
      if (!IsNumberText(r[c].text)) numeric[c] = false;
    }
  }
  for (size_t c = 0; c < ncol; ++c) right[c] = any[c] && numeric[c];

  const std::string lead(static_cast<size_t>(std::max(indent, 0)), ' ');
  std::string text;
  auto emit = [&](const std::vector<SummaryCell>& cells) {
    // Pad the plain text, colour after padding, then drop the trailing blanks of the line.
    std::string line = lead;
    size_t plain_end = line.size();  // end of the last non-blank character
    for (size_t c = 0; c < ncol; ++c) {
      const SummaryCell* cell = c < cells.size() ? &cells[c] : nullptr;
      std::string body = cell ? cell->text : std::string();
      size_t w = CodePoints(body);
      std::string fill(width[c] > w ? width[c] - w : 0, ' ');
      const char* code = cell && color ? AnsiCode(cell->mark) : nullptr;
      if (code && !body.empty()) body = std::string("\033[") + code + "m" + body + "\033[0m";
      if (right[c]) {
        line += fill;
        line += body;
        if (!body.empty()) plain_end = line.size();
      } else {
        line += body;
        if (!body.empty()) plain_end = line.size();
        line += fill;
      }
      if (c + 1 < ncol) line += "  ";
    }
    line.resize(plain_end);
    text += line;
    text += '\n';
  };

  std::vector<SummaryCell> head;
  for (const auto& h : header_) head.emplace_back(h, CellMark::kHeading);
  emit(head);
  std::string rule = lead;
  for (size_t c = 0; c < ncol; ++c) {
    rule += std::string(width[c], '-');
    if (c + 1 < ncol) rule += "  ";
  }
  text += rule + '\n';
  for (const auto& r : rows_) emit(r);
  return text;
}

void SummaryTable::Print(const Context& ctx, int indent) const {
  ctx.out << Render(ctx.color, indent);
}

}  // namespace lw::app
