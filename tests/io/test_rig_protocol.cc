// The rig protocol (io/rig_protocol.h): CRC against its published parameters, encode/parse round
// trips, every malformation the parser must refuse, and the stream splitter's counts.
#include "io/rig_protocol.h"

#include <doctest/doctest.h>

#include <cmath>
#include <cstdint>
#include <fstream>
#include <limits>
#include <string>
#include <string_view>
#include <vector>

#include "lti/error.h"
#include "tests/io/bitwise_crc.h"

namespace lw {
namespace {

// Parses a line that must be valid and returns its message.
RigMessage MustParse(const std::string& line) {
  RigParseResult r = ParseRigLine(line);
  INFO("line: ", line, " reason: ", r.reason);
  REQUIRE(r.status == RigParseStatus::kOk);
  return r.message;
}

RigParseStatus StatusOf(const std::string& line) { return ParseRigLine(line).status; }

// A body sealed with a correct CRC, so only the fields can be wrong.
RigParseStatus StatusOfBody(const std::string& body) { return StatusOf(SealRigLine(body)); }

TEST_CASE("CRC-16/CCITT-FALSE matches its published check value") {
  // Parameters and check value from the Catalogue of parametrised CRC algorithms
  // (reveng.sourceforge.net), entry CRC-16/IBM-3740, alias CRC-16/CCITT-FALSE:
  // width 16, poly 0x1021, init 0xFFFF, refin/refout false, xorout 0x0000, check 0x29B1.
  CHECK(Crc16CcittFalse("123456789") == 0x29B1);
  // With no input bytes the register keeps its initial value and xorout is zero.
  CHECK(Crc16CcittFalse("") == 0xFFFF);
  // Python's binascii.crc_hqx(data, 0xFFFF) is the same algorithm; more random lines are
  // compared with it in tests/reference/rig_protocol_vs_python.py.
  CHECK(Crc16CcittFalse("A") == 0xB915);
}

using test::BitwiseCrc;  // the bitwise definition (tests/io/bitwise_crc.h)

TEST_CASE("the table-driven CRC (8 bytes per step) equals the bitwise definition") {
  // Every length from 0 to 300 bytes, so each tail length after the 8-byte steps occurs, over
  // bytes of every value (a fixed linear congruential sequence, Numerical Recipes' constants).
  std::string bytes;
  std::uint32_t x = 12345;
  for (int i = 0; i < 300; ++i) {
    x = x * 1664525u + 1013904223u;
    bytes += static_cast<char>(x >> 24);
  }
  for (std::size_t length = 0; length <= bytes.size(); ++length) {
    for (std::size_t start : {std::size_t{0}, std::size_t{3}}) {
      if (start + length > bytes.size()) continue;
      const std::string_view piece = std::string_view(bytes).substr(start, length);
      INFO("length ", length, " from ", start);
      CHECK(Crc16CcittFalse(piece) == BitwiseCrc(piece));
    }
  }
  CHECK(BitwiseCrc("123456789") == 0x29B1);  // the published check value
}

TEST_CASE("sealed lines carry four upper-case hex digits of the body's CRC") {
  const std::string line = SealRigLine("s 42 1042000 150 55.2 148.31");
  // CRC from Python: '%04X' % binascii.crc_hqx(b's 42 1042000 150 55.2 148.31', 0xFFFF).
  CHECK(line == "s 42 1042000 150 55.2 148.31 *8C0A\n");
  CHECK(EncodeRigLine(RigMessage::Sample(42, {1042000, 150, 55.2, 148.31})) == line);
}

TEST_CASE("every message kind round-trips through encode and parse") {
  RigCaps caps;
  caps.period_us = 1000;
  caps.actuator_lo = -10;
  caps.actuator_hi = 10.5;
  caps.safe_value = 0;
  caps.watchdog_ms = 500;
  caps.name = "heater-zone";
  const std::vector<RigMessage> messages = {
      RigMessage::Caps(0, caps),
      RigMessage::Sample(4294967295u, {18446744073709551615ull, -1e-05, 0.1, 123456789.0}),
      RigMessage::Ok(7, 3),
      RigMessage::Err(8, 4, "range", "u 120 is above ACT_HI 100"),
      RigMessage::State(9, RigMode::kSafe, "watchdog"),
      RigMessage::State(10, RigMode::kClosed),
      RigMessage::Hello(0),
      RigMessage::Actuator(1, 42.5),
      RigMessage::Loop(2, "pid:0.5:2:20", 1.25, 150),
      RigMessage::Ref(3, -7.25),
      RigMessage::Bare(RigMessageKind::kGo, 4),
      RigMessage::Bare(RigMessageKind::kHalt, 5),
      RigMessage::Bare(RigMessageKind::kSafe, 6),
      RigMessage::Bare(RigMessageKind::kBeat, 7),
  };
  for (const RigMessage& m : messages) {
    const std::string line = EncodeRigLine(m);
    const RigMessage back = MustParse(line);
    CHECK(back.kind == m.kind);
    CHECK(back.seq == m.seq);
    CHECK(line.rfind(std::string(RigMessageWord(m.kind)) + " ", 0) == 0);
    switch (m.kind) {
      case RigMessageKind::kCaps:
        CHECK(back.caps.period_us == 1000);
        CHECK(back.caps.actuator_lo == -10);
        CHECK(back.caps.actuator_hi == 10.5);
        CHECK(back.caps.watchdog_ms == 500);
        CHECK(back.caps.name == "heater-zone");
        break;
      case RigMessageKind::kSample:
        CHECK(back.sample.t_us == m.sample.t_us);
        CHECK(back.sample.reference == m.sample.reference);
        CHECK(back.sample.actuator == m.sample.actuator);
        CHECK(back.sample.output == m.sample.output);
        break;
      case RigMessageKind::kErr:
        CHECK(back.acked == 4);
        CHECK(back.code == "range");
        CHECK(back.text == "u 120 is above ACT_HI 100");
        break;
      case RigMessageKind::kState:
        CHECK(back.mode == m.mode);
        CHECK(back.text == m.text);
        break;
      case RigMessageKind::kLoop:
        CHECK(back.controller == "pid:0.5:2:20");
        CHECK(back.gain == 1.25);
        CHECK(back.value == 150);
        break;
      case RigMessageKind::kOk:
        CHECK(back.acked == 3);
        break;
      default:
        CHECK(back.value == m.value);
        break;
    }
    CHECK(IsRigToHost(m.kind) == (m.kind <= RigMessageKind::kState));
  }
}

TEST_CASE("reals are printed as %.9g: nine significant digits") {
  // 1/3 to 9 significant digits is 0.333333333 (printf's %.9g, C99 7.19.6.1).
  const std::string line = EncodeRigLine(RigMessage::Actuator(0, 1.0 / 3.0));
  CHECK(line.rfind("u 0 0.333333333 *", 0) == 0);
  CHECK(MustParse(line).value == doctest::Approx(1.0 / 3.0).epsilon(1e-9));
  CHECK(EncodeRigLine(RigMessage::Actuator(0, 2.5e-7)).rfind("u 0 2.5e-07 *", 0) == 0);
}

TEST_CASE("a \\r\\n terminator is accepted, a bare \\r is not") {
  const std::string line = SealRigLine("beat 3");
  std::string crlf = line;
  crlf.insert(crlf.end() - 1, '\r');
  CHECK(MustParse(crlf).kind == RigMessageKind::kBeat);
  std::string cr = line;
  cr.back() = '\r';
  CHECK(StatusOf(cr) == RigParseStatus::kNoCrc);
  CHECK(MustParse(line.substr(0, line.size() - 1)).seq == 3);  // without terminator
}

TEST_CASE("framing faults: length, CRC suffix, CRC value") {
  // The longest valid line is kRigMaxLineBytes bytes without its terminator.
  const std::string head = "err 1 2 syntax ";
  const auto padded = [&](std::size_t total) {
    return SealRigLine(head + std::string(total - head.size() - 6, 'x'));
  };
  CHECK(padded(kRigMaxLineBytes).size() == kRigMaxLineBytes + 1);
  CHECK(StatusOf(padded(kRigMaxLineBytes)) == RigParseStatus::kOk);
  CHECK(StatusOf(padded(kRigMaxLineBytes + 1)) == RigParseStatus::kTooLong);

  CHECK(StatusOf("beat 3\n") == RigParseStatus::kNoCrc);
  CHECK(StatusOf("") == RigParseStatus::kNoCrc);
  CHECK(StatusOf("\n") == RigParseStatus::kNoCrc);
  // An empty body has CRC FFFF (the initial value), so this frame is sound but has no fields.
  CHECK(StatusOf(" *FFFF") == RigParseStatus::kMalformed);
  std::string lower = SealRigLine("s 42 1042000 150 55.2 148.31");  // CRC 8C0A
  for (char& c : lower) c = (c == 'C') ? 'c' : c;
  CHECK(StatusOf(lower) == RigParseStatus::kNoCrc);
  CHECK(StatusOf("beat 3 *12345\n") == RigParseStatus::kNoCrc);
  CHECK(StatusOf("beat 3*1234\n") == RigParseStatus::kNoCrc);

  // Every single-bit error in the body is caught: a CRC whose polynomial has more than one term
  // detects all of them (Peterson and Brown, "Cyclic Codes for Error Detection", 1961).
  const std::string good = SealRigLine("s 42 1042000 150 55.2 148.31");
  const std::size_t body_size = good.size() - 7;
  for (std::size_t i = 0; i < body_size; ++i) {
    for (int bit = 0; bit < 8; ++bit) {
      std::string bad = good;
      bad[i] = static_cast<char>(bad[i] ^ (1 << bit));
      if (bad[i] == '\n') continue;  // would end the line early: a framing fault, tested below
      const RigParseStatus status = StatusOf(bad);
      INFO("byte ", i, " bit ", bit);
      CHECK(status == RigParseStatus::kBadCrc);
    }
  }
}

TEST_CASE("field faults under a correct CRC are malformed or unknown") {
  CHECK(StatusOfBody("hullo 1 1") == RigParseStatus::kUnknownWord);
  CHECK(StatusOfBody("S 1 0 0 0 0") == RigParseStatus::kUnknownWord);  // words are lower case
  const std::vector<std::string> malformed = {
      "beat",                              // no SEQ
      "beat 1 2",                          // one field too many
      "beat  1",                           // two spaces
      " beat 1",                           // leading space
      "beat 1 ",                           // trailing space
      "beat 01",                           // leading zero
      "beat -1",                           // sign on an integer
      "beat 4294967296",                   // SEQ beyond 2^32 - 1
      "beat 1.0",                          // SEQ not an integer
      "s 1 100 0 0",                       // a field missing
      "s 1 100 0 0 0 0",                   // a field too many
      "s 1 -100 0 0 0",                    // negative rig time
      "s 1 100 nan 0 0",                   // not finite
      "s 1 100 inf 0 0",                   // not finite
      "s 1 100 0 1e999 0",                 // overflows a double
      "s 1 100 +1 0 0",                    // %.9g never prints a plus sign in front
      "s 1 100 0x10 0 0",                  // hex
      "s 1 100 1,5 0 0",                   // comma
      "s 1 100 1.5.2 0 0",                 // two points
      "u 1 ",                              // empty value
      "u 1 abc",                           // not a number
      "caps 0 1 0 0 100 0 500 rig",        // period 0
      "caps 0 1 1000 100 100 0 500 rig",   // lo == hi
      "caps 0 1 1000 0 100 101 500 rig",   // safe above hi
      "caps 0 1 1000 0 100 -1 500 rig",    // safe below lo
      "caps 0 1 1000 0 100 0 0 rig",       // watchdog 0
      "caps 0 0 1000 0 100 0 500 rig",     // version 0
      "caps 0 1 1000 0 100 0 500",         // no name
      "caps 0 1 1000 0 100 0 500 my rig",  // name with a space
      "hello 0 0",                         // version 0
      "ok 1",                              // no ACKED_SEQ
      "ok 1 2 3",                          // extra
      "err 1 2 range",                     // no TEXT
      "err 1 2 range a *b",                // TEXT with what reads as a CRC mark
      "state 1 safe x *",                  // the same in a state text
      "state 1 running",                   // unknown mode
      "state 1",                           // no mode
      "loop 1 p 2",                        // no reference
      "loop 1 p two 3",                    // gain not a number
      "beat 1\t",                          // control character
  };
  for (const std::string& body : malformed) {
    INFO("body: '", body, "' reason: ", ParseRigLine(SealRigLine(body)).reason);
    CHECK(StatusOfBody(body) == RigParseStatus::kMalformed);
  }
  // The reason names the field.
  CHECK(ParseRigLine(SealRigLine("caps 0 1 1000 0 x 0 500 rig")).reason.find("ACT_HI") !=
        std::string::npos);
}

TEST_CASE("encode refuses what it could not write as a valid line") {
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Actuator(0, std::nan(""))), UsageError);
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Ref(0, std::numeric_limits<double>::infinity())),
                  UsageError);
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Loop(0, "pi: 2", 1, 1)), UsageError);
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Loop(0, "", 1, 1)), UsageError);
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Err(0, 0, "range", "")), UsageError);
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Err(0, 0, "range", "a *b")), UsageError);
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::State(0, RigMode::kSafe, "two\nlines")), UsageError);
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Err(0, 0, "x", std::string(kRigMaxLineBytes, 'a'))),
                  UsageError);
  RigCaps caps;  // period 0
  caps.name = "rig";
  caps.actuator_hi = 1;
  caps.watchdog_ms = 100;
  CHECK_THROWS_AS(EncodeRigLine(RigMessage::Caps(0, caps)), UsageError);
}

