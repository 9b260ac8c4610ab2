// A link to a rig: a serial port (USB-serial, or a pseudo-terminal such as the one
// `loopwright emulate --pty` prints) or a TCP connection, behind one interface. Reading runs on a
// background thread so a terminal display never stalls on the link; every line received goes
// through a RigLineSplitter (CRC, parse, sequence gaps, counts) as soon as it arrives (no
// batching delay: a line costs one wakeup of that thread) and the resulting events reach the
// caller either through a handler or through a thread-safe queue.
//
// A serial link reads with a blocking read(2) on a second descriptor of the device, one system
// call per line; to stop that read it installs, the first time, a handler that does nothing for
// the real-time signal SIGRTMIN + 7 and sends that signal to its own reader thread only. When
// something else in the process already handles that signal, it waits with epoll_wait instead.
//
//   auto link = OpenRigLink(ParseRigPort("/dev/ttyUSB0"), RigLinkOptions{});
//   link->StartQueue();
//   link->Send(RigMessage::Hello(0));            // SEQ is filled in by the link
//   while (auto event = link->NextEvent(std::chrono::milliseconds(500))) { ... }
//
// Errors: opening or writing a failed link throws LinkError with one sentence naming the port;
// a bad --port text or option throws UsageError.
#ifndef LOOPWRIGHT_IO_RIG_LINK_H_
#define LOOPWRIGHT_IO_RIG_LINK_H_

#include <chrono>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <string_view>

#include "io/rig_protocol.h"

namespace lw {

// Where a rig is: a serial device path, or "tcp:HOST:PORT".
struct RigPort {
  enum class Kind { kSerial, kTcp };
  Kind kind = Kind::kSerial;
  std::string device;      // kSerial: a path, e.g. /dev/ttyUSB0 or /dev/pts/5
  std::string host;        // kTcp: a name or an address (IPv6 without its brackets)
  std::uint16_t port = 0;  // kTcp: 1..65535
  // The text it was parsed from, for messages.
  std::string ToString() const;
};

// Parses --port: "tcp:HOST:PORT" (PORT 1..65535; an IPv6 host in brackets, "tcp:[::1]:5000"),
// anything else is a serial device path (not empty, no spaces). Throws UsageError, e.g.
// "--port 'tcp:localhost': expected tcp:HOST:PORT".
RigPort ParseRigPort(std::string_view text);

enum class SerialFlowControl { kNone, kHardware };

struct RigLinkOptions {
  // Serial only: bits per second; one of the standard rates 1200 .. 4000000. Always 8N1.
  unsigned baud = 115200;
  SerialFlowControl flow_control = SerialFlowControl::kNone;
  // TCP only: how long to wait for the connection, in seconds (> 0).
  double connect_timeout_s = 5.0;
  // Throws UsageError naming the field, its value and the rule.
  void Validate() const;
};

// Parses --flow text: "none" or "hardware". Throws UsageError.
SerialFlowControl ParseSerialFlowControl(std::string_view text);

// The transport under a RigLink (serial_link.h, tcp_link.h); defined in io/rig_transport.h.
class RigTransport;

class RigLink {
 public:
  using EventHandler = std::function<void(const RigLineEvent&)>;
  // Called once when reading ends: `message` is one sentence, e.g. "the rig on /dev/ttyUSB0
  // closed the link" or "reading tcp:10.0.0.7:5000 failed: Connection reset by peer"; empty
  // when Close() ended it.
  using CloseHandler = std::function<void(const std::string& message)>;

  explicit RigLink(std::unique_ptr<RigTransport> transport);
  ~RigLink();  // Close()s
  RigLink(const RigLink&) = delete;
  RigLink& operator=(const RigLink&) = delete;

  // Starts reading; call one of the two, once. Handler mode: events arrive on the link's thread
  // in stream order; handlers must be quick and may call Send/WriteLine/Close.
  void Start(EventHandler on_event, CloseHandler on_close);
  // Queue mode: events are queued for NextEvent. The reader hands each read's events over at
  // once and wakes a NextEvent caller only when one is waiting.
  void StartQueue();

  // Queue mode: the next event, waiting up to `timeout`; nullopt on timeout. Once the link has
  // closed and the queue is empty, throws LinkError with the close message (or "the link to P
  // was closed" after Close()).
  std::optional<RigLineEvent> NextEvent(std::chrono::milliseconds timeout);

  // Encodes the message with the link's next outgoing SEQ (0, 1, 2, ... wrapping at 2^32),
  // writes it and returns the SEQ used. Thread-safe; lines go out in SEQ order. From any thread
  // but the link's own it returns when the bytes were handed to the operating system, and throws
  // UsageError (EncodeRigLine) or LinkError when writing fails or the link is closed. From a
  // handler it queues the line and returns at once; the line is written as soon as the handler
  // returns, and a failed write closes the link (the close message says why).
  std::uint32_t Send(RigMessage message);
  // Writes a complete line as is (it must end in "\n"); no SEQ bookkeeping. Thread-safe, and
  // waits or queues exactly as Send does.
  void WriteLine(std::string_view line);

  // Stops reading, closes the port and joins the link's thread. Idempotent. May be called from
  // a handler: then it stops reading and the destructor joins the thread.
  void Close();
  // True once reading ended (the rig closed the link, an error, or Close()).
  bool closed() const;

  // A snapshot of the incoming stream's counts, updated once per read: in queue mode it already
  // counts every event NextEvent can return; in handler mode it catches up when the handlers of
  // that read have returned.
  RigStreamCounts counts() const;
  // The port, as text, for messages.
  const std::string& description() const;

 private:
  struct State;
  std::unique_ptr<State> state_;
};

// Opens the port: a serial device (serial_link.h) or a TCP connection (tcp_link.h). Throws
// LinkError("cannot open /dev/ttyUSB0: No such file or directory") and the like.
std::unique_ptr<RigLink> OpenRigLink(const RigPort& port, const RigLinkOptions& options);

// A link over an already-open file descriptor that the link then owns: a pseudo-terminal master,
// an accepted socket, one end of a socketpair. Used by the emulator and by tests.
std::unique_ptr<RigLink> AdoptRigLinkDescriptor(int fd, std::string description);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_LINK_H_
