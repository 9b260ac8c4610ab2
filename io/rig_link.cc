#include "io/rig_link.h"

#include <fcntl.h>
#include <linux/futex.h>
#include <pthread.h>
#include <signal.h>
#include <sys/epoll.h>
#include <sys/eventfd.h>
#include <sys/syscall.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstring>
#include <ctime>
#include <mutex>
#include <thread>
#include <utility>
#include <vector>

#include "io/rig_transport.h"
#include "io/serial_link.h"
#include "io/tcp_link.h"
#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {

// ---- Port text and options --------------------------------------------------------------------

std::string RigPort::ToString() const {
  if (kind == Kind::kSerial) return device;
  const bool ipv6 = host.find(':') != std::string::npos;
  return "tcp:" + (ipv6 ? "[" + host + "]" : host) + ":" + std::to_string(port);
}

RigPort ParseRigPort(std::string_view text) {
  const std::string quoted = "--port '" + std::string(text) + "'";
  RigPort result;
  if (text.empty()) throw UsageError("--port is empty: expected a serial device or tcp:HOST:PORT");
  for (char c : text) {
    if (c <= ' ' || c > '~') {
      throw UsageError(quoted + ": expected a serial device path or tcp:HOST:PORT without blanks");
    }
  }
  if (text.substr(0, 4) != "tcp:") {
    result.device = std::string(text);
    return result;
  }
  const std::string expected = quoted + ": expected tcp:HOST:PORT with PORT from 1 to 65535";
  std::string_view rest = text.substr(4);
  std::string_view host;
  std::string_view port;
  if (!rest.empty() && rest.front() == '[') {
    const std::size_t close = rest.find(']');
    if (close == std::string_view::npos || close + 1 >= rest.size() || rest[close + 1] != ':') {
      throw UsageError(expected);
    }
    host = rest.substr(1, close - 1);
    port = rest.substr(close + 2);
  } else {
    const std::size_t colon = rest.find(':');
    if (colon == std::string_view::npos || rest.find(':', colon + 1) != std::string_view::npos) {
      throw UsageError(expected);
    }
    host = rest.substr(0, colon);
    port = rest.substr(colon + 1);
  }
  if (host.empty() || port.empty() || port.size() > 5) throw UsageError(expected);
  unsigned number = 0;
  for (char c : port) {
    if (c < '0' || c > '9') throw UsageError(expected);
    number = number * 10 + static_cast<unsigned>(c - '0');
  }
  if (number < 1 || number > 65535) throw UsageError(expected);
  result.kind = RigPort::Kind::kTcp;
  result.host = std::string(host);
  result.port = static_cast<std::uint16_t>(number);
  return result;
}

void RigLinkOptions::Validate() const {
  if (!IsStandardBaud(baud)) {
    throw UsageError("baud " + std::to_string(baud) +
                     " is not a standard rate (1200, 2400, ..., 115200, 230400, ..., 4000000)");
  }
  if (!(connect_timeout_s > 0.0) || connect_timeout_s > 3600.0) {
    throw UsageError("connect_timeout_s " + SignificantText(connect_timeout_s, 6) +
                     " must be more than 0 and at most 3600 seconds");
  }
}

SerialFlowControl ParseSerialFlowControl(std::string_view text) {
  if (text == "none") return SerialFlowControl::kNone;
  if (text == "hardware") return SerialFlowControl::kHardware;
  throw UsageError("flow control '" + std::string(text) + "': expected none or hardware");
}

