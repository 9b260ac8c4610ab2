#include "io/rig_protocol.h"

#include <array>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <limits>
#include <utility>

#include "lti/error.h"

namespace lw {
namespace {

// Slicing-by-8: tables[k][x] is the CRC register after the byte x followed by k zero bytes,
// starting from 0. The CRC is linear, so 8 bytes b0..b7 advance a register (h, l) to
//     T7[h ^ b0] ^ T6[l ^ b1] ^ T5[b2] ^ T4[b3] ^ T3[b4] ^ T2[b5] ^ T1[b6] ^ T0[b7]
// with eight independent look-ups instead of a chain of eight dependent ones.
using CrcTables = std::array<std::array<std::uint16_t, 256>, 8>;
constexpr CrcTables MakeCrcTables() {
  CrcTables tables{};
  for (unsigned byte = 0; byte < 256; ++byte) {
    std::uint16_t crc = static_cast<std::uint16_t>(byte << 8);
    for (int bit = 0; bit < 8; ++bit) {
      crc = (crc & 0x8000) ? static_cast<std::uint16_t>((crc << 1) ^ 0x1021)
                           : static_cast<std::uint16_t>(crc << 1);
    }
    tables[0][byte] = crc;
  }
  for (std::size_t k = 1; k < 8; ++k) {
    for (unsigned x = 0; x < 256; ++x) {
      const std::uint16_t prev = tables[k - 1][x];
      tables[k][x] = static_cast<std::uint16_t>((prev << 8) ^ tables[0][prev >> 8]);
    }
  }
  return tables;
}
constexpr CrcTables kCrcTables = MakeCrcTables();

constexpr char kHex[] = "0123456789ABCDEF";

struct WordEntry {
  std::string_view word;
  RigMessageKind kind;
};
constexpr std::array<WordEntry, 13> kWords = {{
    {"caps", RigMessageKind::kCaps},
    {"s", RigMessageKind::kSample},
    {"ok", RigMessageKind::kOk},
    {"err", RigMessageKind::kErr},
    {"state", RigMessageKind::kState},
    {"hello", RigMessageKind::kHello},
    {"u", RigMessageKind::kActuator},
    {"loop", RigMessageKind::kLoop},
    {"ref", RigMessageKind::kRef},
    {"go", RigMessageKind::kGo},
    {"halt", RigMessageKind::kHalt},
    {"safe", RigMessageKind::kSafe},
    {"beat", RigMessageKind::kBeat},
}};

constexpr std::array<std::string_view, 4> kModeWords = {"idle", "open", "closed", "safe"};

// ---- Encoding -------------------------------------------------------------------------------

bool IsWord(std::string_view text) {
  if (text.empty()) return false;
  for (char c : text) {
    if (c <= ' ' || c > '~') return false;
  }
  return true;
}

bool IsFreeText(std::string_view text) {
  for (char c : text) {
    if (c < ' ' || c > '~') return false;
  }
  return text.find(" *") == std::string_view::npos;
}

class LineWriter {
 public:
  explicit LineWriter(RigMessageKind kind, std::uint32_t seq) {
    body_.reserve(64);
    body_ += RigMessageWord(kind);
    Unsigned(seq);
  }
  void Unsigned(std::uint64_t value) {
    char buffer[24];
    auto end = std::to_chars(buffer, buffer + sizeof buffer, value).ptr;
    body_ += ' ';
    body_.append(buffer, end);
  }
  void Signed(std::int64_t value) {
    char buffer[24];
    auto end = std::to_chars(buffer, buffer + sizeof buffer, value).ptr;
    body_ += ' ';
    body_.append(buffer, end);
  }
  void Real(double value, const char* field) {
    if (!std::isfinite(value)) {
      throw UsageError(std::string("rig line '") + std::string(body_) + " ...': " + field +
                       " must be a finite number");
    }
    char buffer[32];
    int n = std::snprintf(buffer, sizeof buffer, "%.9g", value);
    body_ += ' ';
    body_.append(buffer, static_cast<std::size_t>(n));
  }
  void Word(std::string_view word, const char* field) {
    if (!IsWord(word)) {
      throw UsageError(std::string("rig line '") + body_ + " ...': " + field + " '" +
                       std::string(word) + "' must be one word of printable characters");
    }
    body_ += ' ';
    body_ += word;
  }
  void Text(std::string_view text, bool required) {
    if (text.empty() && !required) return;
    if (text.empty() || !IsFreeText(text) || text.front() == ' ' || text.back() == ' ' ||
        text.find("  ") != std::string_view::npos) {
      throw UsageError(std::string("rig line '") + body_ + " ...': text '" + std::string(text) +
                       "' must be printable words separated by single spaces, without \" *\"");
    }
    body_ += ' ';
    body_ += text;
  }
  std::string Finish() {
    if (body_.size() + 6 > kRigMaxLineBytes) {
      throw UsageError("rig line '" + body_ + "' is longer than " +
                       std::to_string(kRigMaxLineBytes) + " bytes");
    }
    return SealRigLine(body_);
  }

