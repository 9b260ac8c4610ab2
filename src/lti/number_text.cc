#include "lti/number_text.h"

#include <charconv>

namespace lw {

std::string ShortestText(double value) {
  char buf[64];
  const auto res = std::to_chars(buf, buf + sizeof(buf), value);
  return std::string(buf, res.ptr);
}

}  // namespace lw
