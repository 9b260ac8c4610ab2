#include "io/rig_emulator.h"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <utility>

#include "lti/controller.h"
#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

// The sensor's reading range: an unstable plant's output is clipped here so that every sample
// can still be written as a finite number.
constexpr double kSensorLimit = 1e12;
// Longest free text in an err or state line (the whole line stays under kRigMaxLineBytes).
constexpr std::size_t kMaxText = 120;

std::string Num(double v) { return SignificantText(v, 9); }

double ParseProbability(std::string_view part, std::string_view value) {
  std::string text(value);
  try {
    std::size_t used = 0;
    double p = std::stod(text, &used);
    if (used == text.size() && std::isfinite(p) && p >= 0.0 && p < 1.0) return p;
  } catch (const std::logic_error&) {
  }
  throw UsageError("--faults part '" + std::string(part) +
                   "': expected a probability P with 0 <= P < 1");
}

double ParseSeconds(std::string_view part, std::string_view value) {
  std::string text(value);
  try {
    std::size_t used = 0;
    double s = std::stod(text, &used);
    if (used == text.size() && std::isfinite(s) && s > 0.0) return s;
  } catch (const std::logic_error&) {
  }
  throw UsageError("--faults part '" + std::string(part) + "': expected seconds S > 0");
}

// Free text as the protocol allows it in err/state lines: printable, no " *", bounded.
std::string CleanText(std::string text) {
  for (char& c : text) {
    unsigned char uc = static_cast<unsigned char>(c);
    if (uc < 0x20 || uc > 0x7e) c = '?';
    if (c == '*') c = '#';
  }
  if (text.size() > kMaxText) text.resize(kMaxText);
  while (!text.empty() && text.back() == ' ') text.pop_back();
  return text.empty() ? std::string("refused") : text;
}

// The SEQ field of a raw line when it is all digits and fits 32 bits, else 0.
std::uint32_t SeqOfRaw(std::string_view raw) {
  std::size_t a = raw.find(' ');
  if (a == std::string_view::npos) return 0;
  std::size_t b = raw.find(' ', a + 1);
  std::string_view field = raw.substr(a + 1, b == std::string_view::npos ? b : b - a - 1);
  if (field.empty() || field.size() > 10) return 0;
  std::uint64_t v = 0;
  for (char c : field) {
    if (c < '0' || c > '9') return 0;
    v = v * 10 + static_cast<std::uint64_t>(c - '0');
  }
  return v > 0xFFFFFFFFULL ? 0 : static_cast<std::uint32_t>(v);
}

}  // namespace

RigFaults RigFaults::Parse(std::string_view text) {
  RigFaults faults;
  if (text.empty() || text == "none") return faults;
  std::vector<std::string> seen;
  std::size_t start = 0;
  while (start <= text.size()) {
    std::size_t comma = text.find(',', start);
    std::string_view part = text.substr(
        start, comma == std::string_view::npos ? std::string_view::npos : comma - start);
    std::size_t eq = part.find('=');
    if (eq == std::string_view::npos) {
      throw UsageError("--faults part '" + std::string(part) +
                       "': expected NAME=VALUE with NAME one of drop, corrupt, "
                       "disconnect-after, stuck-after");
    }
    std::string name(part.substr(0, eq));
    std::string_view value = part.substr(eq + 1);
    if (std::find(seen.begin(), seen.end(), name) != seen.end()) {
      throw UsageError("--faults: '" + name + "' is given twice");
    }
    seen.push_back(name);
    if (name == "drop") {
      faults.drop = ParseProbability(part, value);
    } else if (name == "corrupt") {
      faults.corrupt = ParseProbability(part, value);
    } else if (name == "disconnect-after") {
      faults.disconnect_after_s = ParseSeconds(part, value);
    } else if (name == "stuck-after") {
      faults.stuck_after_s = ParseSeconds(part, value);
    } else {
      throw UsageError("--faults part '" + std::string(part) + "': unknown fault '" + name +
                       "' (expected drop, corrupt, disconnect-after or stuck-after)");
    }
    if (comma == std::string_view::npos) break;
    start = comma + 1;
  }
  faults.Validate();
  return faults;
}

void RigFaults::Validate() const {
  if (!(drop >= 0.0 && drop < 1.0)) {
    throw UsageError("faults.drop " + Num(drop) + ": expected a probability in [0, 1)");
  }
  if (!(corrupt >= 0.0 && corrupt < 1.0)) {
    throw UsageError("faults.corrupt " + Num(corrupt) + ": expected a probability in [0, 1)");
  }
  if (disconnect_after_s && !(std::isfinite(*disconnect_after_s) && *disconnect_after_s > 0.0)) {
    throw UsageError("faults.disconnect_after_s " + Num(*disconnect_after_s) +
                     ": expected seconds > 0");
  }
  if (stuck_after_s && !(std::isfinite(*stuck_after_s) && *stuck_after_s > 0.0)) {
    throw UsageError("faults.stuck_after_s " + Num(*stuck_after_s) + ": expected seconds > 0");
  }
}