 private:
  std::string body_;
};

// ---- Parsing --------------------------------------------------------------------------------

// Where ParseInto writes: a RigParseResult's members, or the splitter's event.
struct ParseOut {
  RigMessage& message;
  RigParseStatus& status;
  std::string& reason;
};

// Fields of a body split at single spaces, with the position of each for the TEXT remainder.
class Fields {
 public:
  enum class Problem { kNone, kNotPrintable, kEmptyField };
  // One pass over the body: splits it at spaces and checks that every byte is printable ASCII
  // (that problem is reported first), and that no field is empty (a leading, trailing or double
  // space).
  Problem Split(std::string_view body) {
    body_ = body;
    count_ = 0;
    bool printable = true;
    bool empty_field = false;
    std::size_t start = 0;
    const std::size_t n = body.size();
    for (std::size_t i = 0; i <= n; ++i) {
      if (i < n && body[i] != ' ') {
        printable &= body[i] > ' ' && body[i] <= '~';
        continue;
      }
      if (i == start) empty_field = true;
      if (count_ < kMaxFields) {
        starts_[count_] = start;
        fields_[count_] = body.substr(start, i - start);
      }
      ++count_;
      start = i + 1;
    }
    if (!printable) return Problem::kNotPrintable;
    return empty_field ? Problem::kEmptyField : Problem::kNone;
  }
  std::size_t count() const { return count_; }
  std::string_view operator[](std::size_t i) const { return fields_[i]; }
  // Everything from field i to the end of the body.
  std::string_view Rest(std::size_t i) const { return body_.substr(starts_[i]); }

 private:
  static constexpr std::size_t kMaxFields = 12;
  std::string_view body_;
  std::array<std::string_view, kMaxFields> fields_{};
  std::array<std::size_t, kMaxFields> starts_{};
  std::size_t count_ = 0;
};

bool ParseUnsigned(std::string_view text, std::uint64_t max, std::uint64_t& out) {
  if (text.empty() || text.size() > 20) return false;
  if (text.size() > 1 && text[0] == '0') return false;  // no leading zeros
  std::uint64_t value = 0;
  for (char c : text) {
    const unsigned digit = static_cast<unsigned char>(c) - static_cast<unsigned>('0');
    if (digit > 9 || __builtin_mul_overflow(value, 10u, &value) ||
        __builtin_add_overflow(value, digit, &value)) {
      return false;
    }
  }
  if (value > max) return false;
  out = value;
  return true;
}

bool ParseReal(std::string_view text, double& out) {
  if (text.empty()) return false;
  // Only what %.9g can print: sign, digits, one point, an exponent. No "inf", "nan", hex.
  for (char c : text) {
    if (!((c >= '0' && c <= '9') || c == '-' || c == '+' || c == '.' || c == 'e' || c == 'E')) {
      return false;
    }
  }
  if (text[0] == '+') return false;
  double value = 0.0;
  auto [ptr, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || ptr != text.data() + text.size() || !std::isfinite(value)) return false;
  out = value;
  return true;
}

int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

class BodyParser {
 public:
  BodyParser(const Fields& fields, ParseOut& out) : f_(fields), r_(out) {}