// ---- The link -----------------------------------------------------------------------------------
//
// One reader thread per started link waits in epoll_wait(2) on the descriptor and on `stop_fd`,
// reads what is there with one read(2) and feeds it through the splitter: a line costs one
// wakeup and two system calls (epoll rather than poll(2), which registers and unregisters its
// wait on every call: about 0.7 us per wakeup less here). Writes from other threads go straight to
// the descriptor under `write_mutex`; lines a handler sends wait in `deferred` until that handler
// returns, then the reader thread writes them. Queue mode hands each read's events over as one
// batch: the reader swaps its vector into `incoming` and wakes NextEvent only when a caller is
// waiting there. That caller sleeps on a futex word (`published`) outside the queue lock, so a
// handed-over line costs the two futex calls of one wait and one wake (a condition variable
// re-takes its mutex as if contended on waking, and its unlock then makes a third).
//
// A serial device opened by path comes with a second, blocking descriptor for reading
// (rig_transport.h, serial_link.cc); then the reader blocks in read(2) alone, one system call per
// line instead of two (epoll_wait, then read). Such a read is stopped without losing the request:
//   - Stop() sets `stop_signalled`, then, under `reader_mutex`, replaces the blocking descriptor
//     with dup3(2) by the read end of a pipe whose write end is closed (`ended_fd`), so every
//     read(2) that starts after that returns 0 at once; the reader then finds the flag set.
//   - A read(2) already blocked on the device is not woken by that (it holds its own reference to
//     the device), so Stop() also sends the wake signal (SIGRTMIN + 7) to the reader thread with
//     pthread_kill when `in_read` says the reader is in, or about to enter, read(2). The signal's
//     handler does nothing and is installed without SA_RESTART, so that read(2) returns EINTR (the
//     reader thread unblocks the signal first, in case its creator had it blocked).
//   - The two sides are ordered as in Dekker's algorithm: the reader stores `in_read` and then
//     issues a full fence before read(2) looks its descriptor up; Stop() replaces the descriptor
//     and then issues a full fence before it loads `in_read`. So either Stop() sees `in_read`
//     and signals (a signal that lands before read(2) blocks still makes it return EINTR, since
//     the kernel checks for a pending signal before it sleeps, and one that lands just before the
//     call leaves read(2) on the replaced descriptor), or the reader's read(2) finds the replaced
//     descriptor. A request is never lost in between.
//   - The reader closes the descriptor under `reader_mutex` when it stops, and Stop() touches it
//     only while it is open, so dup3 never lands on a descriptor number reused by someone else.
// The signal is sent only at a stop, and only while the reader is at its read(2), so a handler's
// own system calls are not interrupted but for the short span between read(2) returning and
// `in_read` being cleared (the reader then stops at once; glibc's locks retry on EINTR and
// WriteAll does too). The wake signal is used only when its disposition is the default (nobody
// else in the process uses it); otherwise, and for sockets and adopted descriptors, the reader
// waits in epoll_wait as above.

namespace {

constexpr std::size_t kReadBytes = 64 * 1024;

std::string ErrnoText(int error) { return std::strerror(error); }

extern "C" void OnWakeSignal(int) {}  // only makes a blocked read(2) return EINTR

// The real-time signal that stops a blocking read, installed once; -1 when something else in the
// process already handles it.
int WakeSignal() {
  static const int signal_number = [] {
    const int number = SIGRTMIN + 7;
    struct sigaction old {};
    if (number > SIGRTMAX || ::sigaction(number, nullptr, &old) != 0) return -1;
    if ((old.sa_flags & SA_SIGINFO) != 0 || old.sa_handler != SIG_DFL) return -1;
    struct sigaction wake {};
    wake.sa_handler = OnWakeSignal;
    sigemptyset(&wake.sa_mask);
    wake.sa_flags = 0;  // no SA_RESTART: the read returns EINTR
    return ::sigaction(number, &wake, nullptr) == 0 ? number : -1;
  }();
  return signal_number;
}

static_assert(sizeof(std::atomic<std::uint32_t>) == sizeof(std::uint32_t) &&
              std::atomic<std::uint32_t>::is_always_lock_free);

// Sleeps while *word == expected, at most `wait`; returns early on a wake, on a change of the
// word, on a signal.
void FutexWait(std::atomic<std::uint32_t>& word, std::uint32_t expected,
               std::chrono::nanoseconds wait) {
  timespec relative{};
  relative.tv_sec = static_cast<std::time_t>(wait.count() / 1000000000);
  relative.tv_nsec = static_cast<long>(wait.count() % 1000000000);
  ::syscall(SYS_futex, reinterpret_cast<std::uint32_t*>(&word), FUTEX_WAIT_PRIVATE, expected,
            &relative, nullptr, 0);
}

void FutexWakeAll(std::atomic<std::uint32_t>& word) {
  ::syscall(SYS_futex, reinterpret_cast<std::uint32_t*>(&word), FUTEX_WAKE_PRIVATE, INT32_MAX,
            nullptr, nullptr, 0);
}

}  // namespace