// Collects a splitter's events.
struct Collector {
  std::vector<RigLineEvent> events;
  RigLineSplitter splitter{[this](const RigLineEvent& e) { events.push_back(e); }};
  std::vector<RigLineEvent::Kind> Kinds() const {
    std::vector<RigLineEvent::Kind> kinds;
    for (const auto& e : events) kinds.push_back(e.kind);
    return kinds;
  }
};

std::string SampleLine(std::uint32_t seq) {
  return EncodeRigLine(RigMessage::Sample(seq, {seq * 1000ull, 1, 2, 3}));
}

TEST_CASE("the splitter gives the same events however the bytes are cut") {
  std::string stream;
  for (std::uint32_t i = 0; i < 5; ++i) stream += SampleLine(i);
  stream += "garbage\r\n";
  stream += SampleLine(6);
  Collector whole;
  whole.splitter.Feed(stream);
  REQUIRE(whole.events.size() == 8);  // 5 samples, rejected, gap, sample
  for (std::size_t cut = 0; cut <= stream.size(); ++cut) {
    Collector parts;
    parts.splitter.Feed(std::string_view(stream).substr(0, cut));
    parts.splitter.Feed(std::string_view(stream).substr(cut));
    CHECK(parts.Kinds() == whole.Kinds());
  }
  Collector bytewise;
  for (char c : stream) bytewise.splitter.Feed(std::string_view(&c, 1));
  CHECK(bytewise.Kinds() == whole.Kinds());
  CHECK(whole.events[5].raw == "garbage");
  CHECK(whole.events[5].status == RigParseStatus::kNoCrc);
  CHECK(whole.splitter.counts().bytes == stream.size());
}

