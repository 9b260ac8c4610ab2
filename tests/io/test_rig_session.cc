// The host's rig session (io/rig_session.h) against a scripted rig on the far end of a
// socketpair: connect and the limits it narrows, requests and their replies, refusals and
// timeouts, the trip sent from the reader thread, the heartbeat, stop requests, the rig going
// safe on its own, a lost or silent link, the counts of lost and corrupted lines and their
// notes in the recording, the safe stop of the destructor, and the dry run.
//
// Nothing here depends on how fast the machine is: every wait is for an event (with a
// deadline of seconds that only a broken session reaches), and the only timeouts the tests
// provoke are ones the session must reach on its own (no reply, no sample). The CRC of the dry
// run's lines is computed here from the published CRC-16/CCITT-FALSE parameters (poly 0x1021,
// init 0xFFFF, no reflection, xorout 0; check value 0x29B1 for "123456789").
#include "io/rig_session.h"

#include <doctest/doctest.h>
#include <sys/socket.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <csignal>
#include <cstdio>
#include <functional>
#include <map>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "io/recording_sink.h"
#include "io/rig_link.h"
#include "io/rig_protocol.h"
#include "lti/error.h"
#include "temp_dir.h"
#include "tests/io/bitwise_crc.h"

namespace lw {
namespace {

using std::chrono::milliseconds;
using Kind = RigMessageKind;

// The deadline of every wait for an event: only a broken session comes near it.
constexpr auto kEventDeadline = std::chrono::seconds(10);

RigCaps BenchCaps() {
  RigCaps caps;
  caps.period_us = 10000;
  caps.actuator_lo = 0;
  caps.actuator_hi = 100;
  caps.safe_value = 0;
  caps.watchdog_ms = 400;
  caps.name = "bench-oven";
  return caps;
}

// A rig played by the test on one end of a socketpair, with its own reader thread and its own
// SEQ counter (so a test can skip numbers and corrupt lines on purpose). By default it answers
// hello with its caps and every other host line with ok; Refuse and Ignore change that per kind.
class ScriptedRig {
 public:
  explicit ScriptedRig(RigCaps caps) : caps_(std::move(caps)) {
    int fds[2];
    REQUIRE(socketpair(AF_UNIX, SOCK_STREAM, 0, fds) == 0);
    host_fd_ = fds[0];
    fd_ = fds[1];
    reader_ = std::thread([this] { Read(); });
  }
  ~ScriptedRig() {
    Hangup();
    reader_.join();
    ::close(fd_);
    if (host_fd_ >= 0) ::close(host_fd_);
  }
  ScriptedRig(const ScriptedRig&) = delete;
  ScriptedRig& operator=(const ScriptedRig&) = delete;

  // The host's end, once: the link adopts it.
  std::unique_ptr<RigLink> HostLink() {
    REQUIRE(host_fd_ >= 0);
    int fd = host_fd_;
    host_fd_ = -1;
    return AdoptRigLinkDescriptor(fd, "bench-link");
  }

  void Refuse(Kind kind, std::string code, std::string text) {
    std::lock_guard<std::mutex> lock(mutex_);
    policy_[kind] = {Policy::kRefuse, std::move(code), std::move(text)};
  }
  void Ignore(Kind kind) {
    std::lock_guard<std::mutex> lock(mutex_);
    policy_[kind] = {Policy::kIgnore, {}, {}};
  }
  void SetCaps(RigCaps caps) {
    std::lock_guard<std::mutex> lock(mutex_);
    caps_ = std::move(caps);
  }