struct RigLink::State {
  explicit State(std::unique_ptr<RigTransport> t)
      : transport(std::move(t)),
        description(transport->description()),
        splitter([this](const RigLineEvent& event) { Deliver(event); }) {
    stop_fd = eventfd(0, EFD_CLOEXEC | EFD_NONBLOCK);
    epoll_fd = epoll_create1(EPOLL_CLOEXEC);
    epoll_event data{};
    data.events = EPOLLIN;
    data.data.fd = transport->fd();
    epoll_event stop{};
    stop.events = EPOLLIN;
    stop.data.fd = stop_fd;
    if (stop_fd < 0 || epoll_fd < 0 ||
        epoll_ctl(epoll_fd, EPOLL_CTL_ADD, transport->fd(), &data) != 0 ||
        epoll_ctl(epoll_fd, EPOLL_CTL_ADD, stop_fd, &stop) != 0) {
      const std::string reason = ErrnoText(errno);
      if (stop_fd >= 0) ::close(stop_fd);
      if (epoll_fd >= 0) ::close(epoll_fd);
      throw LinkError("cannot read from " + description + ": " + reason);
    }
    buffer.resize(kReadBytes);
    SetUpBlockingReader(transport->ReleaseBlockingReader());
  }
  ~State() {
    ::close(epoll_fd);
    ::close(stop_fd);
    if (blocking_fd >= 0) ::close(blocking_fd);
    if (ended_fd >= 0) ::close(ended_fd);
  }

  // Keeps `fd` (or closes it) when a blocking read can be stopped here: a wake signal and an
  // always-ended pipe for Stop() to put in its place.
  void SetUpBlockingReader(int fd) {
    if (fd < 0) return;
    int ends[2];
    if (WakeSignal() < 0 || ::pipe2(ends, O_CLOEXEC) != 0) {
      ::close(fd);
      return;
    }
    ::close(ends[1]);
    ended_fd = ends[0];
    blocking_fd = fd;
  }

  std::unique_ptr<RigTransport> transport;
  const std::string description;
  // Readable once reading must stop (Close, a failed write or handler, the end); never drained.
  int stop_fd = -1;
  std::atomic<bool> stop_signalled{false};
  int epoll_fd = -1;  // the descriptor and stop_fd, level-triggered

  // The blocking reader (see above), when there is one; under reader_mutex once started.
  std::mutex reader_mutex;
  int blocking_fd = -1;  // read by the reader thread alone; -1 once it closed it
  int ended_fd = -1;     // a pipe's read end whose write end is closed: read(2) gives 0
  pthread_t reader_thread{};
  bool reader_running = false;
  std::atomic<bool> in_read{false};

  std::mutex thread_mutex;  // Start and Close from outside the reader thread
  std::thread thread;
  std::atomic<bool> started{false};
  std::atomic<bool> closing{false};
  // Reading ended: set by EndReading after the last events and before the end is published,
  // so a consumer told by NextEvent that the link closed finds closed() true and Send refusing.
  std::atomic<bool> closed{false};

  // Reader thread only (set before it starts).
  std::vector<char> buffer;
  RigLineSplitter splitter;
  EventHandler on_event;
  CloseHandler on_close;
  bool queue_mode = false;
  bool ended = false;
  std::vector<RigLineEvent> pending;  // queue mode: the events of the current read

  std::mutex failure_mutex;
  std::string failure;  // the first write failure or handler exception, if any

  mutable std::mutex counts_mutex;
  RigStreamCounts counts;

  std::mutex queue_mutex;
  std::atomic<std::uint32_t> published{0};  // +1 under queue_mutex whenever events or the end
                                            // arrive; NextEvent waits on it as a futex
  std::vector<RigLineEvent> incoming;       // handed over by the reader, not yet taken
  std::vector<RigLineEvent> taking;         // being returned by NextEvent, from taking_at on
  std::size_t taking_at = 0;
  int waiting = 0;  // NextEvent callers waiting for an event
  bool queue_closed = false;
  std::string close_message;

  std::mutex write_mutex;  // every write to the descriptor, and what follows
  bool writes_stopped = false;
  std::uint32_t next_seq = 0;
  std::vector<std::string> deferred;  // sent by a handler, written when it returns
  std::atomic<bool> has_deferred{false};