  bool Count(std::size_t expected) {
    if (f_.count() == expected) return true;
    return Fail("expected " + std::to_string(expected) + " fields, found " +
                std::to_string(f_.count()));
  }
  bool AtLeast(std::size_t expected) {
    if (f_.count() >= expected) return true;
    return Fail("expected at least " + std::to_string(expected) + " fields, found " +
                std::to_string(f_.count()));
  }
  bool Unsigned(std::size_t i, const char* name, std::uint64_t max, std::uint64_t& out) {
    if (ParseUnsigned(f_[i], max, out)) return true;
    return Fail(FieldName(i, name) + " '" + std::string(f_[i]) +
                "' is not a whole number from 0 to " + std::to_string(max) +
                " without leading zeros");
  }
  bool Seq32(std::size_t i, const char* name, std::uint32_t& out) {
    std::uint64_t value = 0;
    if (!Unsigned(i, name, std::numeric_limits<std::uint32_t>::max(), value)) return false;
    out = static_cast<std::uint32_t>(value);
    return true;
  }
  bool Real(std::size_t i, const char* name, double& out) {
    if (ParseReal(f_[i], out)) return true;
    return Fail(FieldName(i, name) + " '" + std::string(f_[i]) + "' is not a finite number");
  }
  bool Fail(std::string reason) {
    r_.status = RigParseStatus::kMalformed;
    r_.reason = std::move(reason);
    return false;
  }
  static std::string FieldName(std::size_t i, const char* name) {
    return "field " + std::to_string(i + 1) + " (" + name + ")";
  }

