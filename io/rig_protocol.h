// The rig protocol: line-oriented ASCII between loopwright (the host) and a rig's firmware
// (a microcontroller, a drive, or `loopwright emulate`). The full specification, for firmware
// authors, is io/rig_protocol.md; this header is its C++ side.
//
// One line per message, fields separated by exactly one space, ended by "\n" ("\r\n" accepted):
//     WORD SEQ FIELD... *CRC
// CRC is 4 upper-case hexadecimal digits of CRC-16/CCITT-FALSE over every byte before " *".
// SEQ is decimal, counted per direction, +1 per line, wrapping at 2^32. Numbers are decimal text:
// integers are digits only; reals are what printf's %.9g prints (parsed strictly, finite only).
// A line is at most kRigMaxLineBytes bytes without its terminator.
//
// Rig -> host                                     Host -> rig
//   caps SEQ VERSION PERIOD_US ACT_LO ACT_HI        hello SEQ VERSION
//        SAFE WATCHDOG_MS NAME                      u SEQ VALUE
//   s SEQ T_US R U Y                                loop SEQ CONTROLLER GAIN REFERENCE
//   ok SEQ ACKED_SEQ                                ref SEQ VALUE
//   err SEQ ACKED_SEQ CODE TEXT...                  go SEQ
//   state SEQ MODE [TEXT...]                        halt SEQ
//                                                   safe SEQ
//                                                   beat SEQ
//
// Nothing here throws on bad input lines: parsing returns a status, because a corrupted line on
// a live link is an expected event to count, not an error.
#ifndef LOOPWRIGHT_IO_RIG_PROTOCOL_H_
#define LOOPWRIGHT_IO_RIG_PROTOCOL_H_

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <string>
#include <string_view>

namespace lw {

inline constexpr int kRigProtocolVersion = 1;
// Longest valid line, in bytes, without the "\n" or "\r\n" terminator.
inline constexpr std::size_t kRigMaxLineBytes = 200;

// CRC-16/CCITT-FALSE: polynomial 0x1021, initial value 0xFFFF, no input or output reflection,
// final xor 0x0000. Published check value: Crc16CcittFalse("123456789") == 0x29B1.
std::uint16_t Crc16CcittFalse(std::string_view bytes);

enum class RigMessageKind {
  // Rig -> host.
  kCaps,    // caps: reply to hello
  kSample,  // s: one sample
  kOk,      // ok: a host line was accepted
  kErr,     // err: a host line was refused
  kState,   // state: the rig's mode changed
  // Host -> rig.
  kHello,     // hello: asks for caps
  kActuator,  // u: open loop, hold the actuator at value
  kLoop,      // loop: closed loop with controller, gain and reference
  kRef,       // ref: new reference in closed loop
  kGo,        // go: start streaming samples
  kHalt,      // halt: stop streaming samples
  kSafe,      // safe: actuator to its safe value, mode safe
  kBeat,      // beat: heartbeat
};

// The line's first word for a kind, e.g. "s" for kSample, "u" for kActuator.
std::string_view RigMessageWord(RigMessageKind kind);
// True for the kinds a rig sends (caps, s, ok, err, state).
bool IsRigToHost(RigMessageKind kind);

enum class RigMode { kIdle, kOpen, kClosed, kSafe };
// "idle", "open", "closed", "safe".
std::string_view RigModeWord(RigMode mode);

// What a rig reports in its caps line.
struct RigCaps {
  int version = kRigProtocolVersion;
  std::int64_t period_us = 0;  // sample period in microseconds, > 0
  double actuator_lo = 0.0;    // actuator range [lo, hi], lo < hi
  double actuator_hi = 0.0;
  double safe_value = 0.0;       // where the rig puts the actuator on a safe stop, in [lo, hi]
  std::int64_t watchdog_ms = 0;  // the rig goes safe after this long without a host line, > 0
  std::string name;              // no spaces, not empty
};

// One sample: rig time in microseconds (from the rig's clock, never the host's), reference,
// actuator and output in the rig's units.
struct RigSample {
  std::uint64_t t_us = 0;
  double reference = 0.0;
  double actuator = 0.0;
  double output = 0.0;
};

// One message of either direction. Only the fields listed for its kind are meaningful; the
// others keep their defaults. Build one with the named constructors below.
struct RigMessage {
  RigMessageKind kind = RigMessageKind::kBeat;
  std::uint32_t seq = 0;
  RigCaps caps;                   // kCaps
  RigSample sample;               // kSample
  std::uint32_t acked = 0;        // kOk, kErr: the host line's SEQ
  std::string code;               // kErr: one word, e.g. range, mode, syntax
  std::string text;               // kErr (required), kState (optional, e.g. "watchdog"): free text
  RigMode mode = RigMode::kIdle;  // kState
  int version = kRigProtocolVersion;  // kHello
  double value = 0.0;                 // kActuator, kRef; kLoop: the reference
  std::string controller;  // kLoop: controller text as --controller (p, pi:Z, lead:Z:P, ...)
  double gain = 0.0;       // kLoop