  static thread_local const State* reader;  // the State whose reader thread this is
  bool OnIoThread() const { return reader == this; }

  void Stop() {
    if (stop_signalled.exchange(true)) return;
    const std::uint64_t one = 1;
    [[maybe_unused]] ssize_t n = ::write(stop_fd, &one, sizeof one);
    std::lock_guard<std::mutex> lock(reader_mutex);
    if (blocking_fd < 0) return;
    ::dup3(ended_fd, blocking_fd, O_CLOEXEC);
    std::atomic_thread_fence(std::memory_order_seq_cst);
    if (reader_running && !OnIoThread() && in_read.load()) {
      ::pthread_kill(reader_thread, WakeSignal());
    }
  }

  void SetFailure(const std::string& problem) {
    {
      std::lock_guard<std::mutex> lock(failure_mutex);
      if (failure.empty()) failure = problem;
    }
    Stop();
  }
  std::string Failure() {
    std::lock_guard<std::mutex> lock(failure_mutex);
    return failure;
  }

  std::string ClosedText() {
    std::lock_guard<std::mutex> lock(queue_mutex);
    return close_message.empty() ? "the link to " + description + " was closed" : close_message;
  }
  // Why writing is no longer possible.
  std::string StoppedText() {
    std::string problem = Failure();
    return problem.empty() ? ClosedText() : problem;
  }

  void Deliver(const RigLineEvent& event) {
    if (queue_mode) {
      pending.push_back(event);  // handed over once per read, in Publish
      return;
    }
    // What the handler sent goes out as soon as it returns, even when it throws.
    struct FlushAfter {
      State* s;
      ~FlushAfter() {
        if (s->has_deferred.load(std::memory_order_relaxed)) s->FlushDeferred();
      }
    } flush{this};
    on_event(event);
  }

  // Queue mode: hands the events of one read over under one lock; wakes only a waiting caller.
  void Publish() {
    if (pending.empty()) return;
    bool wake = false;
    {
      std::lock_guard<std::mutex> lock(queue_mutex);
      if (incoming.empty()) {
        incoming.swap(pending);
      } else {
        for (RigLineEvent& event : pending) incoming.push_back(std::move(event));
      }
      published.fetch_add(1, std::memory_order_release);
      wake = waiting > 0;
    }
    pending.clear();
    if (wake) FutexWakeAll(published);
  }

  void Ingest(std::size_t n) {
    try {
      splitter.Feed(std::string_view(buffer.data(), n), std::chrono::steady_clock::now());
    } catch (const std::exception& e) {
      SetFailure(e.what());
    }
    {
      std::lock_guard<std::mutex> lock(counts_mutex);
      counts = splitter.counts();
    }
    Publish();  // after the counts, so a queued event is never ahead of them
  }

  // Blocks in read(2) on blocking_fd; returns why reading ended (empty after a stop).
  std::string BlockingReadLoop() {
    {
      std::lock_guard<std::mutex> lock(reader_mutex);
      reader_thread = ::pthread_self();
      reader_running = true;
    }
    sigset_t wake;
    sigemptyset(&wake);
    sigaddset(&wake, WakeSignal());
    ::pthread_sigmask(SIG_UNBLOCK, &wake, nullptr);
    std::string message;
    while (!stop_signalled) {
      in_read.store(true);
      std::atomic_thread_fence(std::memory_order_seq_cst);
      const long n = static_cast<long>(::read(blocking_fd, buffer.data(), buffer.size()));
      const int error = errno;
      in_read.store(false);
      if (stop_signalled) break;  // Close(), or a failure that says why
      if (n > 0) {
        Ingest(static_cast<std::size_t>(n));
        continue;
      }
      if (n < 0 && error == EINTR) continue;  // another signal
      message = n == 0 || error == EIO ? "the rig on " + description + " closed the link"
                                       : "reading " + description + " failed: " + ErrnoText(error);
      break;
    }
    std::lock_guard<std::mutex> lock(reader_mutex);
    ::close(blocking_fd);
    blocking_fd = -1;
    reader_running = false;
    return message;
  }

