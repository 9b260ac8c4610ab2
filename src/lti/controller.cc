#include "lti/controller.h"

#include <charconv>
#include <cmath>
#include <string>
#include <vector>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

// The kinds, their text forms and what their fields mean, for the messages.
struct KindInfo {
  const char* name;
  Controller::Kind kind;
  size_t fields;
  const char* form;
};
constexpr KindInfo kKinds[] = {
    {"p", Controller::Kind::kProportional, 0, "p (no fields)"},
    {"pi", Controller::Kind::kPI, 1, "pi:Z (zero in rad/s)"},
    {"lead", Controller::Kind::kLead, 2, "lead:Z:P (zero and pole in rad/s)"},
    {"pid", Controller::Kind::kPID, 3, "pid:Z1:Z2:P (two zeros and a pole in rad/s)"},
};

std::vector<std::string_view> SplitFields(std::string_view text) {
  std::vector<std::string_view> parts;
  size_t start = 0;
  while (true) {
    const size_t colon = text.find(':', start);
    if (colon == std::string_view::npos) {
      parts.push_back(text.substr(start));
      return parts;
    }
    parts.push_back(text.substr(start, colon - start));
    start = colon + 1;
  }
}

double ParseField(std::string_view whole, std::string_view field, const char* what,
                  const KindInfo& info) {
  double v = 0.0;
  const char* end = field.data() + field.size();
  auto res = std::from_chars(field.data(), end, v);
  if (field.empty() || res.ec != std::errc() || res.ptr != end || !std::isfinite(v)) {
    throw UsageError("controller '" + std::string(whole) + "': the " + what + " '" +
                     std::string(field) + "' is not a finite number; expected " + info.form);
  }
  return v;
}

}  // namespace

Controller Controller::Parse(std::string_view text) {
  const std::string whole(text);
  const std::vector<std::string_view> parts = SplitFields(text);
  const KindInfo* info = nullptr;
  for (const KindInfo& k : kKinds) {
    if (parts[0] == k.name) info = &k;
  }
  if (info == nullptr) {
    throw UsageError("controller '" + whole + "': unknown kind '" + std::string(parts[0]) +
                     "'; expected p, pi:Z, lead:Z:P or pid:Z1:Z2:P (zeros and pole in rad/s)");
  }
  if (parts.size() - 1 != info->fields) {
    throw UsageError("controller '" + whole + "': expected " + info->form);
  }
  Controller c;
  c.kind_ = info->kind;
  switch (c.kind_) {
    case Kind::kProportional:
      break;
    case Kind::kPI:
      c.z1_ = ParseField(text, parts[1], "zero Z", *info);
      break;
    case Kind::kLead:
      c.z1_ = ParseField(text, parts[1], "zero Z", *info);
      c.p_ = ParseField(text, parts[2], "pole P", *info);
      break;
    case Kind::kPID:
      c.z1_ = ParseField(text, parts[1], "zero Z1", *info);
      c.z2_ = ParseField(text, parts[2], "zero Z2", *info);
      c.p_ = ParseField(text, parts[3], "pole P", *info);
      break;
  }
  // A zero at s = 0 cancels the integrator's pole there: the loop keeps a pole at s = 0 that
  // no gain moves (a mode the controller can neither see nor drive), so no band exists.
  if (c.kind_ == Kind::kPI && c.z1_ == 0.0) {
    throw UsageError("controller '" + whole +
                     "': the zero Z is 0 rad/s, which cancels the integrator's pole at s = 0 and "
                     "leaves a closed-loop pole there at every gain; use p, or Z != 0");
  }
  if (c.kind_ == Kind::kPID && (c.z1_ == 0.0 || c.z2_ == 0.0)) {
    const double other = c.z1_ == 0.0 ? c.z2_ : c.z1_;
    throw UsageError("controller '" + whole + "': the zero " + (c.z1_ == 0.0 ? "Z1" : "Z2") +
                     " is 0 rad/s, which cancels the integrator's pole at s = 0 and leaves a "
                     "closed-loop pole there at every gain; use lead:" +
                     ShortestText(other) + ":" + ShortestText(c.p_) + ", or zeros != 0");
  }
  if ((c.kind_ == Kind::kLead || c.kind_ == Kind::kPID) && !(c.p_ > 0.0)) {
    throw UsageError("controller '" + whole + "': the pole P is " + ShortestText(c.p_) +
                     " rad/s but must be > 0 rad/s");
  }
  return c;
}

TransferFunction Controller::Shape() const {
  const Polynomial s({1.0, 0.0});
  auto factor = [](double a) { return Polynomial({1.0, a}); };  // s + a
  switch (kind_) {
    case Kind::kProportional:
      return TransferFunction();
    case Kind::kPI:
      return TransferFunction(factor(z1_), s);
    case Kind::kLead:
      return TransferFunction(factor(z1_), factor(p_));
    case Kind::kPID:
      return TransferFunction(factor(z1_) * factor(z2_), s * factor(p_));
  }
  return TransferFunction();
}

std::string Controller::ToString() const {
  switch (kind_) {
    case Kind::kProportional:
      return "p";
    case Kind::kPI:
      return "pi:" + ShortestText(z1_);
    case Kind::kLead:
      return "lead:" + ShortestText(z1_) + ":" + ShortestText(p_);
    case Kind::kPID:
      return "pid:" + ShortestText(z1_) + ":" + ShortestText(z2_) + ":" + ShortestText(p_);
  }
  return "p";
}

}  // namespace lw
