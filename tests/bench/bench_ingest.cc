// Rig link ingest: how many sample lines per second a RigLink (io/rig_link.h) takes in with CRC
// checking, parsing and sequence tracking, over a pseudo-terminal (the serial transport on the
// slave path) and over loopback TCP, and what a 1 kHz stream costs the host in CPU.
//
// A forked child plays the rig: it writes pre-encoded `s` lines (real CRCs, consecutive SEQ)
// into the pty master or the accepted socket as fast as it can, or one per millisecond for the
// 1 kHz case. The parent is the host: a RigLink in handler mode (as the rig session uses it)
// or queue mode (NextEvent on the main thread, so a thread handoff per line is counted too).
// OpenRigLink on the pty's slave path gives the serial transport, whose reader blocks in read(2)
// alone; the "adopted" row is the same handler over the slave opened here and handed to
// AdoptRigLinkDescriptor, whose reader waits in epoll_wait and then reads (two system calls a
// line, as every link did before): the cost of that wait, measured beside it.
// CPU is the parent's user + system time from getrusage (the child's is not counted). The
// reference beside each transport is the same bytes read with plain blocking read(2) and
// nothing else. Every figure is the median over RUNS runs, the runs of all rows interleaved so a
// change in the machine's load falls on every row alike.
//   Throughput table: "vs raw" is link rate / raw rate; lines/cpu-s is what the host could take
//   in with a core to itself (the machine may be shared).
//   1 kHz table: cpu % of one core; us/line is host CPU microseconds per line (one line per
//   wakeup at this rate); "vs raw" is link CPU / raw CPU, the cost of the link over the floor
//   that reading the same bytes one wakeup at a time costs; cs/line is the host's context
//   switches per line (1 for a thread that waits for each line; 2 when a second thread is
//   woken to take it over), a count that does not depend on the machine's load as CPU time
//   does.
// Targets: >= 200 000 lines/s; at 1 kHz under 1 % of one core (10 us per line).
//   bench_ingest [LINES] [SECONDS_AT_1KHZ] [RUNS]
// Prints a table; never fails on timing. Exit 1 only when a line was lost or rejected or
// something could not be set up.
#include <fcntl.h>
#include <netinet/in.h>
#include <signal.h>
#include <stdlib.h>
#include <sys/resource.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <termios.h>
#include <time.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <condition_variable>
#include <cstdio>
#include <cstdlib>
#include <mutex>
#include <stdexcept>
#include <string>
#include <vector>

#include "io/rig_link.h"
#include "io/rig_protocol.h"
#include "lti/error.h"

namespace {

using Clock = std::chrono::steady_clock;

// Context switches of this process so far (voluntary: a thread waited; involuntary: it was
// preempted). At 1 kHz each wait for a line is one.
double Switches() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return static_cast<double>(usage.ru_nvcsw + usage.ru_nivcsw);
}

double CpuSeconds() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return static_cast<double>(usage.ru_utime.tv_sec + usage.ru_stime.tv_sec) +
         1e-6 * static_cast<double>(usage.ru_utime.tv_usec + usage.ru_stime.tv_usec);
}

// `count` sample lines of a 1 kHz rig, as its firmware would print them.
std::string MakeLines(std::size_t count) {
  std::string text;
  text.reserve(count * 48);
  for (std::size_t i = 0; i < count; ++i) {
    const double y = 21.5 + 0.001 * static_cast<double>(i % 5000);
    text += lw::EncodeRigLine(
        lw::RigMessage::Sample(static_cast<std::uint32_t>(i), {i * 1000ull, 60.0, 42.125, y}));
  }
  return text;
}

// One end for the rig (written by the child) and one for the host.
struct Ends {
  int rig_fd = -1;
  std::string host_port;  // for OpenRigLink; empty when host_fd is used
  int host_fd = -1;       // for the raw reference
};

