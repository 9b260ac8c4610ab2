// The example firmware (io/firmware/rig_firmware.c), compiled as C99 with the host compiler and
// run against a fake board: every line it sends must pass the C++ parser (io/rig_protocol.h),
// its CRC must equal the published check value, and it must behave as io/rig_protocol.md says.
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <deque>
#include <random>
#include <string>
#include <utility>
#include <vector>

#include "io/firmware/rig_firmware.h"
#include "io/firmware/rig_platform.h"
#include "io/rig_protocol.h"

namespace {

// The fake board: a clock the test moves, a byte queue in, everything written out, and a
// first-order lag plant dy/dt = (u - y) / tau driven by the actuator.
struct FakeBoard {
  std::uint32_t micros = 0;
  std::deque<char> in;
  std::string out;
  double y = 0.0;
  double u = -1.0;
  double tau_s = 0.5;
  std::uint32_t last_plant_us = 0;
};
FakeBoard board;

}  // namespace

extern "C" {
std::uint32_t rig_platform_micros(void) { return board.micros; }
int rig_platform_read_byte(void) {
  if (board.in.empty()) return -1;
  const unsigned char c = static_cast<unsigned char>(board.in.front());
  board.in.pop_front();
  return c;
}
void rig_platform_write(const char* bytes, size_t count) { board.out.append(bytes, count); }
double rig_platform_read_output(void) {
  // Exact step response of the lag over the time since the last reading, u held (ZOH).
  const double dt = static_cast<std::uint32_t>(board.micros - board.last_plant_us) * 1e-6;
  board.last_plant_us = board.micros;
  board.y = board.u + (board.y - board.u) * std::exp(-dt / board.tau_s);
  return board.y;
}
void rig_platform_set_actuator(double u) { board.u = u; }
}

namespace lw {
namespace {

const rig_config kConfig = {1000, 0.0, 100.0, 5.0, 200, "bench-lag"};

// A rig on a fresh fake board, and a splitter checking everything it sends.
struct Bench {
  rig_firmware rig{};
  std::vector<RigMessage> messages;
  RigLineSplitter splitter{[this](const RigLineEvent& e) {
    INFO("raw: ", e.raw, " reason: ", e.reason);
    CHECK(e.kind == RigLineEvent::Kind::kMessage);  // no rejected line, no gap, ever
    if (e.kind == RigLineEvent::Kind::kMessage) messages.push_back(e.message);
  }};
  std::uint32_t host_seq = 0;

