#include "io/rig_emulator_server.h"

// <utility> before Asio: Boost 1.74's awaitable.hpp uses std::exchange without including it.
#include <utility>

#include <fcntl.h>
#include <stdlib.h>
#include <sys/ioctl.h>
#include <termios.h>
#include <unistd.h>

#include <array>
#include <cerrno>
#include <chrono>
#include <cmath>
#include <cstring>
#include <fstream>
#include <optional>

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/posix/stream_descriptor.hpp>
#include <boost/asio/signal_set.hpp>
#include <boost/asio/steady_timer.hpp>
#include <boost/asio/write.hpp>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {

namespace asio = boost::asio;
using Clock = std::chrono::steady_clock;

void RigEmulatorServerOptions::Validate() const {
  if (!(std::isfinite(speed) && speed >= 1e-3 && speed <= 1e6)) {
    throw UsageError("speed " + SignificantText(speed, 6) +
                     ": expected a factor from 0.001 to 1000000");
  }
  if (transport == Transport::kTcp && host.empty()) {
    throw UsageError("host '': expected an address to listen on, e.g. 127.0.0.1");
  }
}

namespace {

// Most ticks run per timer callback, so host lines are read between bursts at high speed.
constexpr std::int64_t kTicksPerCall = 2000;

std::string Errno(const std::string& what) { return what + ": " + std::strerror(errno); }

}  // namespace

struct RigEmulatorServer::Impl {
  Impl(RigEmulator& r, RigEmulatorServerOptions o)
      : rig(r),
        options(std::move(o)),
        timer(ctx),
        close_timer(ctx),
        signals(ctx),
        pty(ctx),
        acceptor(ctx) {}

  RigEmulator& rig;
  RigEmulatorServerOptions options;
  asio::io_context ctx;
  asio::steady_timer timer;
  asio::steady_timer close_timer;
  asio::signal_set signals;
  // Pseudo-terminal.
  asio::posix::stream_descriptor pty;
  int pty_device_fd = -1;  // our own open of the device end
  static constexpr int kQuietPolls = 10;
  int quiet_polls = 0;  // Drain: consecutive polls that found the device end's queue empty
  // TCP.
  asio::ip::tcp::acceptor acceptor;
  std::optional<asio::ip::tcp::socket> client;

  std::function<void(const RigEmulatorNote&)> on_note;
  std::array<char, 1 << 16> read_buffer{};
  std::string pending, writing;
  bool write_in_flight = false;
  bool closing = false;
  Clock::time_point close_deadline;
  Ending ending = Ending::kSignal;
  std::uint64_t trips_seen = 0;

  Clock::time_point start;
  // Rig clock: rig_base at wall_base, running at speed since.
  std::uint64_t rig_base = 0;
  Clock::time_point wall_base;

  std::ofstream log;
  std::string log_partial_in;

  bool tcp() const { return options.transport == RigEmulatorServerOptions::Transport::kTcp; }
  bool connected() const { return tcp() ? client.has_value() : pty.is_open(); }

  std::int64_t HostUs(Clock::time_point now) const {
    return std::chrono::duration_cast<std::chrono::microseconds>(now - start).count();
  }
  std::uint64_t RigUs(Clock::time_point now) const {
    double dt = std::chrono::duration<double, std::micro>(now - wall_base).count();
    return rig_base + static_cast<std::uint64_t>(std::max(0.0, dt) * options.speed);
  }
  Clock::time_point WallOfRig(std::uint64_t rig_us) const {
    double dt = rig_us > rig_base ? static_cast<double>(rig_us - rig_base) / options.speed : 0.0;
    return wall_base + std::chrono::microseconds(static_cast<std::int64_t>(std::ceil(dt)));
  }

  void Note(const std::string& text) {
    if (on_note) on_note({RigUs(Clock::now()), text});
  }