Ends PtyEnds(bool raw_reference) {
  Ends e;
  e.rig_fd = posix_openpt(O_RDWR | O_NOCTTY);
  if (e.rig_fd < 0 || grantpt(e.rig_fd) != 0 || unlockpt(e.rig_fd) != 0) {
    throw std::runtime_error("cannot create a pseudo-terminal");
  }
  const std::string slave = ptsname(e.rig_fd);
  if (!raw_reference) {
    e.host_port = slave;
    return e;
  }
  e.host_fd = open(slave.c_str(), O_RDWR | O_NOCTTY);
  termios t{};
  tcgetattr(e.host_fd, &t);
  cfmakeraw(&t);
  tcsetattr(e.host_fd, TCSANOW, &t);
  return e;
}

// A listening loopback socket; its port text.
int Listen(std::string& port) {
  int listener = socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  socklen_t size = sizeof address;
  if (listener < 0 || bind(listener, reinterpret_cast<sockaddr*>(&address), size) != 0 ||
      listen(listener, 1) != 0 ||
      getsockname(listener, reinterpret_cast<sockaddr*>(&address), &size) != 0) {
    throw std::runtime_error("cannot listen on loopback");
  }
  port = "tcp:127.0.0.1:" + std::to_string(ntohs(address.sin_port));
  return listener;
}

// The child: writes `text` in chunks, or one line per `period_us` when it is > 0, then waits
// to be killed (closing a pty master at once could discard what the host has not read yet).
// It is forked before the host's clocks start and begins when the host writes a byte into
// `go_fd`, so the fork (copying the page tables of a process holding the text) is not counted.
pid_t StartRig(int fd, const std::string& text, long period_us, int& go_fd) {
  int go[2];
  if (pipe(go) != 0) throw std::runtime_error("cannot create a pipe");
  const pid_t pid = fork();
  if (pid < 0) throw std::runtime_error("cannot fork the rig");
  if (pid != 0) {
    close(go[0]);
    go_fd = go[1];
    return pid;
  }
  close(go[1]);
  char byte = 0;
  if (read(go[0], &byte, 1) != 1) _exit(2);
  std::size_t at = 0;
  timespec next{};
  clock_gettime(CLOCK_MONOTONIC, &next);
  while (at < text.size()) {
    std::size_t n = std::min<std::size_t>(text.size() - at, 64 * 1024);
    if (period_us > 0) {
      n = text.find('\n', at) + 1 - at;
      next.tv_nsec += period_us * 1000;
      if (next.tv_nsec >= 1000000000) next.tv_sec += 1, next.tv_nsec -= 1000000000;
      clock_nanosleep(CLOCK_MONOTONIC, TIMER_ABSTIME, &next, nullptr);
    }
    const ssize_t wrote = write(fd, text.data() + at, n);
    if (wrote <= 0) _exit(2);
    at += static_cast<std::size_t>(wrote);
  }
  for (;;) pause();
}

struct Run {
  double wall = 0.0, cpu = 0.0, switches = 0.0;
  std::uint64_t valid = 0, lost = 0;
};

enum class Mode { kHandler, kAdopted, kQueue, kRaw };