  void ReadLoop() {
    reader = this;
    std::string message;
    if (blocking_fd >= 0) {
      message = BlockingReadLoop();
    } else {
      message = EpollReadLoop();
    }
    const std::string problem = Failure();
    if (!problem.empty()) {
      message = problem;
    } else if (closing) {
      message.clear();
    }
    EndReading(message);
  }

  // Waits in epoll_wait, then reads; returns why reading ended (empty after a stop).
  std::string EpollReadLoop() {
    std::string message;
    for (;;) {
      epoll_event ready[2];
      const int count = ::epoll_wait(epoll_fd, ready, 2, -1);
      if (count < 0) {
        if (errno == EINTR) continue;
        message = "reading " + description + " failed: " + ErrnoText(errno);
        break;
      }
      if (stop_signalled) break;  // Close(), or a failure that says why
      if (count == 0) continue;
      const long n = transport->ReadSome(buffer.data(), buffer.size());
      if (n > 0) {
        Ingest(static_cast<std::size_t>(n));
        continue;
      }
      if (n < 0 && (errno == EAGAIN || errno == EWOULDBLOCK || errno == EINTR)) continue;
      // End of stream on a socket; EIO on a pseudo-terminal whose master closed, or on a serial
      // adapter that was unplugged.
      if (n == 0 || errno == EIO) {
        message = "the rig on " + description + " closed the link";
      } else {
        message = "reading " + description + " failed: " + ErrnoText(errno);
      }
      break;
    }
    return message;
  }

  // Called with write_mutex held: writes the lines handlers sent, in order.
  void WriteDeferredLocked() {
    for (const std::string& line : deferred) {
      if (writes_stopped) break;
      const int error = transport->WriteAll(line.data(), line.size(), stop_fd);
      if (error == ECANCELED) break;  // the link is stopping; nothing is waiting for this line
      if (error != 0) {
        writes_stopped = true;
        SetFailure("writing to " + description + " failed: " + ErrnoText(error));
      }
    }
    deferred.clear();
    has_deferred = false;
  }
  void FlushDeferred() {
    std::lock_guard<std::mutex> lock(write_mutex);
    WriteDeferredLocked();
  }

  void EndReading(const std::string& message) {
    if (ended) return;
    ended = true;
    try {
      splitter.Finish();
    } catch (const std::exception&) {
      // The handler's failure on a cut-off last line changes nothing: the link is ending.
    }
    {
      std::lock_guard<std::mutex> lock(counts_mutex);
      counts = splitter.counts();
    }
    Publish();  // the last events: handlers' replies to them are still deferred and written
    closed = true;
    {
      std::lock_guard<std::mutex> lock(queue_mutex);
      queue_closed = true;
      close_message = message;
      published.fetch_add(1, std::memory_order_release);
    }
    FutexWakeAll(published);
    Stop();  // wakes a writer waiting for room, so it gives up
    {
      std::lock_guard<std::mutex> lock(write_mutex);
      WriteDeferredLocked();  // a handler's last lines, a safe stop among them, if there is room
      writes_stopped = true;
      transport->Close();
    }
    if (!queue_mode && on_close) {
      try {
        on_close(message);
      } catch (const std::exception&) {
        // Nothing is left to tell: the link is closed either way.
      }
    }
  }

  // Called with write_mutex held (`lock`), which it releases before throwing.
  void Write(std::string line, std::unique_lock<std::mutex>& lock) {
    if (writes_stopped || closed) {
      lock.unlock();
      throw LinkError(StoppedText());
    }
    if (OnIoThread()) {
      deferred.push_back(std::move(line));
      has_deferred = true;
      return;
    }
    WriteDeferredLocked();  // a handler's lines have the lower SEQ: they go first
    const int error =
        writes_stopped ? ECANCELED : transport->WriteAll(line.data(), line.size(), stop_fd);
    if (error == 0) return;
    std::string problem;
    if (error == ECANCELED) {
      problem = StoppedText();
    } else {
      problem = "writing to " + description + " failed: " + ErrnoText(error);
      writes_stopped = true;
      SetFailure(problem);  // the reader ends the link with this message
    }
    lock.unlock();
    throw LinkError(problem);
  }