  // A sample with the next SEQ.
  void Sample(std::uint64_t t_us, double r, double u, double y) {
    Send(RigMessage::Sample(0, {t_us, r, u, y}));
  }
  // A sample line with the next SEQ and one digit of its output changed after sealing: its CRC
  // no longer matches.
  void CorruptedSample(std::uint64_t t_us, double y) {
    std::lock_guard<std::mutex> lock(write_mutex_);
    RigMessage m = RigMessage::Sample(seq_++, {t_us, 0, 0, y});
    std::string line = EncodeRigLine(m);
    std::size_t star = line.rfind(" *");
    REQUIRE(star != std::string::npos);
    char& digit = line[star - 1];  // the last digit of Y
    REQUIRE(digit >= '0');
    REQUIRE(digit <= '9');
    digit = digit == '9' ? '0' : static_cast<char>(digit + 1);
    Write(line);
  }
  // Uses up `n` SEQ numbers: lines that never arrive.
  void Skip(std::uint32_t n) {
    std::lock_guard<std::mutex> lock(write_mutex_);
    seq_ += n;
  }
  void State(RigMode mode, std::string text) { Send(RigMessage::State(0, mode, std::move(text))); }
  // The rig drops the link (both directions).
  void Hangup() { ::shutdown(fd_, SHUT_RDWR); }

  // Host lines received so far, in order.
  std::vector<RigMessage> Received() {
    std::lock_guard<std::mutex> lock(mutex_);
    return received_;
  }
  std::size_t Count(Kind kind) {
    std::lock_guard<std::mutex> lock(mutex_);
    return CountLocked(kind);
  }
  // Waits until at least `n` host lines of `kind` arrived; false at the deadline.
  bool WaitFor(Kind kind, std::size_t n = 1) {
    std::unique_lock<std::mutex> lock(mutex_);
    return changed_.wait_for(lock, kEventDeadline, [&] { return CountLocked(kind) >= n; });
  }
  // Waits until the host closed its end; false at the deadline.
  bool WaitHostGone() {
    std::unique_lock<std::mutex> lock(mutex_);
    return changed_.wait_for(lock, kEventDeadline, [&] { return eof_; });
  }
  // Host lines other than beats, as their first words.
  std::vector<std::string> Words() {
    std::vector<std::string> words;
    for (const RigMessage& m : Received()) {
      if (m.kind != Kind::kBeat) words.emplace_back(RigMessageWord(m.kind));
    }
    return words;
  }

 private:
  enum class Policy { kAnswer, kRefuse, kIgnore };
  struct Rule {
    Policy policy = Policy::kAnswer;
    std::string code, text;
  };

  std::size_t CountLocked(Kind kind) const {
    std::size_t n = 0;
    for (const RigMessage& m : received_) n += m.kind == kind;
    return n;
  }

  void Send(RigMessage m) {
    std::lock_guard<std::mutex> lock(write_mutex_);
    m.seq = seq_++;
    Write(EncodeRigLine(m));
  }
  void Write(const std::string& line) {
    std::size_t done = 0;
    while (done < line.size()) {
      ssize_t n = ::send(fd_, line.data() + done, line.size() - done, MSG_NOSIGNAL);
      if (n <= 0) return;  // the host is gone; the test looks at what it received
      done += static_cast<std::size_t>(n);
    }
  }

  void OnLine(const RigLineEvent& e) {
    if (e.kind != RigLineEvent::Kind::kMessage) return;
    const RigMessage& m = e.message;
    Rule rule;
    RigCaps caps;
    {
      std::lock_guard<std::mutex> lock(mutex_);
      received_.push_back(m);
      if (auto it = policy_.find(m.kind); it != policy_.end()) rule = it->second;
      caps = caps_;
    }
    changed_.notify_all();
    if (rule.policy == Policy::kIgnore) return;
    if (rule.policy == Policy::kRefuse) {
      Send(RigMessage::Err(0, m.seq, rule.code, rule.text));
    } else if (m.kind == Kind::kHello) {
      Send(RigMessage::Caps(0, caps));
    } else {
      Send(RigMessage::Ok(0, m.seq));
    }
  }

  void Read() {
    RigLineSplitter splitter([this](const RigLineEvent& e) { OnLine(e); });
    char buffer[4096];
    for (;;) {
      ssize_t n = ::read(fd_, buffer, sizeof buffer);
      if (n <= 0) break;
      splitter.Feed(std::string_view(buffer, static_cast<std::size_t>(n)));
    }
    {
      std::lock_guard<std::mutex> lock(mutex_);
      eof_ = true;
    }
    changed_.notify_all();
  }

