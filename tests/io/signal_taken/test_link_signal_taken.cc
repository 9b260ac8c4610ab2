// The pty link when its wake signal (SIGRTMIN + 7, io/rig_link.cc) already belongs to the
// program: the link must leave that handler alone and fall back to its epoll_wait reader, which
// reads every line and stops on Close() at any moment. A process of its own, because the link
// decides once per process, at its first pty link.
#include <doctest/doctest.h>
#include <fcntl.h>
#include <signal.h>
#include <stdlib.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <string>
#include <thread>

#include "io/rig_link.h"
#include "io/rig_protocol.h"
#include "lti/error.h"
#include "tests/io/pty_master.h"

namespace lw {
namespace {

using std::chrono::milliseconds;
using test::OpenPtyMaster;

std::atomic<int> our_signals{0};
extern "C" void OurHandler(int) { ++our_signals; }

TEST_CASE(
    "pty link with its wake signal taken: the handler stays the program's, reads and "
    "Close() still work") {
  struct sigaction ours {};
  ours.sa_handler = OurHandler;
  sigemptyset(&ours.sa_mask);
  REQUIRE(sigaction(SIGRTMIN + 7, &ours, nullptr) == 0);

  const std::string line = EncodeRigLine(RigMessage::Sample(0, {1000, 60.0, 42.125, 21.5}));
  for (int i = 0; i < 120; ++i) {
    std::string slave;
    const int master = OpenPtyMaster(slave);
    std::unique_ptr<RigLink> link = OpenRigLink(ParseRigPort(slave), RigLinkOptions{});
    link->StartQueue();
    const int lines = 1 + i % 4;
    for (int k = 0; k < lines; ++k) {
      REQUIRE(write(master, line.data(), line.size()) == static_cast<ssize_t>(line.size()));
    }
    // Every line arrives, parsed (the fallback reader is a working reader, not just a stop).
    for (int k = 0; k < lines; ++k) {
      std::optional<RigLineEvent> event = link->NextEvent(milliseconds(2000));
      REQUIRE(event.has_value());
      CHECK(event->kind == RigLineEvent::Kind::kMessage);
      CHECK(event->message.kind == RigMessageKind::kSample);
    }
    if (i % 3 == 1) std::this_thread::sleep_for(std::chrono::microseconds(40 * (i % 9)));
    // Close() while the reader waits: it must return (a hang fails the test by its timeout).
    link->Close();
    CHECK(link->closed());
    std::string end;
    try {
      link->NextEvent(milliseconds(0));
    } catch (const LinkError& e) {
      end = e.what();
    }
    CHECK(end == "the link to " + slave + " was closed");
    link.reset();
    close(master);
  }
  // The link never raised the program's signal and never replaced its handler.
  CHECK(our_signals == 0);
  struct sigaction now {};
  REQUIRE(sigaction(SIGRTMIN + 7, nullptr, &now) == 0);
  const bool still_ours = now.sa_handler == OurHandler;
  CHECK(still_ours);
}

}  // namespace
}  // namespace lw