 private:
  const Fields& f_;
  ParseOut& r_;
};

// TEXT may not contain " *", which would read as the start of a CRC.
bool NoSeal(BodyParser& p, const std::string& text) {
  if (text.find(" *") == std::string::npos) return true;
  return p.Fail("TEXT contains \" *\"");
}

bool ParseCaps(const Fields& f, BodyParser& p, RigMessage& m) {
  constexpr std::uint64_t kMaxInt = std::numeric_limits<std::int64_t>::max();
  std::uint64_t version = 0, period = 0, watchdog = 0;
  RigCaps& c = m.caps;
  if (!p.Count(9) || !p.Unsigned(2, "VERSION", 1000000, version) ||
      !p.Unsigned(3, "PERIOD_US", kMaxInt, period) || !p.Real(4, "ACT_LO", c.actuator_lo) ||
      !p.Real(5, "ACT_HI", c.actuator_hi) || !p.Real(6, "SAFE", c.safe_value) ||
      !p.Unsigned(7, "WATCHDOG_MS", kMaxInt, watchdog)) {
    return false;
  }
  c.version = static_cast<int>(version);
  c.period_us = static_cast<std::int64_t>(period);
  c.watchdog_ms = static_cast<std::int64_t>(watchdog);
  c.name = std::string(f[8]);
  if (c.version < 1) return p.Fail("VERSION must be 1 or more");
  if (c.period_us <= 0) return p.Fail("PERIOD_US must be more than 0");
  if (!(c.actuator_lo < c.actuator_hi)) return p.Fail("ACT_LO must be less than ACT_HI");
  if (c.safe_value < c.actuator_lo || c.safe_value > c.actuator_hi) {
    return p.Fail("SAFE must lie in [ACT_LO, ACT_HI]");
  }
  if (c.watchdog_ms <= 0) return p.Fail("WATCHDOG_MS must be more than 0");
  return true;
}

bool ParseFields(const Fields& f, BodyParser& p, RigMessage& m) {
  switch (m.kind) {
    case RigMessageKind::kCaps:
      return ParseCaps(f, p, m);
    case RigMessageKind::kSample:
      return p.Count(6) &&
             p.Unsigned(2, "T_US", std::numeric_limits<std::uint64_t>::max(), m.sample.t_us) &&
             p.Real(3, "R", m.sample.reference) && p.Real(4, "U", m.sample.actuator) &&
             p.Real(5, "Y", m.sample.output);
    case RigMessageKind::kOk:
      return p.Count(3) && p.Seq32(2, "ACKED_SEQ", m.acked);
    case RigMessageKind::kErr:
      if (!p.AtLeast(5) || !p.Seq32(2, "ACKED_SEQ", m.acked)) return false;
      m.code = std::string(f[3]);
      m.text = std::string(f.Rest(4));
      return NoSeal(p, m.text);
    case RigMessageKind::kState: {
      if (!p.AtLeast(3)) return false;
      std::size_t i = 0;
      while (i < kModeWords.size() && kModeWords[i] != f[2]) ++i;
      if (i == kModeWords.size()) {
        return p.Fail("field 3 (MODE) '" + std::string(f[2]) +
                      "' is not one of idle, open, closed, safe");
      }
      m.mode = static_cast<RigMode>(i);
      if (f.count() > 3) m.text = std::string(f.Rest(3));
      return NoSeal(p, m.text);
    }
    case RigMessageKind::kHello: {
      std::uint64_t version = 0;
      if (!p.Count(3) || !p.Unsigned(2, "VERSION", 1000000, version)) return false;
      if (version < 1) return p.Fail("VERSION must be 1 or more");
      m.version = static_cast<int>(version);
      return true;
    }
    case RigMessageKind::kActuator:
      return p.Count(3) && p.Real(2, "VALUE", m.value);
    case RigMessageKind::kRef:
      return p.Count(3) && p.Real(2, "VALUE", m.value);
    case RigMessageKind::kLoop:
      if (!p.Count(5)) return false;
      m.controller = std::string(f[2]);
      return p.Real(3, "GAIN", m.gain) && p.Real(4, "REFERENCE", m.value);
    case RigMessageKind::kGo:
    case RigMessageKind::kHalt:
    case RigMessageKind::kSafe:
    case RigMessageKind::kBeat:
      return p.Count(2);
  }
  return p.Fail("unknown kind");
}

}  // namespace

std::uint16_t Crc16CcittFalse(std::string_view bytes) {
  const auto& t = kCrcTables;
  const auto* p = reinterpret_cast<const unsigned char*>(bytes.data());
  std::size_t n = bytes.size();
  unsigned crc = 0xFFFF;
  for (; n >= 8; p += 8, n -= 8) {
    crc = t[7][(crc >> 8) ^ p[0]] ^ t[6][(crc & 0xFF) ^ p[1]] ^ t[5][p[2]] ^ t[4][p[3]] ^
          t[3][p[4]] ^ t[2][p[5]] ^ t[1][p[6]] ^ t[0][p[7]];
  }
  for (; n > 0; ++p, --n) crc = ((crc << 8) & 0xFFFF) ^ t[0][(crc >> 8) ^ *p];
  return static_cast<std::uint16_t>(crc);
}

std::string_view RigMessageWord(RigMessageKind kind) {
  for (const WordEntry& entry : kWords) {
    if (entry.kind == kind) return entry.word;
  }
  return "?";
}

bool IsRigToHost(RigMessageKind kind) {
  switch (kind) {
    case RigMessageKind::kCaps:
    case RigMessageKind::kSample:
    case RigMessageKind::kOk:
    case RigMessageKind::kErr:
    case RigMessageKind::kState:
      return true;
    default:
      return false;
  }
}

std::string_view RigModeWord(RigMode mode) { return kModeWords[static_cast<std::size_t>(mode)]; }

RigMessage RigMessage::Caps(std::uint32_t seq, RigCaps caps) {
  RigMessage m = Bare(RigMessageKind::kCaps, seq);
  m.caps = std::move(caps);
  return m;
}
RigMessage RigMessage::Sample(std::uint32_t seq, RigSample sample) {
  RigMessage m = Bare(RigMessageKind::kSample, seq);
  m.sample = sample;
  return m;
}
RigMessage RigMessage::Ok(std::uint32_t seq, std::uint32_t acked) {
  RigMessage m = Bare(RigMessageKind::kOk, seq);
  m.acked = acked;
  return m;
}
RigMessage RigMessage::Err(std::uint32_t seq, std::uint32_t acked, std::string code,
                           std::string text) {
  RigMessage m = Bare(RigMessageKind::kErr, seq);
  m.acked = acked;
  m.code = std::move(code);
  m.text = std::move(text);
  return m;
}
RigMessage RigMessage::State(std::uint32_t seq, RigMode mode, std::string text) {
  RigMessage m = Bare(RigMessageKind::kState, seq);
  m.mode = mode;
  m.text = std::move(text);
  return m;
}
RigMessage RigMessage::Hello(std::uint32_t seq, int version) {
  RigMessage m = Bare(RigMessageKind::kHello, seq);
  m.version = version;
  return m;
}
RigMessage RigMessage::Actuator(std::uint32_t seq, double value) {
  RigMessage m = Bare(RigMessageKind::kActuator, seq);
  m.value = value;
  return m;
}
RigMessage RigMessage::Loop(std::uint32_t seq, std::string controller, double gain,
                            double reference) {
  RigMessage m = Bare(RigMessageKind::kLoop, seq);
  m.controller = std::move(controller);
  m.gain = gain;
  m.value = reference;
  return m;
}
RigMessage RigMessage::Ref(std::uint32_t seq, double value) {
  RigMessage m = Bare(RigMessageKind::kRef, seq);
  m.value = value;
  return m;
}
RigMessage RigMessage::Bare(RigMessageKind kind, std::uint32_t seq) {
  RigMessage m;
  m.kind = kind;
  m.seq = seq;
  return m;
}

std::string EncodeRigLine(const RigMessage& m) {
  LineWriter w(m.kind, m.seq);
  switch (m.kind) {
    case RigMessageKind::kCaps:
      if (m.caps.version < 1 || m.caps.period_us <= 0 || m.caps.watchdog_ms <= 0) {
        throw UsageError("caps: VERSION, PERIOD_US and WATCHDOG_MS must be more than 0");
      }
      w.Unsigned(static_cast<std::uint64_t>(m.caps.version));
      w.Signed(m.caps.period_us);
      w.Real(m.caps.actuator_lo, "ACT_LO");
      w.Real(m.caps.actuator_hi, "ACT_HI");
      w.Real(m.caps.safe_value, "SAFE");
      w.Signed(m.caps.watchdog_ms);
      w.Word(m.caps.name, "NAME");
      break;
    case RigMessageKind::kSample:
      w.Unsigned(m.sample.t_us);
      w.Real(m.sample.reference, "R");
      w.Real(m.sample.actuator, "U");
      w.Real(m.sample.output, "Y");
      break;
    case RigMessageKind::kOk:
      w.Unsigned(m.acked);
      break;
    case RigMessageKind::kErr:
      w.Unsigned(m.acked);
      w.Word(m.code, "CODE");
      w.Text(m.text, true);
      break;
    case RigMessageKind::kState:
      w.Word(RigModeWord(m.mode), "MODE");
      w.Text(m.text, false);
      break;
    case RigMessageKind::kHello:
      if (m.version < 1) throw UsageError("hello: VERSION must be 1 or more");
      w.Unsigned(static_cast<std::uint64_t>(m.version));
      break;
    case RigMessageKind::kActuator:
    case RigMessageKind::kRef:
      w.Real(m.value, "VALUE");
      break;
    case RigMessageKind::kLoop:
      w.Word(m.controller, "CONTROLLER");
      w.Real(m.gain, "GAIN");
      w.Real(m.value, "REFERENCE");
      break;
    case RigMessageKind::kGo:
    case RigMessageKind::kHalt:
    case RigMessageKind::kSafe:
    case RigMessageKind::kBeat:
      break;
  }
  return w.Finish();
}

std::string SealRigLine(std::string_view body) {
  std::uint16_t crc = Crc16CcittFalse(body);
  std::string line;
  line.reserve(body.size() + 7);
  line.append(body);
  line += " *";
  for (int shift = 12; shift >= 0; shift -= 4) line += kHex[(crc >> shift) & 0xF];
  line += '\n';
  return line;
}

std::string_view RigParseStatusText(RigParseStatus status) {
  switch (status) {
    case RigParseStatus::kOk:
      return "ok";
    case RigParseStatus::kTooLong:
      return "too long";
    case RigParseStatus::kNoCrc:
      return "no CRC";
    case RigParseStatus::kBadCrc:
      return "bad CRC";
    case RigParseStatus::kUnknownWord:
      return "unknown word";
    case RigParseStatus::kMalformed:
      return "malformed";
  }
  return "malformed";
}

namespace {

// Parses into `result` (the splitter's event, reused line after line, so parsing allocates
// nothing and copies nothing).
void ParseInto(std::string_view line, ParseOut result) {
  if (!line.empty() && line.back() == '\n') {
    line.remove_suffix(1);
    if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
  }
  result.reason.clear();
  if (line.size() > kRigMaxLineBytes) {
    result.status = RigParseStatus::kTooLong;
    result.reason = "longer than " + std::to_string(kRigMaxLineBytes) + " bytes";
    return;
  }
  const std::size_t n = line.size();
  int crc_value = 0;
  bool crc_ok = n >= 6 && line[n - 6] == ' ' && line[n - 5] == '*';
  for (std::size_t i = n - 4; crc_ok && i < n; ++i) {
    int digit = HexValue(line[i]);
    crc_ok = digit >= 0;
    crc_value = crc_value * 16 + digit;
  }
  if (!crc_ok) {
    result.status = RigParseStatus::kNoCrc;
    result.reason = "does not end in \" *\" and 4 upper-case hex digits";
    return;
  }
  std::string_view body = line.substr(0, n - 6);
  if (Crc16CcittFalse(body) != crc_value) {
    result.status = RigParseStatus::kBadCrc;
    result.reason = "CRC does not match the line";
    return;
  }
  Fields fields;
  const Fields::Problem problem = fields.Split(body);
  if (problem == Fields::Problem::kNotPrintable) {
    result.status = RigParseStatus::kMalformed;
    result.reason = "contains a byte that is not printable ASCII";
    return;
  }
  if (problem == Fields::Problem::kEmptyField) {
    result.status = RigParseStatus::kMalformed;
    result.reason = "fields must be separated by exactly one space";
    return;
  }
  RigMessage& m = result.message;
  std::size_t w = 0;
  while (w < kWords.size() && kWords[w].word != fields[0]) ++w;
  if (w == kWords.size()) {
    result.status = RigParseStatus::kUnknownWord;
    result.reason = "unknown message word '" + std::string(fields[0]) + "'";
    return;
  }
  m.kind = kWords[w].kind;
  m.code.clear();
  m.text.clear();
  m.controller.clear();
  BodyParser parser(fields, result);
  if (!parser.AtLeast(2) || !parser.Seq32(1, "SEQ", m.seq) || !ParseFields(fields, parser, m)) {
    return;
  }
  result.status = RigParseStatus::kOk;
}

}  // namespace

RigParseResult ParseRigLine(std::string_view line) {
  RigParseResult result;
  ParseInto(line, {result.message, result.status, result.reason});
  return result;
}

// ---- Splitter -------------------------------------------------------------------------------

RigLineSplitter::RigLineSplitter(Handler handler) : handler_(std::move(handler)) {
  line_.reserve(kRigMaxLineBytes + 2);
}

void RigLineSplitter::ResetSequence() { have_expected_ = false; }

void RigLineSplitter::Feed(std::string_view bytes, std::chrono::steady_clock::time_point received) {
  counts_.bytes += bytes.size();
  while (!bytes.empty()) {
    const void* found = std::memchr(bytes.data(), '\n', bytes.size());
    std::size_t take = found ? static_cast<const char*>(found) - bytes.data() : bytes.size();
    if (found && line_.empty() && !overflow_) {
      // The whole line is in these bytes: parse it where it is.
      EndLine(bytes.substr(0, take), received);
      bytes.remove_prefix(take + 1);
      continue;
    }
    // Keep at most one byte beyond the limit (a '\r' before "\n") plus one to detect overflow.
    std::size_t room = kRigMaxLineBytes + 2 - std::min(line_.size(), kRigMaxLineBytes + 2);
    if (take > room) overflow_ = true;
    line_.append(bytes.data(), std::min(take, room));
    if (!found) return;
    bytes.remove_prefix(take + 1);
    EndLine(line_, received);
  }
}

void RigLineSplitter::Finish() {
  if (line_.empty() && !overflow_) return;
  ++counts_.lines;
  ++counts_.rejected;
  ++rejected_since_valid_;
  event_.kind = RigLineEvent::Kind::kRejected;
  event_.status = RigParseStatus::kMalformed;
  event_.reason = "line cut off at end of stream";
  event_.raw.assign(line_, 0, std::min(line_.size(), kRigMaxLineBytes));
  event_.received = std::chrono::steady_clock::now();
  line_.clear();
  overflow_ = false;
  handler_(event_);
}

void RigLineSplitter::EndLine(std::string_view view,
                              std::chrono::steady_clock::time_point received) {
  ++counts_.lines;
  event_.received = received;
  if (!view.empty() && view.back() == '\r') view.remove_suffix(1);
  if (overflow_ || view.size() > kRigMaxLineBytes) {
    event_.status = RigParseStatus::kTooLong;
    event_.reason = "longer than " + std::to_string(kRigMaxLineBytes) + " bytes";
  } else {
    ParseInto(view, {event_.message, event_.status, event_.reason});
  }
  if (event_.status != RigParseStatus::kOk) {
    ++counts_.rejected;
    if (event_.status == RigParseStatus::kBadCrc) ++counts_.bad_crc;
    ++rejected_since_valid_;
    event_.kind = RigLineEvent::Kind::kRejected;
    event_.raw.assign(view.substr(0, kRigMaxLineBytes));
    line_.clear();  // `view` may point into it: not used below
    overflow_ = false;
    handler_(event_);
    return;
  }
  line_.clear();
  overflow_ = false;
  event_.raw.clear();
  ++counts_.valid;
  const std::uint32_t seq = event_.message.seq;
  if (have_expected_ && seq != expected_) {
    const std::uint32_t ahead = seq - expected_;  // wraps
    if (ahead < 0x80000000u) {
      event_.kind = RigLineEvent::Kind::kGap;
      event_.first_missing = expected_;
      event_.last_missing = seq - 1;
      event_.missing = ahead;
      event_.rejected_in_gap = rejected_since_valid_;
      counts_.missing += ahead;
      if (ahead > rejected_since_valid_) counts_.dropped += ahead - rejected_since_valid_;
      handler_(event_);
    } else {
      ++counts_.out_of_order;
    }
  }
  have_expected_ = true;
  expected_ = seq + 1;
  rejected_since_valid_ = 0;
  event_.kind = RigLineEvent::Kind::kMessage;
  handler_(event_);
}

}  // namespace lw
