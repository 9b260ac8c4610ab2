#include "lti/number_text.h"

#include <charconv>
#include <cmath>
#include <cstdio>

namespace lw {

std::string ShortestText(double value) {
  char buf[64];
  const auto res = std::to_chars(buf, buf + sizeof(buf), value);
  return std::string(buf, res.ptr);
}

std::string SignificantText(double value, int digits) {
  char buf[48];
  std::snprintf(buf, sizeof buf, "%.*g", digits, value);
  return buf;
}

std::optional<std::pair<double, double>> ParseNumberPair(std::string_view text, double empty_first,
                                                         double empty_second) {
  auto side = [](std::string_view part, double if_empty) -> std::optional<double> {
    if (part.empty()) {
      if (std::isnan(if_empty)) return std::nullopt;
      return if_empty;
    }
    if (part.front() == '+') part.remove_prefix(1);
    double v = 0.0;
    const auto [end, ec] = std::from_chars(part.data(), part.data() + part.size(), v);
    if (part.empty() || ec != std::errc() || end != part.data() + part.size() ||
        !std::isfinite(v)) {
      return std::nullopt;
    }
    return v;
  };
  const size_t colon = text.find(':');
  if (colon == std::string_view::npos) return std::nullopt;
  const std::optional<double> a = side(text.substr(0, colon), empty_first);
  const std::optional<double> b = side(text.substr(colon + 1), empty_second);
  if (!a || !b) return std::nullopt;
  return std::pair<double, double>{*a, *b};
}

}  // namespace lw