  void LogLines(std::string_view bytes, const char* dir, std::string* partial) {
    if (!log.is_open()) return;
    const auto now = Clock::now();
    const std::string prefix =
        std::to_string(RigUs(now)) + " " + std::to_string(HostUs(now)) + " " + dir + " ";
    std::size_t start_at = 0;
    while (true) {
      std::size_t nl = bytes.find('\n', start_at);
      if (nl == std::string_view::npos) break;
      std::string_view line = bytes.substr(start_at, nl - start_at);
      if (partial && !partial->empty()) {
        log << prefix << *partial << line << '\n';
        partial->clear();
      } else {
        log << prefix << line << '\n';
      }
      start_at = nl + 1;
    }
    if (partial) partial->append(bytes.substr(start_at));
  }

  // Collects the rig's output and notes; starts a write when possible.
  void Pump() {
    if (rig.counts().watchdog_trips != trips_seen) {
      trips_seen = rig.counts().watchdog_trips;
      pending.clear();
    }
    std::string out;
    rig.TakeOutput(out);
    for (const auto& n : rig.TakeNotes()) {
      if (on_note) on_note(n);
    }
    if (!out.empty()) {
      LogLines(out, "out", nullptr);
      if (connected()) pending += out;
    }
    StartWrite();
  }

  void StartWrite() {
    if (write_in_flight || pending.empty() || !connected()) return;
    writing.swap(pending);
    pending.clear();
    write_in_flight = true;
    auto done = [this](const boost::system::error_code& ec, std::size_t) {
      write_in_flight = false;
      writing.clear();
      if (ec) {
        if (ec == asio::error::operation_aborted) return;
        LinkLost("writing failed: " + ec.message());
        return;
      }
      if (closing && pending.empty()) {
        Drain();
        return;
      }
      StartWrite();
    };
    if (tcp()) {
      asio::async_write(*client, asio::buffer(writing), done);
    } else {
      asio::async_write(pty, asio::buffer(writing), done);
    }
  }

  // Reading is readiness-based: every byte the system holds is read here without blocking,
  // then a wait for more is armed. OnTimer reads the same way before the watchdog judges, so a
  // host line that reached the system while this process was not running (a loaded machine)
  // counts as received in time. Only ReadAvailable takes bytes, so they stay in order.
  void StartRead() {
    if (!ReadAvailable()) return;
    auto ready = [this](const boost::system::error_code& ec) {
      if (ec == asio::error::operation_aborted) return;
      if (ec) {
        EndOfInput(ec);
        return;
      }
      StartRead();
    };
    if (tcp()) {
      client->async_wait(asio::ip::tcp::socket::wait_read, ready);
    } else {
      pty.async_wait(asio::posix::stream_descriptor::wait_read, ready);
    }
  }

  // Hands the rig every byte the system holds now; false when reading has ended (end of
  // stream or an error, handled by EndOfInput) or there is nothing to read from.
  bool ReadAvailable() {
    for (;;) {
      if (!connected()) return false;
      boost::system::error_code ec;
      const std::size_t n = tcp() ? client->read_some(asio::buffer(read_buffer), ec)
                                  : pty.read_some(asio::buffer(read_buffer), ec);
      if (ec == asio::error::would_block || ec == asio::error::try_again) return true;
      if (ec) {
        EndOfInput(ec);
        return false;
      }
      // While closing, only the host's end of stream is awaited (TCP, after our FIN).
      if (closing) continue;
      std::string_view bytes(read_buffer.data(), n);
      LogLines(bytes, "in", &log_partial_in);
      rig.HostBytes(bytes, HostUs(Clock::now()));
      Pump();
    }
  }

  void EndOfInput(const boost::system::error_code& ec) {
    if (closing) {
      // The host closed its end after our FIN: it has read everything we sent.
      Shutdown();
      return;
    }
    LinkLost(ec == asio::error::eof ? "the host closed the connection"
                                    : "reading failed: " + ec.message());
  }

  void LinkLost(const std::string& why) {
    if (closing) return;
    if (tcp()) {
      Note("host gone (" + why + "); waiting for the next connection");
      boost::system::error_code ignored;
      if (client) client->close(ignored);
      client.reset();
      pending.clear();
      StartAccept();
      return;
    }
    // The server holds the device end open, so this is not a host closing it.
    throw LinkError("the pseudo-terminal failed: " + why);
  }