TEST_CASE("drops and corruption are counted exactly and told apart") {
  Collector c;
  std::uint32_t seq = 0;
  std::uint64_t dropped = 0, corrupted = 0;
  // A fixed pattern over 1000 lines: every 7th dropped, every 11th corrupted (one flipped bit).
  for (int i = 0; i < 1000; ++i, ++seq) {
    std::string line = SampleLine(seq);
    if (i % 7 == 3) {
      ++dropped;
      continue;
    }
    if (i % 11 == 5) {
      ++corrupted;
      line[line.size() / 2] ^= 0x04;
    }
    c.splitter.Feed(line);
  }
  c.splitter.Feed(SampleLine(seq));  // a last valid line reveals any trailing gap
  const RigStreamCounts& n = c.splitter.counts();
  CHECK(n.lines == 1001 - dropped);
  CHECK(n.bad_crc == corrupted);
  CHECK(n.rejected == corrupted);
  CHECK(n.valid == 1001 - dropped - corrupted);
  CHECK(n.missing == dropped + corrupted);
  CHECK(n.dropped == dropped);
  std::uint64_t gap_total = 0;
  for (const auto& e : c.events) {
    if (e.kind != RigLineEvent::Kind::kGap) continue;
    CHECK(e.missing == static_cast<std::uint32_t>(e.last_missing - e.first_missing + 1));
    gap_total += e.missing;
  }
  CHECK(gap_total == n.missing);
}

