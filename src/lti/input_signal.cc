#include "lti/input_signal.h"

#include <charconv>
#include <cmath>
#include <sstream>

#include "lti/error.h"

namespace lw {
namespace {

std::vector<std::string_view> Split(std::string_view s, char sep) {
  std::vector<std::string_view> parts;
  size_t start = 0;
  while (true) {
    const size_t pos = s.find(sep, start);
    parts.push_back(s.substr(start, pos == std::string_view::npos ? pos : pos - start));
    if (pos == std::string_view::npos) return parts;
    start = pos + 1;
  }
}

[[noreturn]] void Bad(std::string_view spec, const std::string& why) {
  throw UsageError("input '" + std::string(spec) + "': " + why);
}

double Number(std::string_view spec, std::string_view field, const char* name) {
  double v = 0.0;
  const char* end = field.data() + field.size();
  const auto res = std::from_chars(field.data(), end, v);
  if (field.empty() || res.ec != std::errc() || res.ptr != end || !std::isfinite(v)) {
    Bad(spec,
        std::string("expected a finite number for ") + name + ", got '" + std::string(field) + "'");
  }
  return v;
}

bool Near(double a, double b) { return std::abs(a - b) <= 1e-12 * std::max(1.0, std::abs(b)); }

std::string Num(double v) {
  std::ostringstream os;
  os.precision(17);
  os << v;
  return os.str();
}

uint64_t SplitMix64(uint64_t x) {
  x += 0x9e3779b97f4a7c15ULL;
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

}  // namespace

std::vector<uint8_t> PrbsBits(uint64_t seed, size_t count) {
  constexpr uint32_t kPeriod = (1u << 15) - 1;
  // Bit i of state holds a_{n+i}; the state is never zero.
  uint32_t state = 1 + static_cast<uint32_t>(SplitMix64(seed) % kPeriod);
  std::vector<uint8_t> bits(count);
  for (size_t i = 0; i < count; ++i) {
    bits[i] = state & 1u;
    const uint32_t next = (state ^ (state >> 14)) & 1u;  // a_n xor a_{n+14}
    state = (state >> 1) | (next << 14);
  }
  return bits;
}

InputSignal InputSignal::Parse(std::string_view spec) {
  InputSignal s;
  if (spec.starts_with("csv:")) {
    const std::string_view rest = spec.substr(4);
    const size_t colon = rest.rfind(':');
    if (colon == std::string_view::npos || colon == 0 || colon + 1 == rest.size()) {
      Bad(spec, "expected csv:FILE:COLUMN (a file and a column name or 1-based number)");
    }
    s.kind_ = Kind::kCsv;
    s.csv_file_ = std::string(rest.substr(0, colon));
    s.csv_column_ = std::string(rest.substr(colon + 1));
    return s;
  }
  if (spec.starts_with("prbs:")) {
    const auto f = Split(spec, ':');
    if (f.size() != 4) Bad(spec, "expected prbs:LO:HI:BIT_S (two levels and a bit length in s)");
    s.kind_ = Kind::kPrbs;
    s.lo_ = Number(spec, f[1], "LO");
    s.hi_ = Number(spec, f[2], "HI");
    s.bit_s_ = Number(spec, f[3], "BIT_S");
    if (!(s.bit_s_ > 0.0)) Bad(spec, "BIT_S must be > 0 s, got " + Num(s.bit_s_));
    return s;
  }
  if (!spec.starts_with("step:")) {
    Bad(spec, "expected step:FROM:TO:AT[,step:...], prbs:LO:HI:BIT_S or csv:FILE:COLUMN");
  }
  s.kind_ = Kind::kSteps;
  for (std::string_view item : Split(spec, ',')) {
    const auto f = Split(item, ':');
    if (f.size() != 4 || f[0] != "step") {
      Bad(spec,
          "expected step:FROM:TO:AT (levels and a time in s) for '" + std::string(item) + "'");
    }
    const Step st{Number(spec, f[1], "FROM"), Number(spec, f[2], "TO"), Number(spec, f[3], "AT")};
    if (!s.steps_.empty()) {
      const Step& prev = s.steps_.back();
      if (!Near(st.from, prev.to)) {
        Bad(spec, "step at " + Num(st.at) + " starts from " + Num(st.from) +
                      " but the previous step ended at " + Num(prev.to));
      }
      if (!(st.at > prev.at)) {
        Bad(spec, "step times must increase: " + Num(st.at) + " follows " + Num(prev.at));
      }
    }
    s.steps_.push_back(st);
  }
  return s;
}

std::vector<double> InputSignal::Sample(std::span<const double> t, uint64_t seed) const {
  for (double ti : t) {
    if (!std::isfinite(ti)) throw UsageError("input '" + ToString() + "': a time is not finite");
  }
  std::vector<double> v(t.size());
  if (kind_ == Kind::kCsv) {
    throw UsageError("input '" + ToString() + "' is read from its file by the caller");
  }
  if (t.empty()) return v;
  if (kind_ == Kind::kPrbs) {
    const double t0 = t[0];
    double last = 0.0;
    for (double ti : t) last = std::max(last, std::floor((ti - t0) / bit_s_ + 1e-9));
    const auto bits = PrbsBits(seed, static_cast<size_t>(last) + 1);
    for (size_t i = 0; i < t.size(); ++i) {
      const double k = std::max(0.0, std::floor((t[i] - t0) / bit_s_ + 1e-9));
      v[i] = bits[static_cast<size_t>(k)] ? hi_ : lo_;
    }
    return v;
  }
  for (size_t i = 0; i < t.size(); ++i) {
    double level = initial_level();
    for (const Step& st : steps_) {
      if (t[i] >= st.at - 1e-12 * std::max(1.0, std::abs(st.at))) level = st.to;
    }
    v[i] = level;
  }
  return v;
}

std::vector<double> InputSignal::StepTimes() const {
  std::vector<double> at;
  if (kind_ == Kind::kSteps) {
    for (const Step& st : steps_) at.push_back(st.at);
  }
  return at;
}

double InputSignal::initial_level() const {
  switch (kind_) {
    case Kind::kSteps:
      return steps_.empty() ? 0.0 : steps_.front().from;
    case Kind::kPrbs:
      return lo_;
    case Kind::kCsv:
      return 0.0;
  }
  return 0.0;
}

std::string InputSignal::ToString() const {
  switch (kind_) {
    case Kind::kCsv:
      return "csv:" + csv_file_ + ":" + csv_column_;
    case Kind::kPrbs:
      return "prbs:" + Num(lo_) + ":" + Num(hi_) + ":" + Num(bit_s_);
    case Kind::kSteps: {
      std::string out;
      for (const Step& st : steps_) {
        if (!out.empty()) out += ",";
        out += "step:" + Num(st.from) + ":" + Num(st.to) + ":" + Num(st.at);
      }
      return out;
    }
  }
  return {};
}

std::vector<double> UniformGrid(double rate_hz, double duration_s) {
  if (!std::isfinite(rate_hz) || rate_hz <= 0.0) {
    throw UsageError("sample rate " + Num(rate_hz) + " Hz: expected a finite value > 0");
  }
  if (!std::isfinite(duration_s) || duration_s <= 0.0) {
    throw UsageError("duration " + Num(duration_s) + " s: expected a finite value > 0");
  }
  const double last = std::floor(duration_s * rate_hz + 1e-9);
  if (last >= 1e9) {
    throw UsageError("a grid of " + Num(duration_s) + " s at " + Num(rate_hz) +
                     " Hz has more than 1e9 samples");
  }
  std::vector<double> t(static_cast<size_t>(last) + 1);
  for (size_t k = 0; k < t.size(); ++k) t[k] = static_cast<double>(k) / rate_hz;
  return t;
}

}  // namespace lw