  void StartAccept() {
    acceptor.async_accept(
        [this](const boost::system::error_code& ec, asio::ip::tcp::socket socket) {
          if (ec) {
            if (ec == asio::error::operation_aborted) return;
            throw LinkError("accepting a TCP connection failed: " + ec.message());
          }
          boost::system::error_code ignored;
          socket.set_option(asio::ip::tcp::no_delay(true), ignored);
          socket.non_blocking(true, ignored);
          client.emplace(std::move(socket));
          Note("host connected from " + client->remote_endpoint(ignored).address().to_string());
          StartRead();
        });
  }

  void OnTimer() {
    if (closing) return;
    if (rig.watchdog_deadline_us()) ReadAvailable();  // what arrived counts before the watchdog
    if (closing) return;
    const auto now = Clock::now();
    const std::int64_t host_us = HostUs(now);
    const bool backlog = pending.size() + writing.size() > kBacklogBytes;
    if (backlog) {
      // Flow control: the rig's clock waits for the host; the watchdog still runs.
      rig.Advance(0, host_us, 0);
      rig_base = rig.next_tick_us();
      wall_base = now;
    } else {
      const std::uint64_t target = RigUs(now);
      const std::int64_t ran = rig.Advance(target, host_us, kTicksPerCall);
      if (ran == kTicksPerCall && rig.next_tick_us() <= target) {
        // Behind: run as fast as we can from here on instead of catching up in a burst.
        rig_base = rig.next_tick_us();
        wall_base = now;
      }
    }
    Pump();
    if (rig.disconnected()) {
      BeginClose(Ending::kDisconnect);
      return;
    }
    Schedule(backlog);
  }

  void Schedule(bool backlog) {
    Clock::time_point when = WallOfRig(rig.next_tick_us());
    if (backlog) when = Clock::now() + std::chrono::milliseconds(1);
    if (auto deadline = rig.watchdog_deadline_us()) {
      when = std::min(when, start + std::chrono::microseconds(*deadline + 1));
    }
    timer.expires_at(when);
    timer.async_wait([this](const boost::system::error_code& ec) {
      if (!ec) OnTimer();
    });
  }

  // Lets queued lines go out and, on a pseudo-terminal, be read by the host (closing the
  // device end discards what the host has not read yet), for at most 2 s; then closes.
  void BeginClose(Ending why) {
    if (closing) return;
    closing = true;
    ending = why;
    close_deadline = Clock::now() + std::chrono::seconds(2);
    timer.cancel();
    close_timer.expires_at(close_deadline);
    close_timer.async_wait([this](const boost::system::error_code& ec) {
      if (!ec) Shutdown();
    });
    if (!write_in_flight && pending.empty()) {
      Drain();
    } else {
      StartWrite();
    }
  }

  void Drain() {
    if (write_in_flight) return;
    int unread = 0;
    if (!tcp() && pty_device_fd >= 0 && ::ioctl(pty_device_fd, TIOCINQ, &unread) != 0) unread = 0;
    if (tcp() && client) {
      boost::system::error_code ignored;
      client->shutdown(asio::ip::tcp::socket::shutdown_send, ignored);
    }
    // A pseudo-terminal's queue can read empty while the last lines written are still on their
    // way into it (the kernel moves them in a deferred step): only an empty queue seen on
    // kQuietPolls consecutive polls, 5 ms apart, means the host has read everything.
    quiet_polls = (unread == 0 && !tcp()) ? quiet_polls + 1 : 0;
    if (quiet_polls >= kQuietPolls || !connected() || Clock::now() >= close_deadline) {
      Shutdown();
      return;
    }
    // TCP: the host reads what is in flight, then sees the end of the stream and closes its
    // end, which the read wait (StartRead) sees. Closing before that, with host lines still
    // unread here, would send a reset that can make the host's system discard what it has
    // received but not yet read; close_timer ends the wait after close_deadline.
    if (tcp()) return;
    timer.expires_after(std::chrono::milliseconds(5));
    timer.async_wait([this](const boost::system::error_code& ec) {
      if (!ec) Drain();
    });
  }

