#include "io/rig_link.h"

#include <atomic>
#include <cerrno>
#include <condition_variable>
#include <deque>
#include <future>
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

struct RigLink::State {
  explicit State(std::unique_ptr<RigTransport> t)
      : transport(std::move(t)),
        description(transport->description()),
        guard(boost::asio::make_work_guard(transport->io())),
        splitter([this](const RigLineEvent& event) { Deliver(event); }) {
    buffer.resize(64 * 1024);
  }

  std::unique_ptr<RigTransport> transport;
  const std::string description;
  std::thread thread;
  std::thread::id io_thread;
  boost::asio::executor_work_guard<boost::asio::io_context::executor_type> guard;
  std::vector<char> buffer;

  // Reading; touched on the io thread only (after Start posts the first read).
  RigLineSplitter splitter;
  EventHandler on_event;
  CloseHandler on_close;
  bool queue_mode = false;
  bool reading = false;
  bool ended = false;
  std::string failure;  // the first write failure or handler exception, if any

  std::atomic<bool> started{false};
  std::atomic<bool> closing{false};
  std::atomic<bool> closed{false};

  mutable std::mutex counts_mutex;
  RigStreamCounts counts;

  std::mutex queue_mutex;
  std::condition_variable queue_ready;
  std::deque<RigLineEvent> queue;
  std::vector<RigLineEvent> pending;  // io thread only
  bool queue_closed = false;
  std::string close_message;

  std::mutex write_mutex;
  bool writes_stopped = false;
  std::uint32_t next_seq = 0;

  bool OnIoThread() const { return std::this_thread::get_id() == io_thread; }

  void Deliver(const RigLineEvent& event) {
    if (!queue_mode) {
      on_event(event);
      return;
    }
    pending.push_back(event);  // handed over once per read, in FlushPending
  }

  // Queue mode: moves the events of one read into the queue under one lock and one wake-up.
  void FlushPending() {
    if (pending.empty()) return;
    {
      std::lock_guard<std::mutex> lock(queue_mutex);
      for (RigLineEvent& event : pending) queue.push_back(std::move(event));
    }
    pending.clear();
    queue_ready.notify_all();
  }

  void Run() {
    transport->io().run();
    {
      std::lock_guard<std::mutex> lock(write_mutex);
      writes_stopped = true;
    }
    // Writes posted before the stop fail now rather than wait for ever.
    transport->io().restart();
    transport->io().poll();
  }

  void StartRead() {
    transport->AsyncReadSome(
        boost::asio::buffer(buffer),
        [this](const boost::system::error_code& error, std::size_t n) { OnRead(error, n); });
  }

  void OnRead(const boost::system::error_code& error, std::size_t n) {
    if (n > 0 && !ended) {
      try {
        splitter.Feed(std::string_view(buffer.data(), n));
      } catch (const std::exception& e) {
        if (failure.empty()) failure = e.what();
      }
      {
        std::lock_guard<std::mutex> lock(counts_mutex);
        counts = splitter.counts();
      }
      FlushPending();  // after the counts, so a queued event is never ahead of them
    }
    if (!error && failure.empty() && !ended) {
      StartRead();
      return;
    }
    std::string message;
    if (!failure.empty()) {
      message = failure;
    } else if (closing) {
      message.clear();
    } else if (error == boost::asio::error::eof ||
               (error.category() == boost::system::system_category() && error.value() == EIO)) {
      message = "the rig on " + description + " closed the link";
    } else {
      message = "reading " + description + " failed: " + error.message();
    }
    EndReading(message);
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
    FlushPending();
    transport->Close();
    guard.reset();
    {
      std::lock_guard<std::mutex> lock(queue_mutex);
      queue_closed = true;
      close_message = message;
    }
    closed = true;
    queue_ready.notify_all();
    if (!queue_mode && on_close) {
      try {
        on_close(message);
      } catch (const std::exception&) {
        // Nothing is left to tell: the link is closed either way.
      }
    }
  }