  static RigMessage Caps(std::uint32_t seq, RigCaps caps);
  static RigMessage Sample(std::uint32_t seq, RigSample sample);
  static RigMessage Ok(std::uint32_t seq, std::uint32_t acked);
  static RigMessage Err(std::uint32_t seq, std::uint32_t acked, std::string code, std::string text);
  static RigMessage State(std::uint32_t seq, RigMode mode, std::string text = {});
  static RigMessage Hello(std::uint32_t seq, int version = kRigProtocolVersion);
  static RigMessage Actuator(std::uint32_t seq, double value);
  static RigMessage Loop(std::uint32_t seq, std::string controller, double gain, double reference);
  static RigMessage Ref(std::uint32_t seq, double value);
  // go, halt, safe, beat: no fields.
  static RigMessage Bare(RigMessageKind kind, std::uint32_t seq);
};

// The complete line for a message, CRC and "\n" included, e.g. "ok 7 3 *A1B2\n". Reals are
// printed with %.9g. Throws UsageError when the message cannot be written as a valid line: a
// non-finite number, an empty or spaced word (name, code, controller), text containing a control
// character or " *", or a line longer than kRigMaxLineBytes.
std::string EncodeRigLine(const RigMessage& message);

// Appends " *CRC\n" to a body "WORD SEQ FIELD...". No checks: for tests and fault injection.
std::string SealRigLine(std::string_view body);

enum class RigParseStatus {
  kOk,
  kTooLong,      // more than kRigMaxLineBytes bytes before the terminator
  kNoCrc,        // no " *" followed by 4 upper-case hex digits at the end
  kBadCrc,       // the CRC does not match the body: the line was corrupted
  kUnknownWord,  // CRC fine, first word is not a message of this protocol
  kMalformed,    // CRC fine, fields wrong: count, number syntax, range (the reason says which)
};
// "too long", "no CRC", "bad CRC", "unknown word", "malformed".
std::string_view RigParseStatusText(RigParseStatus status);

struct RigParseResult {
  RigParseStatus status = RigParseStatus::kMalformed;
  RigMessage message;  // meaningful when status == kOk
  std::string reason;  // when not kOk: one phrase, e.g. "field 4 (ACT_HI) is not a number"
};

// Parses one line, with or without its "\n" / "\r\n" terminator. Strict: one space between
// fields, no leading or trailing blanks, exact field counts, integers in range, reals finite,
// caps values consistent (period > 0, lo < hi, lo <= safe <= hi, watchdog > 0). Never throws.
RigParseResult ParseRigLine(std::string_view line);

// Running counts of one direction of a link, as seen by a RigLineSplitter.
struct RigStreamCounts {
  std::uint64_t bytes = 0;         // bytes fed
  std::uint64_t lines = 0;         // lines seen, valid or not (a trailing partial line not yet)
  std::uint64_t valid = 0;         // parsed with status kOk
  std::uint64_t bad_crc = 0;       // kBadCrc: corrupted
  std::uint64_t rejected = 0;      // every line that was not valid, bad_crc included
  std::uint64_t missing = 0;       // sequence numbers skipped by valid lines, summed over the gaps
  std::uint64_t dropped = 0;       // missing numbers not explained by rejected lines (see below)
  std::uint64_t out_of_order = 0;  // valid lines whose SEQ was behind the expected one
};

// What the splitter found in the stream, in stream order.
struct RigLineEvent {
  enum class Kind {
    kMessage,   // a valid line; `message` holds it
    kRejected,  // a line that was not valid; `status`, `reason` and `raw` say what and why
    kGap,       // valid lines skipped SEQ numbers first_missing..last_missing (wrapping);
                // reported just before the kMessage that revealed it
  };
  Kind kind = Kind::kMessage;
  RigMessage message;                           // kMessage
  RigParseStatus status = RigParseStatus::kOk;  // kRejected
  std::string reason;                           // kRejected
  std::string raw;  // kRejected: the line without terminator, cut at kRigMaxLineBytes
  std::uint32_t first_missing = 0;    // kGap
  std::uint32_t last_missing = 0;     // kGap
  std::uint64_t missing = 0;          // kGap: how many numbers were skipped
  std::uint64_t rejected_in_gap = 0;  // kGap: rejected lines seen since the last valid line
  // When the bytes that completed the line were fed (steady clock of the host); for latency
  // and trip timing only, never as the sample time.
  std::chrono::steady_clock::time_point received{};
};

// Splits a byte stream into lines, parses each, tracks SEQ and counts. Not thread-safe; one per
// direction of a link.
//
// Sequence tracking: the first valid line sets the expected SEQ; each later valid line should
// carry expected + 1 (mod 2^32). A valid line ahead of it by n (n < 2^31) is a gap of n missing
// numbers; a corrupted line is one of them, so for each gap
//     dropped += max(0, n - rejected lines since the last valid line).
// A valid line behind the expected number (a repeat, or a rig that restarted) counts as
// out_of_order and resynchronises. ResetSequence() forgets the expected number (use it after
// the rig says caps, which may follow a restart).
class RigLineSplitter {
 public:
  using Handler = std::function<void(const RigLineEvent&)>;

  explicit RigLineSplitter(Handler handler);

  // Feeds bytes as they arrive; calls the handler once per event for every line completed.
  // `received` stamps those events.
  void Feed(std::string_view bytes,
            std::chrono::steady_clock::time_point received = std::chrono::steady_clock::now());
  // End of stream: a trailing partial line (no terminator) is reported as rejected
  // (kMalformed, "line cut off at end of stream") and counted.
  void Finish();
  void ResetSequence();

  const RigStreamCounts& counts() const { return counts_; }

 private:
  // Parses one complete line (without "\n"), which lies in the fed bytes or in line_.
  void EndLine(std::string_view line, std::chrono::steady_clock::time_point received);

  Handler handler_;
  std::string line_;
  bool overflow_ = false;
  bool have_expected_ = false;
  std::uint32_t expected_ = 0;
  std::uint64_t rejected_since_valid_ = 0;
  RigStreamCounts counts_;
  RigLineEvent event_;  // reused between lines: each line is parsed straight into it
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_PROTOCOL_H_