  explicit Bench(std::uint32_t start_micros = 0) {
    board = FakeBoard{};
    board.micros = start_micros;
    board.last_plant_us = start_micros;
    rig_init(&rig, &kConfig);
  }
  // Sends a host message (SEQ filled in) and polls once.
  void Host(RigMessage m) {
    m.seq = host_seq++;
    HostRaw(EncodeRigLine(m));
  }
  void HostRaw(const std::string& line) {
    board.in.insert(board.in.end(), line.begin(), line.end());
    Poll();
  }
  void Poll() {
    rig_poll(&rig);
    splitter.Feed(board.out);
    board.out.clear();
  }
  // Moves the clock on by `us` in steps of `step_us`, polling after each.
  void Run(std::uint64_t us, std::uint32_t step_us = 100) {
    for (std::uint64_t t = 0; t < us; t += step_us) {
      board.micros += step_us;
      Poll();
    }
  }
  std::vector<RigMessage> Take() { return std::exchange(messages, {}); }
  std::vector<RigMessage> Samples() {
    std::vector<RigMessage> samples;
    for (auto& m : Take()) {
      if (m.kind == RigMessageKind::kSample) samples.push_back(m);
    }
    return samples;
  }
};

TEST_CASE("firmware CRC: published check value and the C++ implementation") {
  // CRC-16/CCITT-FALSE check value 0x29B1 (Catalogue of parametrised CRC algorithms).
  CHECK(rig_crc16("123456789", 9) == 0x29B1);
  std::mt19937 random(7);
  for (int i = 0; i < 200; ++i) {
    std::string text(random() % 120, ' ');
    for (char& c : text) c = static_cast<char>(32 + random() % 95);
    CHECK(rig_crc16(text.data(), text.size()) == Crc16CcittFalse(text));
  }
}

TEST_CASE("firmware: hello gets caps, every other host line one ok or err") {
  Bench b;
  b.Host(RigMessage::Hello(0));
  auto got = b.Take();
  REQUIRE(got.size() == 1);
  CHECK(got[0].kind == RigMessageKind::kCaps);
  CHECK(got[0].seq == 0);
  CHECK(got[0].caps.period_us == 1000);
  CHECK(got[0].caps.actuator_hi == 100);
  CHECK(got[0].caps.safe_value == 5);
  CHECK(got[0].caps.watchdog_ms == 200);
  CHECK(got[0].caps.name == "bench-lag");
  CHECK(board.u == 5.0);  // idle: actuator at the safe value

  b.Host(RigMessage::Actuator(0, 150));  // out of range
  got = b.Take();
  REQUIRE(got.size() == 1);
  CHECK(got[0].kind == RigMessageKind::kErr);
  CHECK(got[0].acked == 1);
  CHECK(got[0].code == "range");

  b.Host(RigMessage::Ref(0, 3));  // not in closed loop
  got = b.Take();
  REQUIRE(got.size() == 1);
  CHECK(got[0].code == "mode");

  b.Host(RigMessage::Loop(0, "pi:oops", 1, 1));
  CHECK(b.Take().at(0).code == "controller");
  b.Host(RigMessage::Loop(0, "lead:1:0", 1, 1));  // P must be > 0
  CHECK(b.Take().at(0).code == "controller");

  std::string corrupted = EncodeRigLine(RigMessage::Actuator(7, 20));
  corrupted[2] = '9';  // "u 9 20" under the CRC of "u 7 20"
  b.HostRaw(corrupted);
  got = b.Take();
  REQUIRE(got.size() == 1);
  CHECK(got[0].code == "crc");
  CHECK(got[0].acked == 9);  // the SEQ as read; the CRC says it cannot be trusted

  b.HostRaw("u 8 20\n");
  CHECK(b.Take().at(0).code == "syntax");
  b.HostRaw(SealRigLine("u 8  20"));
  CHECK(b.Take().at(0).code == "syntax");
  b.HostRaw(SealRigLine("u 8 0x10"));
  CHECK(b.Take().at(0).code == "syntax");
  b.HostRaw(SealRigLine("u 8 inf"));
  CHECK(b.Take().at(0).code == "syntax");
  b.HostRaw(SealRigLine("fly 8"));
  CHECK(b.Take().at(0).code == "syntax");
  b.HostRaw(std::string(300, 'x') + "\n");
  CHECK(b.Take().at(0).code == "syntax");
  b.HostRaw(SealRigLine("hello 9 2"));
  CHECK(b.Take().at(0).code == "version");

  b.Host(RigMessage::Bare(RigMessageKind::kBeat, 0));
  got = b.Take();
  REQUIRE(got.size() == 1);
  CHECK(got[0].kind == RigMessageKind::kOk);
  // The rig's SEQ went up by one per line it sent, with no gap (the splitter checks).
  CHECK(b.splitter.counts().valid == 14);  // 14 host lines, one reply each
  CHECK(b.splitter.counts().missing == 0);
}

TEST_CASE("firmware: open loop streams samples at the period with the rig's clock") {
  Bench b;
  b.Host(RigMessage::Actuator(0, 40));
  auto got = b.Take();
  REQUIRE(got.size() == 2);
  CHECK(got[0].kind == RigMessageKind::kOk);
  CHECK(got[1].kind == RigMessageKind::kState);
  CHECK(got[1].mode == RigMode::kOpen);
  b.Host(RigMessage::Bare(RigMessageKind::kGo, 0));
  CHECK(b.Take().at(0).kind == RigMessageKind::kOk);
  b.Run(50000);  // 50 ms with a beat every... none needed: 50 ms < watchdog 200 ms
  auto samples = b.Samples();
  REQUIRE(samples.size() >= 50);
  for (std::size_t i = 1; i < samples.size(); ++i) {
    CHECK(samples[i].sample.t_us - samples[i - 1].sample.t_us == 1000);
    CHECK(samples[i].sample.actuator == 40);
  }
  // The output follows the lag's exact step response from its start at 0: y = 40 (1 - e^-t/tau).
  const double t = (samples.back().sample.t_us - samples.front().sample.t_us) * 1e-6;
  const double y0 = samples.front().sample.output;
  CHECK(samples.back().sample.output ==
        doctest::Approx(40 + (y0 - 40) * std::exp(-t / 0.5)).epsilon(1e-6));
  b.Host(RigMessage::Bare(RigMessageKind::kHalt, 0));
  b.Take();
  b.Run(10000);
  CHECK(b.Samples().empty());
}

TEST_CASE("firmware: the watchdog drives the actuator to its safe value") {
  Bench b;
  b.Host(RigMessage::Actuator(0, 60));
  b.Host(RigMessage::Bare(RigMessageKind::kGo, 0));
  // Heartbeats every 100 ms for a second: stays open.
  for (int i = 0; i < 10; ++i) {
    b.Run(100000, 1000);
    b.Host(RigMessage::Bare(RigMessageKind::kBeat, 0));
  }
  CHECK(board.u == 60);
  b.Take();
  // Silence: safe within the watchdog time (200 ms) plus one poll step.
  b.Run(201000 + 1000, 1000);
  CHECK(board.u == kConfig.safe_value);
  bool said_watchdog = false;
  for (const auto& m : b.Take()) {
    if (m.kind == RigMessageKind::kState) {
      CHECK(m.mode == RigMode::kSafe);
      said_watchdog = m.text == "watchdog";
    }
  }
  CHECK(said_watchdog);
  b.Run(10000);
  CHECK(b.Samples().empty());  // streaming stopped
}

TEST_CASE("firmware: safe stop, then closed loop with integral action settles on the reference") {
  Bench b;
  b.Host(RigMessage::Actuator(0, 30));
  b.Host(RigMessage::Bare(RigMessageKind::kSafe, 0));
  auto got = b.Take();
  CHECK(got.back().kind == RigMessageKind::kState);
  CHECK(got.back().mode == RigMode::kSafe);
  CHECK(got.back().text == "safe stop");
  CHECK(board.u == kConfig.safe_value);

  SUBCASE("p: U = K (R - Y) at every sample, clamped to the range") {
    b.Host(RigMessage::Loop(0, "p", 2.5, 20));
    b.Host(RigMessage::Bare(RigMessageKind::kGo, 0));
    b.Run(100000, 250);
    auto samples = b.Samples();
    REQUIRE(samples.size() >= 99);
    for (const auto& s : samples) {
      const double expected = std::clamp(2.5 * (s.sample.reference - s.sample.output), 0.0, 100.0);
      CHECK(s.sample.actuator == doctest::Approx(expected).epsilon(1e-8));
    }
  }
  SUBCASE("pi: zero steady-state error on a step (final value theorem, integral action)") {
    b.Host(RigMessage::Loop(0, "pi:2", 3, 20));
    b.Host(RigMessage::Bare(RigMessageKind::kGo, 0));
    for (int i = 0; i < 40; ++i) {  // 8 s with heartbeats
      b.Run(200000 - 2000, 1000);
      b.Host(RigMessage::Bare(RigMessageKind::kBeat, 0));
    }
    auto samples = b.Samples();
    REQUIRE(!samples.empty());
    CHECK(samples.back().sample.output == doctest::Approx(20).epsilon(1e-4));
    b.Host(RigMessage::Ref(0, 35));
    CHECK(b.Take().at(0).kind == RigMessageKind::kOk);
  }
  SUBCASE("pid and lead are accepted") {
    b.Host(RigMessage::Loop(0, "pid:1:3:40", 0.5, 20));
    CHECK(b.Take().at(0).kind == RigMessageKind::kOk);
    b.Host(RigMessage::Loop(0, "lead:1:10", 0.5, 20));
    CHECK(b.Take().at(0).kind == RigMessageKind::kOk);
  }
}

TEST_CASE("firmware: the 32-bit microsecond clock wraps, rig time keeps counting") {
  Bench b(0xFFFFFFFFu - 20000);
  b.Host(RigMessage::Actuator(0, 10));
  b.Host(RigMessage::Bare(RigMessageKind::kGo, 0));
  b.Run(60000, 500);
  auto samples = b.Samples();
  REQUIRE(samples.size() >= 50);
  for (std::size_t i = 1; i < samples.size(); ++i) {
    CHECK(samples[i].sample.t_us - samples[i - 1].sample.t_us == 1000);
  }
}

TEST_CASE("firmware: host bytes arriving one at a time and \\r\\n endings") {
  Bench b;
  std::string line = EncodeRigLine(RigMessage::Hello(0));
  line.insert(line.end() - 1, '\r');
  for (char c : line) {
    board.in.push_back(c);
    b.Poll();
  }
  auto got = b.Take();
  REQUIRE(got.size() == 1);
  CHECK(got[0].kind == RigMessageKind::kCaps);
}

}  // namespace
}  // namespace lw