  // Runs on the io thread: the single place bytes are written, so lines keep their order.
  void DoWrite(const std::string& line, const std::shared_ptr<std::promise<void>>& done) {
    std::string problem;
    if (ended) {
      problem = ClosedText();
    } else {
      boost::system::error_code error;
      transport->WriteAll(boost::asio::buffer(line), error);
      if (error) {
        problem = "writing to " + description + " failed: " + error.message();
        if (failure.empty()) failure = problem;
        transport->Close();  // the pending read ends with `failure`
        if (!reading) EndReading(failure);
      }
    }
    if (!done) return;
    if (problem.empty()) {
      done->set_value();
    } else {
      done->set_exception(std::make_exception_ptr(LinkError(problem)));
    }
  }

  std::string ClosedText() {
    std::lock_guard<std::mutex> lock(queue_mutex);
    return close_message.empty() ? "the link to " + description + " was closed" : close_message;
  }

  void Write(std::string line, std::unique_lock<std::mutex>& lock) {
    if (writes_stopped || closed) {
      lock.unlock();
      throw LinkError(ClosedText());
    }
    if (OnIoThread()) {
      boost::asio::post(transport->io(),
                        [this, line = std::move(line)] { DoWrite(line, nullptr); });
      return;
    }
    auto done = std::make_shared<std::promise<void>>();
    std::future<void> written = done->get_future();
    boost::asio::post(transport->io(),
                      [this, line = std::move(line), done] { DoWrite(line, done); });
    lock.unlock();
    written.get();
  }

  void DoClose() {
    transport->Close();
    if (!reading) EndReading("");
  }
};

RigLink::RigLink(std::unique_ptr<RigTransport> transport)
    : state_(std::make_unique<State>(std::move(transport))) {
  State* s = state_.get();
  s->thread = std::thread([s] { s->Run(); });
  s->io_thread = s->thread.get_id();
}

RigLink::~RigLink() {
  Close();
  if (state_->thread.joinable()) {
    if (state_->OnIoThread()) {
      state_->thread.detach();  // destroyed from its own handler: a caller's mistake
    } else {
      state_->thread.join();
    }
  }
}

void RigLink::Start(EventHandler on_event, CloseHandler on_close) {
  if (!on_event) throw UsageError("RigLink::Start needs an event handler");
  if (state_->started.exchange(true)) throw UsageError("RigLink started twice");
  State* s = state_.get();
  boost::asio::post(s->transport->io(),
                    [s, on_event = std::move(on_event), on_close = std::move(on_close)]() mutable {
                      s->on_event = std::move(on_event);
                      s->on_close = std::move(on_close);
                      if (s->ended) return;
                      s->reading = true;
                      s->StartRead();
                    });
}

void RigLink::StartQueue() {
  if (state_->started.exchange(true)) throw UsageError("RigLink started twice");
  State* s = state_.get();
  boost::asio::post(s->transport->io(), [s] {
    s->queue_mode = true;
    if (s->ended) return;
    s->reading = true;
    s->StartRead();
  });
}

std::optional<RigLineEvent> RigLink::NextEvent(std::chrono::milliseconds timeout) {
  State& s = *state_;
  std::unique_lock<std::mutex> lock(s.queue_mutex);
  s.queue_ready.wait_for(lock, timeout, [&s] { return !s.queue.empty() || s.queue_closed; });
  if (!s.queue.empty()) {
    RigLineEvent event = std::move(s.queue.front());
    s.queue.pop_front();
    return event;
  }
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
  if (s->closing.exchange(true)) {
    if (!s->OnIoThread() && s->thread.joinable()) s->thread.join();
    return;
  }
  if (s->OnIoThread()) {
    s->DoClose();
    return;
  }
  boost::asio::post(s->transport->io(), [s] { s->DoClose(); });
  if (s->thread.joinable()) s->thread.join();
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
  using boost::asio::posix::stream_descriptor;
  auto transport = std::make_unique<StreamTransport<stream_descriptor>>(std::move(description));
  boost::system::error_code error;
  transport->stream().assign(fd, error);
  if (error) {
    throw LinkError("cannot use descriptor " + std::to_string(fd) + " for " +
                    transport->description() + ": " + error.message());
  }
  return std::make_unique<RigLink>(std::move(transport));
}

}  // namespace lw