Run Once(bool tcp, Mode mode, const std::string& text, std::size_t lines, long period_us) {
  Ends ends;
  std::unique_ptr<lw::RigLink> link;
  int listener = -1;
  if (tcp) {
    listener = Listen(ends.host_port);
    if (mode != Mode::kRaw) {
      link = lw::OpenRigLink(lw::ParseRigPort(ends.host_port), lw::RigLinkOptions{});
    } else {
      ends.host_fd = socket(AF_INET, SOCK_STREAM, 0);
      sockaddr_in address{};
      socklen_t size = sizeof address;
      getsockname(listener, reinterpret_cast<sockaddr*>(&address), &size);
      if (connect(ends.host_fd, reinterpret_cast<sockaddr*>(&address), size) != 0) {
        throw std::runtime_error("cannot connect on loopback");
      }
    }
    ends.rig_fd = accept(listener, nullptr, nullptr);
    close(listener);
  } else {
    ends = PtyEnds(mode == Mode::kRaw || mode == Mode::kAdopted);
    if (mode == Mode::kAdopted) {
      link = lw::AdoptRigLinkDescriptor(ends.host_fd, "pty slave");
      ends.host_fd = -1;  // the link owns it
    } else if (mode != Mode::kRaw) {
      link = lw::OpenRigLink(lw::ParseRigPort(ends.host_port), lw::RigLinkOptions{});
    }
  }
  std::mutex mutex;
  std::condition_variable ended;
  bool closed = false;
  std::atomic<std::uint64_t> handled{0};
  const bool handler = mode == Mode::kHandler || mode == Mode::kAdopted;
  if (handler) {
    link->Start(
        [&](const lw::RigLineEvent& e) {
          if (e.kind == lw::RigLineEvent::Kind::kMessage && handled.fetch_add(1) + 1 == lines) {
            std::lock_guard<std::mutex> lock(mutex);
            ended.notify_all();
          }
        },
        [&](const std::string&) {
          std::lock_guard<std::mutex> lock(mutex);
          closed = true;
          ended.notify_all();
        });
  } else if (mode == Mode::kQueue) {
    link->StartQueue();
  }
  int go_fd = -1;
  const pid_t child = StartRig(ends.rig_fd, text, period_us, go_fd);
  close(ends.rig_fd);
  const double switches0 = Switches();
  const double cpu0 = CpuSeconds();
  const auto t0 = Clock::now();
  if (write(go_fd, "g", 1) != 1) throw std::runtime_error("cannot start the rig");
  close(go_fd);
  Run run;
  // Everything should arrive well within this; a lost line shows as a timeout, not a hang.
  const auto deadline = t0 + std::chrono::seconds(20) +
                        std::chrono::microseconds(static_cast<long>(lines) * (period_us + 10));
  if (handler) {
    std::unique_lock<std::mutex> lock(mutex);
    ended.wait_until(lock, deadline, [&] { return closed || handled.load() == lines; });
    run.valid = handled.load();
  } else if (mode == Mode::kQueue) {
    try {
      while (run.valid < lines && Clock::now() < deadline) {
        auto e = link->NextEvent(std::chrono::milliseconds(1000));
        if (e && e->kind == lw::RigLineEvent::Kind::kMessage) ++run.valid;
      }
    } catch (const lw::LinkError&) {
      // the link closed early: what arrived is counted
    }
  } else {
    std::vector<char> buffer(64 * 1024);
    ssize_t n;
    while (run.valid < lines && Clock::now() < deadline &&
           (n = read(ends.host_fd, buffer.data(), buffer.size())) > 0) {
      run.valid += static_cast<std::uint64_t>(std::count(buffer.data(), buffer.data() + n, '\n'));
    }
    close(ends.host_fd);
  }
  run.wall = std::chrono::duration<double>(Clock::now() - t0).count();
  run.cpu = CpuSeconds() - cpu0;
  run.switches = Switches() - switches0;
  kill(child, SIGKILL);
  int status = 0;
  waitpid(child, &status, 0);
  if (link) {
    link->Close();  // the counts are final once reading has stopped
    const lw::RigStreamCounts counts = link->counts();
    run.lost = lines - counts.valid + counts.rejected + counts.missing;
    link.reset();
  } else {
    run.lost = lines - run.valid;
  }
  return run;
}

double Median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  return v[v.size() / 2];
}

const char* ModeName(Mode mode) {
  if (mode == Mode::kRaw) return "raw read";
  if (mode == Mode::kAdopted) return "adopted";
  return mode == Mode::kHandler ? "handler" : "queue";
}

// Median wall and CPU seconds of each (link, mode) row over `runs` interleaved runs.
struct Row {
  bool tcp = false;
  Mode mode = Mode::kRaw;
  std::vector<double> walls, cpus, switches;
  std::uint64_t lost = 0;
  double wall() const { return Median(walls); }
  double cpu() const { return Median(cpus); }
};