void RigEmulatorOptions::Validate() const {
  if (period_us <= 0) {
    throw UsageError("period_us " + std::to_string(period_us) + ": the sample period must be > 0");
  }
  if (!(std::isfinite(actuator_lo) && std::isfinite(actuator_hi) && actuator_lo < actuator_hi)) {
    throw UsageError("actuator range " + Num(actuator_lo) + " to " + Num(actuator_hi) +
                     ": expected finite LO < HI");
  }
  if (!(std::isfinite(safe_value) && safe_value >= actuator_lo && safe_value <= actuator_hi)) {
    throw UsageError("safe_value " + Num(safe_value) +
                     ": the safe value must lie in the actuator "
                     "range " +
                     Num(actuator_lo) + " to " + Num(actuator_hi));
  }
  if (watchdog_ms <= 0) {
    throw UsageError("watchdog_ms " + std::to_string(watchdog_ms) + ": expected > 0");
  }
  if (name.empty() || name.size() > 40 || std::any_of(name.begin(), name.end(), [](char c) {
        return !std::isgraph(static_cast<unsigned char>(c)) || c == '*';
      })) {
    throw UsageError("name '" + name + "': expected 1 to 40 printable characters, no spaces or *");
  }
  if (!(std::isfinite(noise_sd) && noise_sd >= 0.0)) {
    throw UsageError("noise_sd " + Num(noise_sd) + ": expected a number >= 0");
  }
  if (!(std::isfinite(quantize) && quantize >= 0.0)) {
    throw UsageError("quantize " + Num(quantize) + ": expected a number >= 0");
  }
  faults.Validate();
}

RigEmulator::RigEmulator(RigEmulatorOptions options)
    : options_((options.Validate(), std::move(options))),
      plant_(options_.plant, static_cast<double>(options_.period_us) * 1e-6, options_.safe_value),
      noise_engine_(options_.seed ^ 0x6A09E667F3BCC908ULL),
      fault_engine_(options_.seed ^ 0xBB67AE8584CAA73BULL) {
  caps_.version = kRigProtocolVersion;
  caps_.period_us = options_.period_us;
  caps_.actuator_lo = options_.actuator_lo;
  caps_.actuator_hi = options_.actuator_hi;
  caps_.safe_value = options_.safe_value;
  caps_.watchdog_ms = options_.watchdog_ms;
  caps_.name = options_.name;
  actuator_ = options_.safe_value;
  splitter_ = std::make_unique<RigLineSplitter>([this](const RigLineEvent& e) { OnEvent(e); });
}

RigEmulator::~RigEmulator() = default;

std::uint64_t RigEmulator::next_tick_us() const {
  return static_cast<std::uint64_t>(plant_.instant()) *
         static_cast<std::uint64_t>(options_.period_us);
}

std::optional<std::int64_t> RigEmulator::watchdog_deadline_us() const {
  if (stuck_ || disconnected_ || !(mode_ == RigMode::kOpen || mode_ == RigMode::kClosed)) {
    return std::nullopt;
  }
  return last_host_line_us_ + options_.watchdog_ms * 1000;
}

void RigEmulator::HostBytes(std::string_view bytes, std::int64_t host_us) {
  if (stuck_ || disconnected_) return;
  host_now_us_ = host_us;
  splitter_->Feed(bytes);
}

std::int64_t RigEmulator::Advance(std::uint64_t rig_us, std::int64_t host_us,
                                  std::int64_t max_ticks) {
  host_now_us_ = host_us;
  std::int64_t ran = 0;
  while (!disconnected_ && ran < max_ticks && next_tick_us() <= rig_us) {
    Tick();
    ++ran;
  }
  if (auto deadline = watchdog_deadline_us(); deadline && host_us > *deadline) {
    ++counts_.watchdog_trips;
    out_.clear();  // unsent bytes were for a host that is gone
    streaming_ = false;
    SetMode(RigMode::kSafe, "watchdog");
    Note("watchdog: no host line for " + std::to_string(options_.watchdog_ms) +
         " ms; actuator to its safe value " + Num(options_.safe_value) + ", streaming stopped");
  }
  return ran;
}

void RigEmulator::TakeOutput(std::string& into) {
  into += out_;
  out_.clear();
}

