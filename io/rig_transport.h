// The byte stream under a RigLink (rig_link.h): one open file descriptor (a serial port, a
// pseudo-terminal, a TCP socket, one end of a socketpair) that the transport owns, in
// non-blocking mode. Opening and configuring use Boost.Asio (serial_link.cc, tcp_link.cc);
// reading and writing are plain read(2) and write(2) (send(2) on sockets) on the link's threads,
// which wait with epoll_wait(2) (rig_link.cc) or poll(2), so a line costs one wakeup and two
// system calls and nothing else. A serial transport may also hold a second, blocking descriptor
// of the same device for the reader alone, so that a line costs one read(2) and no wait call
// (rig_link.cc explains how that reader is stopped). Internal to io/.
#ifndef LOOPWRIGHT_IO_RIG_TRANSPORT_H_
#define LOOPWRIGHT_IO_RIG_TRANSPORT_H_

#include <cstddef>
#include <string>

namespace lw {

class RigTransport {
 public:
  // Takes ownership of `fd` and puts it in non-blocking mode. Throws LinkError("cannot use
  // descriptor 7 for DESCRIPTION: <reason>") when fd is not an open descriptor (it is closed).
  RigTransport(int fd, std::string description);
  ~RigTransport();  // Close()s
  RigTransport(const RigTransport&) = delete;
  RigTransport& operator=(const RigTransport&) = delete;

  // The port as text, e.g. "/dev/ttyUSB0" or "tcp:10.0.0.7:5000".
  const std::string& description() const { return description_; }
  // The descriptor; -1 once closed.
  int fd() const { return fd_; }

  // One read(2) of up to `size` bytes: > 0 bytes read, 0 at end of stream, -1 with errno set
  // (EAGAIN when nothing is there yet).
  long ReadSome(char* data, std::size_t size);
  // Writes every byte, waiting with poll(2) while the operating system's buffer is full. Returns
  // 0, or an errno value: the write failed, or ECANCELED when `stop_fd` (an eventfd, or -1 for
  // none) became readable while waiting. Sockets are written with MSG_NOSIGNAL, so a peer that
  // has gone gives EPIPE rather than SIGPIPE.
  int WriteAll(const char* data, std::size_t size, int stop_fd);
  // Closes the descriptor (and a blocking reader not yet released). Idempotent; not concurrent
  // with ReadSome or WriteAll.
  void Close();

  // A second descriptor of the same device, opened on its own so that it has its own open file
  // description: O_NONBLOCK belongs to that description (dup(2) would share it), so this one can
  // block in read(2) while fd() stays non-blocking for WriteAll. Takes ownership of `fd`.
  void SetBlockingReader(int fd);
  // Hands the blocking reader's descriptor to the caller, who then closes it; -1 when there is
  // none (sockets, adopted descriptors, or a device that could not be opened twice).
  int ReleaseBlockingReader();

 private:
  int fd_ = -1;
  int blocking_reader_ = -1;
  bool socket_ = false;
  std::string description_;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_TRANSPORT_H_