TEST_CASE("sequence numbers wrap at 2^32; going back is out of order, not a gap") {
  Collector c;
  c.splitter.Feed(SampleLine(4294967294u));
  c.splitter.Feed(SampleLine(4294967295u));
  c.splitter.Feed(SampleLine(0));
  c.splitter.Feed(SampleLine(2));  // 1 missing
  CHECK(c.splitter.counts().missing == 1);
  CHECK(c.events[3].kind == RigLineEvent::Kind::kGap);
  CHECK(c.events[3].first_missing == 1);
  CHECK(c.events[3].last_missing == 1);
  c.splitter.Feed(SampleLine(2));  // a repeat
  CHECK(c.splitter.counts().out_of_order == 1);
  CHECK(c.splitter.counts().missing == 1);
  c.splitter.ResetSequence();
  c.splitter.Feed(SampleLine(100));  // after a reset any number is accepted
  CHECK(c.splitter.counts().missing == 1);
  c.splitter.Feed(SampleLine(4294967295u));  // far ahead of 101 by more than 2^31: behind
  CHECK(c.splitter.counts().out_of_order == 2);
}

TEST_CASE("an overlong line in a stream is rejected once and the next line is fine") {
  Collector c;
  c.splitter.Feed(SampleLine(0));
  c.splitter.Feed(std::string(5000, 'z') + "\n");
  c.splitter.Feed(SampleLine(1));
  const RigStreamCounts& n = c.splitter.counts();
  CHECK(n.lines == 3);
  CHECK(n.rejected == 1);
  CHECK(n.valid == 2);
  REQUIRE(c.events.size() == 3);
  CHECK(c.events[1].status == RigParseStatus::kTooLong);
  CHECK(c.events[1].raw.size() == kRigMaxLineBytes);
  // The rejected line sat between two consecutive numbers: no gap, nothing dropped.
  CHECK(n.missing == 0);
}