std::vector<RigEmulatorNote> RigEmulator::TakeNotes() { return std::exchange(notes_, {}); }

void RigEmulator::Note(const std::string& text) { notes_.push_back({rig_now_us_, text}); }

void RigEmulator::OnEvent(const RigLineEvent& event) {
  switch (event.kind) {
    case RigLineEvent::Kind::kGap:
      counts_.host_missing += event.missing;
      return;
    case RigLineEvent::Kind::kRejected: {
      ++counts_.host_rejected;
      std::string why = std::string(RigParseStatusText(event.status));
      if (!event.reason.empty()) why += ": " + event.reason;
      Refuse(SeqOfRaw(event.raw), event.status == RigParseStatus::kBadCrc ? "crc" : "syntax", why);
      return;
    }
    case RigLineEvent::Kind::kMessage:
      ++counts_.host_lines;
      last_host_line_us_ = host_now_us_;
      OnMessage(event.message);
      return;
  }
}

void RigEmulator::OnMessage(const RigMessage& m) {
  if (IsRigToHost(m.kind)) {
    // Built by appending: GCC 12 warns falsely (-Wrestrict) about "'" + std::string(...).
    std::string text(1, '\'');
    text.append(RigMessageWord(m.kind)).append("' is a rig-to-host message");
    Refuse(m.seq, "syntax", text);
    return;
  }
  switch (m.kind) {
    case RigMessageKind::kHello:
      if (m.version != kRigProtocolVersion) {
        Refuse(m.seq, "version",
               "protocol version " + std::to_string(m.version) + " is not spoken here (1 is)");
        return;
      }
      Send(RigMessage::Caps(0, caps_));
      return;
    case RigMessageKind::kActuator:
      if (!(m.value >= options_.actuator_lo && m.value <= options_.actuator_hi)) {
        Refuse(m.seq, "range",
               "u " + Num(m.value) + " is outside the actuator range " + Num(options_.actuator_lo) +
                   " to " + Num(options_.actuator_hi));
        return;
      }
      open_value_ = m.value;
      Send(RigMessage::Ok(0, m.seq));
      SetMode(RigMode::kOpen, "");
      return;
    case RigMessageKind::kLoop: {
      if (!(m.gain > 0.0)) {
        Refuse(m.seq, "range", "gain " + Num(m.gain) + " must be > 0");
        return;
      }
      std::unique_ptr<EmulatedController> controller;
      try {
        controller =
            std::make_unique<EmulatedController>(Controller::Parse(m.controller), m.gain,
                                                 static_cast<double>(options_.period_us) * 1e-6);
      } catch (const UsageError& e) {
        Refuse(m.seq, "controller", e.what());
        return;
      }
      controller_ = std::move(controller);
      controller_started_ = false;
      reference_ = m.value;
      Send(RigMessage::Ok(0, m.seq));
      SetMode(RigMode::kClosed, "");
      Note("loop: controller " + m.controller + ", gain " + Num(m.gain) + ", reference " +
           Num(m.value));
      return;
    }
    case RigMessageKind::kRef:
      if (mode_ != RigMode::kClosed) {
        Refuse(m.seq, "mode",
               "ref needs closed-loop mode; the rig is " + std::string(RigModeWord(mode_)));
        return;
      }
      reference_ = m.value;
      Send(RigMessage::Ok(0, m.seq));
      Note("reference " + Num(m.value));
      return;
    case RigMessageKind::kGo:
      streaming_ = true;
      if (!first_go_us_) first_go_us_ = next_tick_us();
      Send(RigMessage::Ok(0, m.seq));
      return;
    case RigMessageKind::kHalt:
      streaming_ = false;
      Send(RigMessage::Ok(0, m.seq));
      return;
    case RigMessageKind::kSafe:
      Send(RigMessage::Ok(0, m.seq));
      SetMode(RigMode::kSafe, "safe stop");
      return;
    case RigMessageKind::kBeat:
      Send(RigMessage::Ok(0, m.seq));
      return;
    default:
      Refuse(m.seq, "syntax", "unexpected message");
      return;
  }
}

void RigEmulator::Send(const RigMessage& message) {
  if (stuck_ || disconnected_) return;
  RigMessage m = message;
  m.seq = seq_++;
  out_ += EncodeRigLine(m);
  ++counts_.lines_sent;
}

void RigEmulator::Refuse(std::uint32_t acked, const std::string& code, const std::string& text) {
  ++counts_.host_refused;
  Send(RigMessage::Err(0, acked, code, CleanText(text)));
}