  int fd_ = -1;
  int host_fd_ = -1;
  std::mutex write_mutex_;
  std::uint32_t seq_ = 0;
  std::mutex mutex_;
  std::condition_variable changed_;
  RigCaps caps_;
  std::map<Kind, Rule> policy_;
  std::vector<RigMessage> received_;
  bool eof_ = false;
  std::thread reader_;
};

RigSessionOptions Quick() {
  RigSessionOptions o;
  o.reply_timeout = milliseconds(300);
  return o;
}

// Runs `f` and returns the message of the exception of type E it throws ("" when none or
// another type: the CHECK after it then fails).
template <typename E>
std::string MessageOf(const std::function<void()>& f) {
  try {
    f();
  } catch (const E& e) {
    return e.what();
  } catch (const std::exception& e) {
    FAIL_CHECK("unexpected exception: ", e.what());
    return "";
  }
  FAIL_CHECK("no exception");
  return "";
}

// A wait that only an error should end; after the deadline it returns, so a session that
// fails to throw makes the test fail instead of hang.
void WaitAtMostTenSeconds(RigSession& s) {
  const auto end = std::chrono::steady_clock::now() + kEventDeadline;
  s.WaitUntil([&] { return std::chrono::steady_clock::now() > end; });
}

bool Contains(const std::string& text, const std::string& part) {
  return text.find(part) != std::string::npos;
}

std::vector<std::string> Comments(const std::string& text) {
  std::vector<std::string> out;
  std::size_t at = 0;
  while (at < text.size()) {
    std::size_t nl = text.find('\n', at);
    if (nl == std::string::npos) nl = text.size();
    if (text[at] == '#') out.push_back(text.substr(at + 1, nl - at - 1));
    at = nl + 1;
  }
  return out;
}

std::size_t DataRows(const std::string& text) {
  std::size_t rows = 0, at = 0;
  bool header = true;
  while (at < text.size()) {
    std::size_t nl = text.find('\n', at);
    if (nl == std::string::npos) nl = text.size();
    if (nl > at && text[at] != '#') {
      if (header) {
        header = false;
      } else {
        ++rows;
      }
    }
    at = nl + 1;
  }
  return rows;
}

bool AnyStartsWith(const std::vector<std::string>& lines, const std::string& prefix) {
  for (const std::string& l : lines) {
    std::string s =
        l.substr(l.find_first_not_of(' ') == std::string::npos ? 0 : l.find_first_not_of(' '));
    if (s.rfind(prefix, 0) == 0) return true;
  }
  return false;
}

TEST_CASE("rig session: connect narrows the host's limits to the rig's range") {
  ScriptedRig rig(BenchCaps());
  RigLimits host;
  host.actuator_lo = -20;
  host.actuator_hi = 60;
  RigSessionOptions o = Quick();
  RigSession s(rig.HostLink(), host, o);
  RigCaps caps = s.Connect();
  CHECK(caps.name == "bench-oven");
  CHECK(s.caps().watchdog_ms == 400);
  CHECK(s.limits().actuator_lo == 0);   // the rig's bottom
  CHECK(s.limits().actuator_hi == 60);  // the host's top
  CHECK(s.port() == "bench-link");
  // A quarter of the rig's watchdog time between heartbeats (rig_protocol.md, common practice).
  CHECK(s.heartbeat_interval() == milliseconds(100));
  REQUIRE(rig.WaitFor(Kind::kHello));
  CHECK(rig.Received().front().kind == Kind::kHello);
  CHECK(rig.Received().front().version == kRigProtocolVersion);
}

// The message of the error of type E that Connect() throws for a rig with `caps` (hello ignored
// when `silent`) and a host with actuator limits lo..hi.
template <typename E>
std::string ConnectError(RigCaps caps, double lo, double hi, bool silent = false) {
  ScriptedRig rig(BenchCaps());
  rig.SetCaps(std::move(caps));
  if (silent) rig.Ignore(Kind::kHello);
  RigLimits host;
  host.actuator_lo = lo;
  host.actuator_hi = hi;
  RigSession s(rig.HostLink(), host, Quick());
  return MessageOf<E>([&] { s.Connect(); });
}

TEST_CASE("rig session: connect refuses a rig it cannot drive safely, or no rig at all") {
  const double inf = RigLimits::kInf;
  CHECK(Contains(ConnectError<LinkError>(BenchCaps(), -inf, inf, /*silent=*/true),
                 "no caps line from bench-link within 0.3 s of hello"));
  RigCaps other = BenchCaps();
  other.version = 2;
  CHECK(Contains(ConnectError<LinkError>(other, -inf, inf), "protocol version 2"));
  // The rig's range is 0..100 with the safe value 0.
  CHECK(Contains(ConnectError<UsageError>(BenchCaps(), 200, 300), "do not overlap"));
  CHECK(Contains(ConnectError<UsageError>(BenchCaps(), 10, 50), "safe value"));
}

TEST_CASE("rig session: requests wait for ok; refusals, silence and limits are errors") {
  ScriptedRig rig(BenchCaps());
  RigLimits host;
  host.max_gain = 4;
  host.max_step = 30;
  RigSession s(rig.HostLink(), host, Quick());
  s.Connect();
  s.SetStreaming(true);
  s.SetActuator(25);
  CHECK(s.driving());
  s.CloseLoop("pi:0.5", 2.5, 40);
  s.SetReference(45);
  std::vector<RigMessage> got = rig.Received();
  std::vector<std::string> words = rig.Words();
  CHECK(words == std::vector<std::string>{"hello", "go", "u", "loop", "ref"});
  for (const RigMessage& m : got) {
    if (m.kind == Kind::kActuator) CHECK(m.value == 25);
    if (m.kind == Kind::kLoop) {
      CHECK(m.controller == "pi:0.5");
      CHECK(m.gain == 2.5);
      CHECK(m.value == 40);
    }
    if (m.kind == Kind::kRef) CHECK(m.value == 45);
  }

  // Values the limits forbid: UsageError, and nothing goes out (the next request's line
  // follows the last allowed one directly).
  CHECK(Contains(MessageOf<UsageError>([&] { s.SetActuator(120); }), "100"));
  CHECK(Contains(MessageOf<UsageError>([&] { s.SetActuator(70); }), "maximum step"));
  CHECK(Contains(MessageOf<UsageError>([&] { s.CloseLoop("p", 5, 40); }), "maximum gain"));
  s.SetReference(50);
  words = rig.Words();
  CHECK(words == std::vector<std::string>{"hello", "go", "u", "loop", "ref", "ref"});

  // The rig says no: JobFailed quoting its code and text.
  rig.Refuse(Kind::kRef, "mode", "ref needs closed-loop mode");
  std::string m = MessageOf<JobFailed>([&] { s.SetReference(55); });
  CHECK(Contains(m, "refused 'ref 55': mode (ref needs closed-loop mode)"));

  // The rig says nothing: LinkError after the reply timeout.
  rig.Ignore(Kind::kActuator);
  m = MessageOf<LinkError>([&] { s.SetActuator(30); });
  CHECK(Contains(m, "did not answer 'u 30' within 0.3 s"));
}

// A session on a scripted rig, connected, recording to a fresh file and streaming.
struct Bench {
  explicit Bench(const RigLimits& limits = {}, const RigSessionOptions& options = Quick())
      : session(rig.HostLink(), limits, options) {
    session.Connect();
    session.AttachRecording(&sink);
    session.SetStreaming(true);
  }
  // Detaches and closes the recording; its text.
  std::string Recording() {
    session.AttachRecording(nullptr);
    sink.Close();
    return test::ReadText(dir.File("rec.csv"));
  }
  test::TempDir dir;
  ScriptedRig rig{BenchCaps()};
  RecordingSink sink{dir.File("rec.csv"), {}};
  RigSession session;
};

TEST_CASE("rig session: samples reach the caller and the recording; waits count rig time") {
  RigSessionOptions o = Quick();
  o.silence_timeout = std::chrono::seconds(30);  // the pause below is no lost link
  Bench b({}, o);
  RigSession& s = b.session;
  b.rig.Sample(0, 0, 0, 1.5);
  s.WaitUntil([&] { return s.samples().size() == 1; });
  CHECK(s.samples()[0].output == 1.5);

  // 2 s of rig time from the last sample (t = 0): once the wait runs (its first tick), three
  // samples come at once and the one at 2 s only after a pause of 2.5 s of host time, so a wait
  // that counted host time would return before it.
  std::thread feeder;
  struct Join {
    std::thread& t;
    ~Join() {
      if (t.joinable()) t.join();
    }
  } join{feeder};
  s.WaitRigSeconds(2.0, [&] {
    if (feeder.joinable()) return;
    feeder = std::thread([&] {
      b.rig.Sample(500000, 0, 0, 1.6);
      b.rig.Sample(1000000, 0, 0, 1.7);
      b.rig.Sample(1500000, 0, 0, 1.8);
      std::this_thread::sleep_for(std::chrono::milliseconds(2500));
      b.rig.Sample(2000000, 0, 0, 1.9);
    });
  });
  REQUIRE(!s.samples().empty());
  CHECK(s.samples().back().t_us >= 2000000);
  RigSessionStats st = s.stats();
  CHECK(st.samples == 5);
  CHECK(st.first_t_s == 0.0);
  CHECK(st.last_t_s == 2.0);
  CHECK(st.lost == 0);
  CHECK(st.corrupted == 0);
  CHECK(DataRows(b.Recording()) == 5);
}

TEST_CASE("rig session: lost and corrupted lines are counted exactly and noted in the recording") {
  RigSessionOptions o = Quick();
  o.heartbeat = std::chrono::hours(1);  // no beat (and no ok for one) shifts the SEQ below
  Bench b({}, o);                       // rig lines so far: caps (SEQ 0), ok of go (SEQ 1)
  RigSession& s = b.session;
  b.rig.Sample(0, 0, 0, 1.0);          // SEQ 2
  b.rig.CorruptedSample(10000, 1.25);  // SEQ 3, fails its CRC
  b.rig.CorruptedSample(20000, 1.5);   // SEQ 4, fails its CRC
  b.rig.Skip(3);                       // SEQ 5, 6, 7 never arrive
  b.rig.Sample(80000, 0, 0, 2.0);      // SEQ 8: reveals the gap 3..7
  b.rig.Skip(1);                       // SEQ 9 never arrives
  b.rig.Sample(100000, 0, 0, 2.5);     // SEQ 10
  s.WaitUntil([&] { return s.samples().size() == 3; });
  RigSessionStats st = s.stats();
  CHECK(st.samples == 3);
  CHECK(st.corrupted == 2);
  CHECK(st.rejected == 2);
  CHECK(st.lost == 4);  // 3 + 1 numbers that no corrupted line explains
  std::string text = b.Recording();
  std::vector<std::string> notes = Comments(text);
  CHECK(DataRows(text) == 3);
  CHECK(AnyStartsWith(notes, "corrupted: 2 lines failed"));
  CHECK(AnyStartsWith(notes, "gap: sequence 3 to 7 missing (5 lines)"));
  CHECK(AnyStartsWith(notes, "gap: sequence 9 missing (1 line)"));
}

TEST_CASE("rig session: an output beyond a trip limit sends safe from the reader thread") {
  RigLimits host;
  host.output_lo = -5;
  host.output_hi = 40;
  Bench b(host);
  RigSession& s = b.session;
  s.SetActuator(50);
  b.rig.Sample(0, 0, 50, 39.5);
  b.rig.Sample(10000, 0, 50, 41.0);  // over the top
  // The caller does nothing with the session here: the safe line must come on its own.
  REQUIRE(b.rig.WaitFor(Kind::kSafe));
  std::string m = MessageOf<SafetyStop>([&] { WaitAtMostTenSeconds(s); });
  CHECK(Contains(m, "trip: output 41 is above the trip limit 40"));
  CHECK(Contains(m, "safe stop sent to bench-link"));
  // Later requests fail the same way: nothing more moves the actuator.
  CHECK(Contains(MessageOf<SafetyStop>([&] { s.SetActuator(10); }), "trip"));
  std::string text = b.Recording();
  CHECK(DataRows(text) == 2);  // the tripping sample is kept
  CHECK(AnyStartsWith(Comments(text), "trip: output 41 is above the trip limit 40"));
  CHECK(b.rig.Count(Kind::kSafe) == 1);
}

TEST_CASE("rig session: heartbeats keep a quiet link alive") {
  ScriptedRig rig(BenchCaps());
  RigSessionOptions o = Quick();
  o.heartbeat = milliseconds(20);
  RigSession s(rig.HostLink(), RigLimits{}, o);
  s.Connect();
  CHECK(s.heartbeat_interval() == milliseconds(20));
  CHECK(rig.WaitFor(Kind::kBeat, 3));

  // The interval is never below 10 ms, whatever the rig's watchdog.
  RigCaps tight = BenchCaps();
  tight.watchdog_ms = 20;
  ScriptedRig rig2(tight);
  RigSession s2(rig2.HostLink(), RigLimits{}, Quick());
  s2.Connect();
  CHECK(s2.heartbeat_interval() == milliseconds(10));
}

TEST_CASE("rig session: a stop request sends safe when driving and ends the wait") {
  std::atomic<int> stop{0};
  RigSessionOptions o = Quick();
  o.stop_request = &stop;
  SUBCASE("driving: safe first, then SafetyStop") {
    ScriptedRig rig(BenchCaps());
    RigSession s(rig.HostLink(), RigLimits{}, o);
    s.Connect();
    s.SetActuator(20);
    stop = SIGINT;
    REQUIRE(rig.WaitFor(Kind::kSafe));  // from the heartbeat thread, before anyone waits
    std::string m = MessageOf<SafetyStop>([&] { WaitAtMostTenSeconds(s); });
    CHECK(Contains(m, "stopped by signal " + std::to_string(SIGINT)));
    CHECK(Contains(m, "safe stop sent to bench-link"));
    CHECK(rig.Count(Kind::kSafe) == 1);
  }
  SUBCASE("only listening: no safe, still SafetyStop") {
    ScriptedRig rig(BenchCaps());
    {
      RigSession s(rig.HostLink(), RigLimits{}, o);
      s.Connect();
      s.SetStreaming(true);
      stop = SIGTERM;
      std::string m = MessageOf<SafetyStop>([&] { WaitAtMostTenSeconds(s); });
      CHECK(Contains(m, "stopped by signal " + std::to_string(SIGTERM)));
      CHECK(!Contains(m, "safe stop sent"));
    }
    REQUIRE(rig.WaitHostGone());
    CHECK(rig.Count(Kind::kSafe) == 0);
  }
}

TEST_CASE("rig session: the rig going safe on its own while driven is a safety stop") {
  Bench b;
  b.session.SetActuator(30);
  b.rig.Sample(0, 0, 30, 3.0);
  b.rig.State(RigMode::kSafe, "watchdog");
  std::string m = MessageOf<SafetyStop>([&] { WaitAtMostTenSeconds(b.session); });
  CHECK(Contains(m, "went to its safe state on its own (watchdog)"));
  CHECK(AnyStartsWith(Comments(b.Recording()),
                      "the rig went to its safe state on its own: watchdog"));
}

TEST_CASE("rig session: a link lost mid-run keeps every sample and says so") {
  Bench b;
  RigSession& s = b.session;
  for (int k = 0; k < 50; ++k) b.rig.Sample(10000ull * k, 0, 0, 0.1 * k);
  s.WaitUntil([&] { return s.samples().size() == 50; });
  b.rig.Hangup();
  std::string m = MessageOf<LinkError>([&] { WaitAtMostTenSeconds(s); });
  CHECK(Contains(m, "bench-link"));
  std::string text = b.Recording();
  CHECK(DataRows(text) == 50);
  CHECK(text.back() == '\n');
  CHECK(AnyStartsWith(Comments(text), "link lost: "));
}

TEST_CASE("rig session: a rig that stops streaming is a lost link after the silence timeout") {
  ScriptedRig rig(BenchCaps());
  RigSessionOptions o = Quick();
  o.silence_timeout = milliseconds(200);
  RigSession s(rig.HostLink(), RigLimits{}, o);
  s.Connect();
  s.SetStreaming(true);
  rig.Sample(0, 0, 0, 0.0);  // then nothing more
  std::string m = MessageOf<LinkError>([&] { WaitAtMostTenSeconds(s); });
  CHECK(Contains(m, "no sample from bench-link for 0.2 s while streaming"));
}

// The safe lines a rig received from a session that drove it (u 15), then did `last` and ended.
std::size_t SafeLinesAfter(const std::function<void(RigSession&)>& last) {
  ScriptedRig rig(BenchCaps());
  {
    RigSession s(rig.HostLink(), RigLimits{}, Quick());
    s.Connect();
    s.SetActuator(15);
    last(s);
  }
  REQUIRE(rig.WaitHostGone());
  CHECK(rig.Count(Kind::kActuator) == 1);
  return rig.Count(Kind::kSafe);
}

TEST_CASE("rig session: the destructor sends safe once when driving, unless released") {
  CHECK(SafeLinesAfter([](RigSession&) {}) == 1);
  // SafeStop is idempotent and the destructor adds none.
  CHECK(SafeLinesAfter([](RigSession& s) {
          s.SafeStop("done");
          CHECK(!s.driving());
          s.SafeStop("again");
        }) == 1);
  // Released: the rig's watchdog takes over.
  CHECK(SafeLinesAfter([](RigSession& s) { s.Release(); }) == 0);
}

TEST_CASE("rig session: a dry run prints every line with its SEQ and CRC and waits for nothing") {
  std::vector<std::string> lines;
  RigLimits host;
  host.actuator_lo = 0;
  host.actuator_hi = 80;
  host.max_gain = 3;
  RigSession s([&](const std::string& l) { lines.push_back(l); }, host, {});
  CHECK(s.dry_run());
  RigCaps caps = s.Connect();
  CHECK(caps.actuator_lo == 0);
  CHECK(caps.actuator_hi == 80);
  s.SetStreaming(true);
  s.SetActuator(20);
  s.CloseLoop("p", 2, 10);
  s.WaitUntil([] { return false; });  // returns at once
  s.WaitRigSeconds(1e6);
  s.SafeStop("end");
  CHECK_THROWS_AS(s.SetActuator(90), UsageError);  // the limits still apply
  CHECK_THROWS_AS(s.CloseLoop("p", 4, 10), UsageError);
  REQUIRE(lw::test::BitwiseCrc("123456789") == 0x29B1);
  std::vector<std::string> expected_bodies = {"hello 0 1", "go 1", "u 2 20", "loop 3 p 2 10",
                                              "safe 4"};
  REQUIRE(lines.size() == expected_bodies.size());
  for (std::size_t i = 0; i < lines.size(); ++i) {
    char crc[8];
    std::snprintf(crc, sizeof crc, "%04X", lw::test::BitwiseCrc(expected_bodies[i]));
    CHECK(lines[i] == expected_bodies[i] + " *" + crc);
  }
  CHECK(s.samples().empty());
}

}  // namespace
}  // namespace lw