TEST_CASE("a line cut off at the end of the stream is reported by Finish") {
  Collector c;
  std::string line = SampleLine(0);
  c.splitter.Feed(line);
  c.splitter.Feed(std::string_view(line).substr(0, 10));
  CHECK(c.events.size() == 1);
  c.splitter.Finish();
  REQUIRE(c.events.size() == 2);
  CHECK(c.events[1].kind == RigLineEvent::Kind::kRejected);
  CHECK(c.events[1].raw == line.substr(0, 10));
  CHECK(c.splitter.counts().rejected == 1);
  c.splitter.Finish();  // nothing pending: nothing more
  CHECK(c.events.size() == 2);
}

TEST_CASE("every example line in io/rig_protocol.md parses with a matching CRC") {
  std::ifstream spec(std::string(LOOPWRIGHT_SOURCE_DIR) + "/io/rig_protocol.md");
  REQUIRE(spec.good());
  std::string text;
  int examples = 0;
  bool in_code = false;
  while (std::getline(spec, text)) {
    if (text.rfind("```", 0) == 0) in_code = !in_code;
    if (!in_code || text.size() < 2 || (text.rfind("> ", 0) != 0 && text.rfind("< ", 0) != 0)) {
      continue;
    }
    const RigParseResult r = ParseRigLine(text.substr(2));
    INFO("line: ", text, " reason: ", r.reason);
    CHECK(r.status == RigParseStatus::kOk);
    CHECK(IsRigToHost(r.message.kind) == (text[0] == '<'));
    ++examples;
  }
  CHECK(examples >= 15);
  // The spec tells firmware authors to type this line at a new rig.
  CHECK(ParseRigLine("hello 0 1 *177E").status == RigParseStatus::kOk);
}

}  // namespace
}  // namespace lw
