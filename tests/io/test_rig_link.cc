// Rig links (io/rig_link.h) over a socketpair, a pseudo-terminal (the serial transport on the
// slave path) and loopback TCP: lines both ways in order, SEQ numbering, handler and queue
// modes, the messages and exit statuses of a closed or failed link, --port parsing.
#include "io/rig_link.h"

#include <doctest/doctest.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <stdlib.h>
#include <sys/socket.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "lti/error.h"
#include "tests/io/pty_master.h"

namespace lw {
namespace {

using std::chrono::milliseconds;
using test::OpenPtyMaster;

// The next event of a queue-mode link that must arrive within two seconds.
RigLineEvent Next(RigLink& link) {
  std::optional<RigLineEvent> event = link.NextEvent(milliseconds(2000));
  REQUIRE(event.has_value());
  return *event;
}

RigMessage NextMessage(RigLink& link) {
  RigLineEvent event = Next(link);
  INFO("reason: ", event.reason, " raw: ", event.raw);
  REQUIRE(event.kind == RigLineEvent::Kind::kMessage);
  return event.message;
}

// Both ends of a connected pair of links, one playing the host and one the rig.
struct LinkPair {
  std::unique_ptr<RigLink> host;
  std::unique_ptr<RigLink> rig;
};

LinkPair SocketPair() {
  int fds[2];
  REQUIRE(socketpair(AF_UNIX, SOCK_STREAM, 0, fds) == 0);
  return {AdoptRigLinkDescriptor(fds[0], "host end"), AdoptRigLinkDescriptor(fds[1], "rig end")};
}

// Talks both ways: hello -> caps, u -> ok, 200 samples back.
void Converse(LinkPair& pair) {
  pair.host->StartQueue();
  pair.rig->StartQueue();
  CHECK(pair.host->Send(RigMessage::Hello(999)) == 0);  // the link sets SEQ
  RigMessage hello = NextMessage(*pair.rig);
  CHECK(hello.kind == RigMessageKind::kHello);
  CHECK(hello.seq == 0);
  RigCaps caps;
  caps.period_us = 1000;
  caps.actuator_hi = 100;
  caps.watchdog_ms = 250;
  caps.name = "bench-rig";
  CHECK(pair.rig->Send(RigMessage::Caps(0, caps)) == 0);
  RigMessage back = NextMessage(*pair.host);
  CHECK(back.kind == RigMessageKind::kCaps);
  CHECK(back.caps.name == "bench-rig");
  CHECK(pair.host->Send(RigMessage::Actuator(0, 12.5)) == 1);
  RigMessage u = NextMessage(*pair.rig);
  CHECK(u.seq == 1);
  CHECK(u.value == 12.5);
  for (std::uint32_t i = 0; i < 200; ++i) {
    CHECK(pair.rig->Send(RigMessage::Sample(0, {i * 1000ull, 0, 12.5, 0.01 * i})) == i + 1);
  }
  for (std::uint32_t i = 0; i < 200; ++i) {
    RigMessage s = NextMessage(*pair.host);
    CHECK(s.seq == i + 1);
    CHECK(s.sample.t_us == i * 1000ull);
  }
  RigStreamCounts counts = pair.host->counts();
  CHECK(counts.valid == 201);
  CHECK(counts.rejected == 0);
  CHECK(counts.missing == 0);
}

TEST_CASE("rig link over a socketpair: both directions, SEQ set by the link") {
  LinkPair pair = SocketPair();
  Converse(pair);
}

TEST_CASE("rig link over a pseudo-terminal: the serial transport opens the slave path raw") {
  std::string slave;
  const int master = OpenPtyMaster(slave);
  RigLinkOptions options;
  options.baud = 115200;
  LinkPair pair;
  pair.host = OpenRigLink(ParseRigPort(slave), options);
  pair.rig = AdoptRigLinkDescriptor(master, "pty master");
  CHECK(pair.host->description() == slave);
  // Raw mode: no echo of the host's lines back to it and no "\n" -> "\r\n" rewriting; any
  // of those would show up as rejected lines or extra events here.
  Converse(pair);
  CHECK(!pair.host->NextEvent(milliseconds(50)).has_value());
  // The master closing hangs the slave up (read gives EIO): said as the rig closing the link.
  pair.rig.reset();
  CHECK_THROWS_WITH_AS(pair.host->NextEvent(milliseconds(2000)),
                       ("the rig on " + slave + " closed the link").c_str(), LinkError);
}

TEST_CASE("pty link: Close() ends a reader blocked in read(2), whenever it comes") {
  // The serial transport reads the slave with a blocking read(2) that Close() has to interrupt;
  // a stop request lost in a race would hang here. Close() comes at once, before the reader can
  // have reached read(2), or after a pause, or while lines arrive, in both modes.
  const std::string line = EncodeRigLine(RigMessage::Sample(0, {1000, 60.0, 42.125, 21.5}));
  for (int i = 0; i < 240; ++i) {
    std::string slave;
    const int master = OpenPtyMaster(slave);
    std::unique_ptr<RigLink> link = OpenRigLink(ParseRigPort(slave), RigLinkOptions{});
    std::atomic<int> events{0};
    std::atomic<int> closes{0};
    std::string close_message = "(not closed)";
    if (i % 2 == 0) {
      link->StartQueue();
    } else {
      link->Start([&](const RigLineEvent&) { ++events; },
                  [&](const std::string& message) {
                    close_message = message;
                    ++closes;
                  });
    }
    if (i % 3 == 1) std::this_thread::sleep_for(std::chrono::microseconds(50 * (i % 11)));
    if (i % 3 == 2) {
      for (int k = 0; k < 1 + i % 5; ++k) {
        REQUIRE(write(master, line.data(), line.size()) == static_cast<ssize_t>(line.size()));
      }
      std::this_thread::sleep_for(std::chrono::microseconds(20 * (i % 7)));
    }
    link->Close();
    CHECK(link->closed());
    if (i % 2 == 0) {
      // What was read before Close() comes first (at most the lines written), then the end.
      std::string end;
      for (int k = 0; k <= 5 && end.empty(); ++k) {
        try {
          link->NextEvent(milliseconds(0));
        } catch (const LinkError& e) {
          end = e.what();
        }
      }
      CHECK(end == "the link to " + slave + " was closed");
    } else {
      CHECK(closes == 1);
      CHECK(close_message.empty());
    }
    link.reset();
    close(master);
  }
}

TEST_CASE("pty link: a handler that calls Close() stops its own blocking reader") {
  std::string slave;
  const int master = OpenPtyMaster(slave);
  std::unique_ptr<RigLink> link = OpenRigLink(ParseRigPort(slave), RigLinkOptions{});
  std::mutex mutex;
  std::condition_variable done;
  int events = 0;
  std::string close_message = "(not closed)";
  link->Start(
      [&](const RigLineEvent&) {
        {
          std::lock_guard<std::mutex> lock(mutex);
          ++events;
        }
        link->Close();
      },
      [&](const std::string& message) {
        std::lock_guard<std::mutex> lock(mutex);
        close_message = message;
        done.notify_all();
      });
  const std::string lines = EncodeRigLine(RigMessage::Bare(RigMessageKind::kBeat, 0)) +
                            EncodeRigLine(RigMessage::Bare(RigMessageKind::kBeat, 1));
  REQUIRE(write(master, lines.data(), lines.size()) == static_cast<ssize_t>(lines.size()));
  {
    std::unique_lock<std::mutex> lock(mutex);
    REQUIRE(done.wait_for(lock, std::chrono::seconds(5),
                          [&] { return close_message != "(not closed)"; }));
    CHECK(close_message.empty());
    CHECK(events >= 1);
  }
  CHECK(link->closed());
  link.reset();  // joins the reader
  close(master);
}

TEST_CASE("rig link over loopback TCP") {
  int listener = socket(AF_INET, SOCK_STREAM, 0);
  REQUIRE(listener >= 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  address.sin_port = 0;
  REQUIRE(bind(listener, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
  REQUIRE(listen(listener, 1) == 0);
  socklen_t size = sizeof address;
  REQUIRE(getsockname(listener, reinterpret_cast<sockaddr*>(&address), &size) == 0);
  const std::string port = "tcp:127.0.0.1:" + std::to_string(ntohs(address.sin_port));
  LinkPair pair;
  pair.host = OpenRigLink(ParseRigPort(port), RigLinkOptions{});
  int accepted = accept(listener, nullptr, nullptr);
  REQUIRE(accepted >= 0);
  close(listener);
  const int raw = dup(accepted);  // for writing half a line, which WriteLine refuses
  pair.rig = AdoptRigLinkDescriptor(accepted, "accepted");
  CHECK(pair.host->description() == port);
  Converse(pair);
  SUBCASE("the host closing first") { close(raw); }

  SUBCASE("the rig hanging up mid-line: the cut line is rejected, then the link says why") {
    pair.rig->WriteLine("s 1 2 3\n");  // no CRC: rejected
    pair.rig.reset();
    const std::string half = "s 9 100 1 2 ";
    REQUIRE(write(raw, half.data(), half.size()) == static_cast<ssize_t>(half.size()));
    close(raw);  // closes the socket half way through the second line
    RigLineEvent first = Next(*pair.host);
    CHECK(first.kind == RigLineEvent::Kind::kRejected);
    CHECK(first.status == RigParseStatus::kNoCrc);
    RigLineEvent cut = Next(*pair.host);
    CHECK(cut.kind == RigLineEvent::Kind::kRejected);
    CHECK(cut.raw == "s 9 100 1 2 ");
    try {
      pair.host->NextEvent(milliseconds(2000));
      FAIL("expected LinkError");
    } catch (const LinkError& e) {
      CHECK(std::string(e.what()) == "the rig on " + port + " closed the link");
      CHECK(e.status() == ExitStatus::kLinkFailure);
    }
    CHECK(pair.host->closed());
    CHECK(pair.host->counts().rejected == 2);
    CHECK_THROWS_AS(pair.host->Send(RigMessage::Bare(RigMessageKind::kBeat, 0)), LinkError);
  }
}

TEST_CASE("handler mode: events in stream order on the link's thread, replies from a handler") {
  // Declared before the links, so they outlive the handlers that use them.
  std::mutex mutex;
  std::condition_variable done;
  std::vector<std::uint32_t> seen;
  std::string close_message = "(not closed)";
  LinkPair pair = SocketPair();
  // The rig acknowledges every host line from inside its handler.
  pair.rig->Start(
      [&](const RigLineEvent& event) {
        if (event.kind == RigLineEvent::Kind::kMessage) {
          pair.rig->Send(RigMessage::Ok(0, event.message.seq));
        }
      },
      [](const std::string&) {});
  pair.host->Start(
      [&](const RigLineEvent& event) {
        std::lock_guard<std::mutex> lock(mutex);
        if (event.kind == RigLineEvent::Kind::kMessage) seen.push_back(event.message.acked);
        done.notify_all();
      },
      [&](const std::string& message) {
        std::lock_guard<std::mutex> lock(mutex);
        close_message = message;
        done.notify_all();
      });
  for (int i = 0; i < 500; ++i) pair.host->Send(RigMessage::Bare(RigMessageKind::kBeat, 0));
  {
    std::unique_lock<std::mutex> lock(mutex);
    REQUIRE(done.wait_for(lock, std::chrono::seconds(5), [&] { return seen.size() == 500; }));
    for (std::uint32_t i = 0; i < 500; ++i) CHECK(seen[i] == i);
  }
  pair.rig->Close();
  std::unique_lock<std::mutex> lock(mutex);
  REQUIRE(done.wait_for(lock, std::chrono::seconds(5),
                        [&] { return close_message != "(not closed)"; }));
  CHECK(close_message == "the rig on host end closed the link");
}

TEST_CASE("Close() ends a queue with its own message; writes after it fail") {
  LinkPair pair = SocketPair();
  pair.host->StartQueue();
  pair.host->Close();
  pair.host->Close();  // idempotent
  CHECK(pair.host->closed());
  CHECK_THROWS_WITH_AS(pair.host->NextEvent(milliseconds(10)), "the link to host end was closed",
                       LinkError);
  CHECK_THROWS_AS(pair.host->WriteLine("beat 0 *0000\n"), LinkError);
  CHECK_THROWS_AS(pair.host->WriteLine("no newline"), UsageError);
}

TEST_CASE("a link that cannot open says so with exit status 4") {
  try {
    OpenRigLink(ParseRigPort("/nonexistent/ttyUSB9"), RigLinkOptions{});
    FAIL("expected LinkError");
  } catch (const LinkError& e) {
    CHECK(std::string(e.what()).rfind("cannot open /nonexistent/ttyUSB9: ", 0) == 0);
  }
  // A loopback port nobody listens on: bind one, learn its number, close it, then connect.
  int s = socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  REQUIRE(bind(s, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
  socklen_t size = sizeof address;
  REQUIRE(getsockname(s, reinterpret_cast<sockaddr*>(&address), &size) == 0);
  close(s);
  const std::string port = "tcp:127.0.0.1:" + std::to_string(ntohs(address.sin_port));
  CHECK_THROWS_AS(OpenRigLink(ParseRigPort(port), RigLinkOptions{}), LinkError);
  CHECK_THROWS_AS(AdoptRigLinkDescriptor(-1, "nothing"), LinkError);
}

TEST_CASE("--port text: a device path or tcp:HOST:PORT") {
  RigPort serial = ParseRigPort("/dev/ttyUSB0");
  CHECK(serial.kind == RigPort::Kind::kSerial);
  CHECK(serial.device == "/dev/ttyUSB0");
  CHECK(serial.ToString() == "/dev/ttyUSB0");
  RigPort tcp = ParseRigPort("tcp:rig-bridge.local:5000");
  CHECK(tcp.kind == RigPort::Kind::kTcp);
  CHECK(tcp.host == "rig-bridge.local");
  CHECK(tcp.port == 5000);
  CHECK(tcp.ToString() == "tcp:rig-bridge.local:5000");
  RigPort v6 = ParseRigPort("tcp:[::1]:65535");
  CHECK(v6.host == "::1");
  CHECK(v6.port == 65535);
  CHECK(v6.ToString() == "tcp:[::1]:65535");
  for (const char* bad : {"", "tcp:", "tcp:host", "tcp::5000", "tcp:host:", "tcp:host:0",
                          "tcp:host:65536", "tcp:host:50a", "tcp:a:b:5000", "tcp:[::1]5000",
                          "tcp:[::1", "/dev/tty USB0", "tcp:host:123456"}) {
    INFO("text: '", bad, "'");
    CHECK_THROWS_AS(ParseRigPort(bad), UsageError);
  }
  CHECK_THROWS_WITH(ParseRigPort("tcp:localhost"),
                    "--port 'tcp:localhost': expected tcp:HOST:PORT with PORT from 1 to 65535");
}

TEST_CASE("link options name the field and the rule") {
  RigLinkOptions options;
  CHECK_NOTHROW(options.Validate());
  options.baud = 115201;
  CHECK_THROWS_WITH_AS(options.Validate(), doctest::Contains("baud 115201 is not a standard rate"),
                       UsageError);
  options.baud = 9600;
  options.connect_timeout_s = 0;
  CHECK_THROWS_WITH_AS(options.Validate(), doctest::Contains("connect_timeout_s 0"), UsageError);
  CHECK(ParseSerialFlowControl("hardware") == SerialFlowControl::kHardware);
  CHECK(ParseSerialFlowControl("none") == SerialFlowControl::kNone);
  CHECK_THROWS_AS(ParseSerialFlowControl("xon"), UsageError);
}

}  // namespace
}  // namespace lw