  void Shutdown() {
    boost::system::error_code ignored;
    timer.cancel();
    close_timer.cancel();
    signals.cancel(ignored);
    acceptor.close(ignored);
    if (client) client->close(ignored);
    client.reset();
    if (pty.is_open()) pty.close(ignored);
    if (pty_device_fd >= 0) ::close(pty_device_fd);
    pty_device_fd = -1;
    ctx.stop();
  }

  std::string OpenPty() {
    int master = posix_openpt(O_RDWR | O_NOCTTY);
    if (master < 0) throw LinkError(Errno("cannot create a pseudo-terminal"));
    if (grantpt(master) != 0 || unlockpt(master) != 0) {
      std::string message = Errno("cannot unlock the pseudo-terminal");
      ::close(master);
      throw LinkError(message);
    }
    char name[256];
    if (ptsname_r(master, name, sizeof name) != 0) {
      std::string message = Errno("cannot name the pseudo-terminal");
      ::close(master);
      throw LinkError(message);
    }
    int device = ::open(name, O_RDWR | O_NOCTTY);
    if (device < 0) {
      std::string message = Errno(std::string("cannot open ") + name);
      ::close(master);
      throw LinkError(message);
    }
    termios tio{};
    if (tcgetattr(device, &tio) == 0) {
      cfmakeraw(&tio);
      tio.c_cflag |= CLOCAL | CREAD;
      tcsetattr(device, TCSANOW, &tio);
    }
    pty_device_fd = device;
    pty.assign(master);
    pty.non_blocking(true);
    return name;
  }

  std::string OpenTcp() {
    boost::system::error_code ec;
    asio::ip::address address = asio::ip::make_address(options.host, ec);
    if (ec) {
      throw UsageError("--listen address '" + options.host + "' is not an IP address");
    }
    asio::ip::tcp::endpoint endpoint(address, options.port);
    acceptor.open(endpoint.protocol(), ec);
    if (!ec) acceptor.set_option(asio::ip::tcp::acceptor::reuse_address(true), ec);
    if (!ec) acceptor.bind(endpoint, ec);
    if (!ec) acceptor.listen(4, ec);
    if (ec) {
      throw LinkError("cannot listen on " + options.host + ":" + std::to_string(options.port) +
                      ": " + ec.message());
    }
    const auto local = acceptor.local_endpoint();
    std::string host = local.address().to_string();
    if (local.address().is_v6()) host = "[" + host + "]";
    return "tcp:" + host + ":" + std::to_string(local.port());
  }
};

RigEmulatorServer::RigEmulatorServer(RigEmulator& rig, RigEmulatorServerOptions options) {
  options.Validate();
  impl_ = std::make_unique<Impl>(rig, std::move(options));
}

RigEmulatorServer::~RigEmulatorServer() {
  if (impl_ && impl_->pty_device_fd >= 0) ::close(impl_->pty_device_fd);
}

std::string RigEmulatorServer::Open() {
  Impl& s = *impl_;
  // Caught from here on (a signal before Run() waits in the set), so a script that stops the
  // emulator right after reading where it serves always gets a clean exit.
  for (int sig : s.options.stop_signals) s.signals.add(sig);
  if (!s.options.log_path.empty()) {
    s.log.open(s.options.log_path, std::ios::out | std::ios::trunc);
    if (!s.log) throw UsageError("cannot write the traffic log '" + s.options.log_path + "'");
  }
  return s.tcp() ? s.OpenTcp() : s.OpenPty();
}

RigEmulatorServer::Ending RigEmulatorServer::Run(
    const std::function<void(const RigEmulatorNote&)>& on_note) {
  Impl& s = *impl_;
  s.on_note = on_note;
  if (!s.options.stop_signals.empty()) {
    s.signals.async_wait([&s](const boost::system::error_code& ec, int) {
      if (!ec) s.BeginClose(Ending::kSignal);
    });
  }
  s.start = Clock::now();
  s.wall_base = s.start;
  s.rig_base = 0;
  if (s.tcp()) {
    s.StartAccept();
  } else {
    s.StartRead();
  }
  s.Schedule(false);
  s.ctx.run();
  if (s.log.is_open()) s.log.flush();
  return s.ending;
}

}  // namespace lw