std::vector<Row> Measure(const std::string& text, std::size_t lines, long period_us, int runs) {
  std::vector<Row> rows;
  for (bool tcp : {false, true}) {
    for (Mode mode : {Mode::kRaw, Mode::kHandler, Mode::kAdopted, Mode::kQueue}) {
      if (tcp && mode == Mode::kAdopted) continue;  // a TCP link waits in epoll_wait either way
      Row row;
      row.tcp = tcp;
      row.mode = mode;
      rows.push_back(row);
    }
  }
  for (int r = 0; r < runs; ++r) {
    for (Row& row : rows) {
      const Run run = Once(row.tcp, row.mode, text, lines, period_us);
      row.walls.push_back(run.wall);
      row.cpus.push_back(run.cpu);
      row.switches.push_back(run.switches);
      row.lost += run.lost;
    }
  }
  return rows;
}

}  // namespace

int main(int argc, char** argv) {
  const std::size_t lines = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 1000000;
  const double seconds_1khz = argc > 2 ? std::strtod(argv[2], nullptr) : 10.0;
  const int runs = argc > 3 ? std::max(1, std::atoi(argv[3])) : 3;
  signal(SIGPIPE, SIG_IGN);
  bool all_received = true;
  try {
    const std::string text = MakeLines(lines);
    std::printf("rig link ingest: %zu sample lines (%.1f MB, %.1f bytes/line), median of %d runs\n",
                lines, text.size() / 1e6, static_cast<double>(text.size()) / lines, runs);
    std::printf("%-6s %-9s %12s %8s %9s %10s %8s %13s %7s\n", "link", "mode", "lines/s", "MB/s",
                "wall s", "cpu s", "vs raw", "lines/cpu-s", "lost");
    double raw_rate = 0.0;
    for (const Row& row : Measure(text, lines, 0, runs)) {
      const double rate = static_cast<double>(lines) / row.wall();
      if (row.mode == Mode::kRaw) raw_rate = rate;
      std::printf("%-6s %-9s %12.0f %8.1f %9.3f %10.3f %8.2f %13.0f %7llu\n",
                  row.tcp ? "tcp" : "pty", ModeName(row.mode), rate, text.size() / row.wall() / 1e6,
                  row.wall(), row.cpu(), rate / raw_rate, static_cast<double>(lines) / row.cpu(),
                  static_cast<unsigned long long>(row.lost));
      all_received = all_received && row.lost == 0;
    }
    const std::size_t slow_lines = std::min(lines, static_cast<std::size_t>(seconds_1khz * 1000.0));
    std::size_t slow_end = 0;
    for (std::size_t i = 0; i < slow_lines && i < lines; ++i)
      slow_end = text.find('\n', slow_end) + 1;
    const std::string slow = text.substr(0, slow_end);
    std::printf("\n1 kHz stream for %.0f s: host CPU as %% of one core, median of %d runs\n",
                static_cast<double>(slow_lines) / 1000.0, runs);
    std::printf("%-6s %-9s %8s %9s %8s %9s %8s %10s %7s\n", "link", "mode", "wall s", "cpu s",
                "cpu %", "us/line", "vs raw", "cs/line", "lost");
    double raw_cpu = 0.0;
    for (const Row& row : Measure(slow, slow_lines, 1000, runs)) {
      if (row.mode == Mode::kRaw) raw_cpu = row.cpu();
      std::printf("%-6s %-9s %8.2f %9.4f %8.3f %9.2f %8.2f %10.2f %7llu\n", row.tcp ? "tcp" : "pty",
                  ModeName(row.mode), row.wall(), row.cpu(), 100.0 * row.cpu() / row.wall(),
                  1e6 * row.cpu() / static_cast<double>(slow_lines), row.cpu() / raw_cpu,
                  Median(row.switches) / static_cast<double>(slow_lines),
                  static_cast<unsigned long long>(row.lost));
      all_received = all_received && row.lost == 0;
    }
  } catch (const std::exception& e) {
    std::fprintf(stderr, "bench_ingest: %s\n", e.what());
    return 1;
  }
  if (!all_received) {
    std::fprintf(stderr, "bench_ingest: some lines were lost or rejected\n");
    return 1;
  }
  return 0;
}
