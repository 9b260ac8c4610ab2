// Puts a RigEmulator (io/rig_emulator.h) on a link a host can open, in real time or faster:
// a pseudo-terminal (the host opens its device path like a USB-serial port) or a TCP listening
// socket on loopback. One Boost.Asio io_context on the calling thread does everything: reading
// the host's bytes, writing the rig's lines, the control ticks and the watchdog on a timer.
//
// Pseudo-terminal: posix_openpt / grantpt / unlockpt / ptsname, the device in raw mode (no echo,
// no line editing, 8 bits). The server keeps the device's own end open as well, so a host may
// close and reopen it without the link going down (a USB-serial adapter stays plugged in too).
// TCP: listens on HOST:PORT (PORT 0 picks a free port), serves one host at a time; when it goes
// away the next connection is accepted and the rig carries on (its watchdog decides).
//
// Clock: rig time runs at `speed` times real time. Output is never thrown away while a host is
// there: when more than kBacklogBytes wait to be written (the host reads too slowly) the rig's
// clock waits for it, like a link with flow control, so --speed is an upper bound. Nothing is
// queued for a TCP host that is not connected. When the watchdog trips, lines still queued
// are dropped (their host is gone).
//
// Traffic log (log_path): one line per protocol line in either direction, flushed at exit,
//     RIG_US HOST_US in|out LINE
// RIG_US the rig's clock when the line arrived or was queued (sample lines: their own T_US is
// the exact instant), HOST_US real microseconds since Run() started.
#ifndef LOOPWRIGHT_IO_RIG_EMULATOR_SERVER_H_
#define LOOPWRIGHT_IO_RIG_EMULATOR_SERVER_H_

#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "io/rig_emulator.h"

namespace lw {

struct RigEmulatorServerOptions {
  enum class Transport { kPty, kTcp };
  Transport transport = Transport::kPty;
  std::string host = "127.0.0.1";  // kTcp: the address to listen on
  std::uint16_t port = 0;          // kTcp: 0 picks a free port
  double speed = 1.0;              // rig time per real time, 1e-3 .. 1e6
  std::string log_path;            // traffic log; empty for none
  std::vector<int> stop_signals;   // end Run() cleanly (SIGINT, SIGTERM, ...); caught from Open()

  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

class RigEmulatorServer {
 public:
  static constexpr std::size_t kBacklogBytes = 1 << 20;

  enum class Ending {
    kSignal,      // one of stop_signals arrived
    kDisconnect,  // the disconnect-after fault dropped the link
  };

  // rig must outlive the server.
  RigEmulatorServer(RigEmulator& rig, RigEmulatorServerOptions options);
  ~RigEmulatorServer();
  RigEmulatorServer(const RigEmulatorServer&) = delete;
  RigEmulatorServer& operator=(const RigEmulatorServer&) = delete;

  // Opens the pseudo-terminal or the listening socket and returns where a host connects: the
  // device path ("/dev/pts/7") or "tcp:127.0.0.1:40123". Throws LinkError when that fails and
  // UsageError for a bad log path.
  std::string Open();

  // Runs until a stop signal or the disconnect fault; calls on_note (on this thread) for every
  // note of the rig and of the link (host connected, gone). Open() first.
  Ending Run(const std::function<void(const RigEmulatorNote&)>& on_note);

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_EMULATOR_SERVER_H_