  void StartReading() {
    std::lock_guard<std::mutex> lock(thread_mutex);
    if (closing) return;  // Close() came first and ended the link
    thread = std::thread([this] { ReadLoop(); });
  }
};

thread_local const RigLink::State* RigLink::State::reader = nullptr;

RigLink::RigLink(std::unique_ptr<RigTransport> transport)
    : state_(std::make_unique<State>(std::move(transport))) {}

RigLink::~RigLink() {
  Close();
  if (state_->thread.joinable())
    state_->thread.detach();  // destroyed from its own handler:
                              // a caller's mistake
}

void RigLink::Start(EventHandler on_event, CloseHandler on_close) {
  if (!on_event) throw UsageError("RigLink::Start needs an event handler");
  if (state_->started.exchange(true)) throw UsageError("RigLink started twice");
  state_->on_event = std::move(on_event);
  state_->on_close = std::move(on_close);
  state_->StartReading();
}

void RigLink::StartQueue() {
  if (state_->started.exchange(true)) throw UsageError("RigLink started twice");
  state_->queue_mode = true;
  state_->StartReading();
}

std::optional<RigLineEvent> RigLink::NextEvent(std::chrono::milliseconds timeout) {
  State& s = *state_;
  std::unique_lock<std::mutex> lock(s.queue_mutex);
  auto ready = [&s] {
    return s.taking_at < s.taking.size() || !s.incoming.empty() || s.queue_closed;
  };
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (!ready()) {
    const auto now = std::chrono::steady_clock::now();
    if (now >= deadline) break;
    const std::uint32_t seen = s.published.load(std::memory_order_acquire);
    ++s.waiting;
    lock.unlock();
    FutexWait(s.published, seen, deadline - now);  // returns at once if it moved on since
    lock.lock();
    --s.waiting;
  }
  if (s.taking_at == s.taking.size() && !s.incoming.empty()) {
    s.taking.clear();
    s.taking_at = 0;
    s.taking.swap(s.incoming);
  }
  if (s.taking_at < s.taking.size()) return std::move(s.taking[s.taking_at++]);
  if (s.queue_closed) {
    throw LinkError(s.close_message.empty() ? "the link to " + s.description + " was closed"
                                            : s.close_message);
  }
  return std::nullopt;
}

std::uint32_t RigLink::Send(RigMessage message) {
  std::unique_lock<std::mutex> lock(state_->write_mutex);
  message.seq = state_->next_seq;
  std::string line = EncodeRigLine(message);
  ++state_->next_seq;
  state_->Write(std::move(line), lock);
  return message.seq;
}

void RigLink::WriteLine(std::string_view line) {
  if (line.empty() || line.back() != '\n') {
    throw UsageError("RigLink::WriteLine needs a complete line ending in a newline");
  }
  std::unique_lock<std::mutex> lock(state_->write_mutex);
  state_->Write(std::string(line), lock);
}

void RigLink::Close() {
  State* s = state_.get();
  s->closing = true;
  s->Stop();
  if (s->OnIoThread()) return;  // reading ends when the handler returns; the destructor joins
  std::lock_guard<std::mutex> lock(s->thread_mutex);
  if (s->thread.joinable()) {
    s->thread.join();
  } else if (!s->ended) {
    s->EndReading("");  // never started: nothing else touches the reading state
  }
}

bool RigLink::closed() const { return state_->closed; }

RigStreamCounts RigLink::counts() const {
  std::lock_guard<std::mutex> lock(state_->counts_mutex);
  return state_->counts;
}

const std::string& RigLink::description() const { return state_->description; }

// ---- Opening ------------------------------------------------------------------------------------

std::unique_ptr<RigLink> OpenRigLink(const RigPort& port, const RigLinkOptions& options) {
  options.Validate();
  if (port.kind == RigPort::Kind::kTcp) {
    return std::make_unique<RigLink>(
        ConnectTcpTransport(port.host, port.port, options.connect_timeout_s));
  }
  return std::make_unique<RigLink>(
      OpenSerialTransport(port.device, options.baud, options.flow_control));
}

std::unique_ptr<RigLink> AdoptRigLinkDescriptor(int fd, std::string description) {
  return std::make_unique<RigLink>(std::make_unique<RigTransport>(fd, std::move(description)));
}

}  // namespace lw