void RigEmulator::SetMode(RigMode mode, const std::string& why) {
  if (mode_ == mode) return;
  mode_ = mode;
  if (mode != RigMode::kClosed) controller_.reset();
  Send(RigMessage::State(0, mode, why));
  Note("mode " + std::string(RigModeWord(mode)) + (why.empty() ? "" : " (" + why + ")"));
}

double RigEmulator::Gaussian() {
  // Marsaglia's polar method (Marsaglia & Bray, SIAM Review 6(3), 1964), on the standard's fully
  // specified mt19937_64, so a seed gives the same stream on every platform.
  if (spare_normal_) return *std::exchange(spare_normal_, std::nullopt);
  double a, b, s;
  do {
    a = static_cast<double>(noise_engine_() >> 11) * 0x1.0p-52 - 1.0;
    b = static_cast<double>(noise_engine_() >> 11) * 0x1.0p-52 - 1.0;
    s = a * a + b * b;
  } while (s >= 1.0 || s == 0.0);
  const double f = std::sqrt(-2.0 * std::log(s) / s);
  spare_normal_ = b * f;
  return a * f;
}

double RigEmulator::Measure() {
  double y = plant_.Output();
  if (options_.noise_sd > 0.0) y += options_.noise_sd * Gaussian();
  if (options_.quantize > 0.0) y = options_.quantize * std::nearbyint(y / options_.quantize);
  if (!std::isfinite(y)) y = std::isnan(y) ? 0.0 : std::copysign(kSensorLimit, y);
  return std::clamp(y, -kSensorLimit, kSensorLimit) + 0.0;  // + 0.0: no "-0" on the wire
}

void RigEmulator::Tick() {
  rig_now_us_ = next_tick_us();
  if (first_go_us_ && !stuck_) {
    const double since = static_cast<double>(rig_now_us_ - *first_go_us_) * 1e-6;
    if (options_.faults.disconnect_after_s && since >= *options_.faults.disconnect_after_s) {
      Note("fault: link dropped " + Num(*options_.faults.disconnect_after_s) +
           " s after streaming started (disconnect-after)");
      disconnected_ = true;
      return;
    }
    if (options_.faults.stuck_after_s && since >= *options_.faults.stuck_after_s) {
      Note("fault: firmware hung " + Num(*options_.faults.stuck_after_s) +
           " s after streaming started (stuck-after); actuator held at " + Num(actuator_));
      stuck_ = true;
    }
  }
  const double y = Measure();
  double u = options_.safe_value;
  if (stuck_) {
    u = actuator_;
  } else if (mode_ == RigMode::kOpen) {
    u = open_value_;
  } else if (mode_ == RigMode::kClosed && controller_) {
    const double e = reference_ - y;
    if (!controller_started_) {
      controller_->Start(e, actuator_);
      controller_started_ = true;
    }
    u = std::clamp(controller_->Update(e), options_.actuator_lo, options_.actuator_hi);
    if (!std::isfinite(u)) u = options_.safe_value;
  }
  actuator_ = u;
  if (streaming_ && !stuck_) {
    ++counts_.samples_taken;
    SendSample({rig_now_us_, reference_, u, y});
  }
  plant_.Step(u);
}

void RigEmulator::SendSample(const RigSample& sample) {
  const std::uint32_t seq = seq_;
  if (options_.faults.drop > 0.0 &&
      std::uniform_real_distribution<double>(0.0, 1.0)(fault_engine_) < options_.faults.drop) {
    ++seq_;
    counts_.dropped_seqs.push_back(seq);
    return;
  }
  if (options_.faults.corrupt > 0.0 &&
      std::uniform_real_distribution<double>(0.0, 1.0)(fault_engine_) < options_.faults.corrupt) {
    std::string line = EncodeRigLine(RigMessage::Sample(seq, sample));
    // Digits of the fields after WORD and SEQ, before " *".
    const std::size_t first = line.find(' ', line.find(' ') + 1) + 1;
    const std::size_t end = line.rfind(" *");
    std::vector<std::size_t> digits;
    for (std::size_t i = first; i < end; ++i) {
      if (line[i] >= '0' && line[i] <= '9') digits.push_back(i);
    }
    const std::size_t at = digits[fault_engine_() % digits.size()];
    const int old = line[at] - '0';
    line[at] = static_cast<char>('0' + (old + 1 + static_cast<int>(fault_engine_() % 9)) % 10);
    ++seq_;
    out_ += line;
    ++counts_.lines_sent;
    counts_.corrupted_seqs.push_back(seq);
    return;
  }
  Send(RigMessage::Sample(0, sample));
  ++counts_.samples_sent;
}

}  // namespace lw
