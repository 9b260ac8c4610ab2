#include "app/output.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <ostream>

#include "identify/model_structure.h"

namespace lw::app {
namespace {

// Number of code points in a UTF-8 string (continuation bytes are not counted).
size_t DisplayWidth(std::string_view s) {
  return static_cast<size_t>(
      std::count_if(s.begin(), s.end(), [](char c) { return (c & 0xC0) != 0x80; }));
}

bool LooksNumeric(std::string_view s) {
  if (s.empty()) return false;
  char* end = nullptr;
  std::string copy(s);
  std::strtod(copy.c_str(), &end);
  if (end == copy.c_str()) return s == "n/a" || s == "inf" || s == "-inf";
  // Allow a unit or percent sign after the number ("3.2 s", "12 %").
  return *end == '\0' || *end == ' ' || *end == '%';
}

std::string Pad(std::string_view s, size_t width, bool right) {
  size_t w = DisplayWidth(s);
  std::string fill(width > w ? width - w : 0, ' ');
  return right ? fill + std::string(s) : std::string(s) + fill;
}

std::string Wrap(const Context& ctx, std::string_view text, const char* code) {
  if (!ctx.color) return std::string(text);
  return std::string("\033[") + code + "m" + std::string(text) + "\033[0m";
}

}  // namespace

std::string FormatNumber(double v, int significant) {
  if (std::isnan(v)) return "n/a";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  significant = std::clamp(significant, 1, 17);
  char buf[64];
  double a = std::fabs(v);
  if (v != 0.0 && (a < 1e-4 || a >= 1e6)) {
    std::snprintf(buf, sizeof buf, "%.*e", significant - 1, v);
    // Drop trailing zeros of the mantissa: 1.500e+06 -> 1.5e+06.
    std::string s(buf);
    size_t e = s.find('e');
    std::string mantissa = s.substr(0, e);
    if (mantissa.find('.') != std::string::npos) {
      mantissa.erase(mantissa.find_last_not_of('0') + 1);
      if (mantissa.back() == '.') mantissa.pop_back();
    }
    return mantissa + s.substr(e);
  }
  std::snprintf(buf, sizeof buf, "%.*g", significant, v);
  std::string s(buf);
  if (s.find('e') != std::string::npos) {
    // %g chose an exponent for a number we print in fixed form (e.g. 123456 with 4 digits).
    int decimals = 0;
    std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
    s = buf;
  }
  if (s == "-0") s = "0";
  return s;
}

EstimateText FormatEstimate(double value, double low, double high, int significant) {
  const bool bounded = std::isfinite(low) && std::isfinite(high);
  EstimateText text;
  for (int digits = std::clamp(significant, 1, 17);; ++digits) {
    text = {FormatNumber(value, digits), FormatNumber(low, digits), FormatNumber(high, digits),
            "undetermined"};
    const bool low_ok = !(low < value) || text.low != text.value;
    const bool high_ok = !(value < high) || text.high != text.value;
    if (!bounded || (low_ok && high_ok) || digits >= std::max(10, significant)) break;
  }
  if (bounded) text.interval = text.low + " .. " + text.high;
  return text;
}

ParameterText FormatParameter(std::string_view name, double value, double low, double high) {
  const ParameterRange range = PhysicalRange(name);
  const double lo = std::max(low, range.lo), hi = std::min(high, range.hi);
  const bool cut = std::isfinite(low) && std::isfinite(high) && (lo != low || hi != high);
  ParameterText text;
  static_cast<EstimateText&>(text) = FormatEstimate(value, cut ? lo : low, cut ? hi : high);
  if (cut) {
    text.interval += " " + std::string(kCutMark);
    const bool at_lo = lo != low;
    const EstimateText raw = FormatEstimate(value, low, high);
    const std::string bound = FormatNumber(at_lo ? range.lo : range.hi);
    text.note = "the symmetric 95 % interval reaches " + (at_lo ? raw.low : raw.high) +
                ", past the physical bound " + bound + ": the data do not rule out " + bound;
  }
  return text;
}

void PrintCutNotes(std::ostream& out, const std::vector<std::string>& notes) {
  for (const std::string& n : notes) out << "  " << kCutMark << " " << n << "\n";
}

std::string FormatQuantity(double v, std::string_view unit, int significant) {
  std::string s = FormatNumber(v, significant);
  if (!unit.empty() && !std::isnan(v)) s += " " + std::string(unit);
  return s;
}

std::string PoleText(std::complex<double> p) {
  if (!std::isfinite(p.real())) return "";
  std::string s = FormatNumber(p.real(), 4);
  if (std::abs(p.imag()) > 1e-12 * std::abs(p)) s += " ± j" + FormatNumber(std::abs(p.imag()), 4);
  return s;
}

bool ListedPole(std::complex<double> p) {
  return p.imag() > 0.0 || std::abs(p.imag()) <= 1e-12 * std::abs(p);
}

nlohmann::json JsonNumber(double v) {
  if (!std::isfinite(v)) return nullptr;
  return v;
}

nlohmann::json JsonNumbers(const std::vector<double>& v) {
  nlohmann::json a = nlohmann::json::array();
  for (double x : v) a.push_back(JsonNumber(x));
  return a;
}

void PrintJson(Context& ctx, const nlohmann::json& doc) { ctx.out << doc.dump(2) << '\n'; }

std::string Bold(const Context& ctx, std::string_view text) { return Wrap(ctx, text, "1"); }
std::string Good(const Context& ctx, std::string_view text) { return Wrap(ctx, text, "32"); }
std::string Caution(const Context& ctx, std::string_view text) { return Wrap(ctx, text, "33"); }
std::string Bad(const Context& ctx, std::string_view text) { return Wrap(ctx, text, "31"); }

void Warn(Context& ctx, std::string_view text) { ctx.err << "warning: " << text << '\n'; }

TextTable::TextTable(std::vector<std::string> header) : header_(std::move(header)) {}

void TextTable::AddRow(std::vector<std::string> row) {
  row.resize(std::max(row.size(), header_.size()));
  rows_.push_back(std::move(row));
}

void TextTable::Print(std::ostream& out, int indent) const {
  size_t ncol = header_.size();
  for (const auto& r : rows_) ncol = std::max(ncol, r.size());
  std::vector<size_t> width(ncol, 0);
  std::vector<bool> numeric(ncol, true);
  for (size_t c = 0; c < header_.size(); ++c) width[c] = DisplayWidth(header_[c]);
  for (const auto& r : rows_) {
    for (size_t c = 0; c < r.size(); ++c) {
      width[c] = std::max(width[c], DisplayWidth(r[c]));
      if (!r[c].empty() && !LooksNumeric(r[c])) numeric[c] = false;
    }
  }
  std::string lead(std::max(indent, 0), ' ');
  auto line = [&](const std::vector<std::string>& cells) {
    std::string s = lead;
    for (size_t c = 0; c < ncol; ++c) {
      std::string cell = c < cells.size() ? cells[c] : "";
      s += Pad(cell, width[c], numeric[c]);
      if (c + 1 < ncol) s += "  ";
    }
    s.erase(s.find_last_not_of(' ') + 1);
    out << s << '\n';
  };
  line(header_);
  std::string rule = lead;
  for (size_t c = 0; c < ncol; ++c) {
    rule += std::string(width[c], '-');
    if (c + 1 < ncol) rule += "  ";
  }
  out << rule << '\n';
  for (const auto& r : rows_) line(r);
}

void KeyValueList::Add(std::string key, std::string value) {
  items_.emplace_back(std::move(key), std::move(value));
}

void KeyValueList::Print(std::ostream& out, int indent) const {
  size_t w = 0;
  for (const auto& [k, v] : items_) w = std::max(w, DisplayWidth(k));
  std::string lead(std::max(indent, 0), ' ');
  for (const auto& [k, v] : items_) out << lead << Pad(k + ":", w + 1, false) << ' ' << v << '\n';
}

}  // namespace lw::app
