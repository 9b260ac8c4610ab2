#include "io/rig_transport.h"

#include <fcntl.h>
#include <poll.h>
#include <sys/socket.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <utility>

#include "lti/error.h"

namespace lw {

RigTransport::RigTransport(int fd, std::string description) : description_(std::move(description)) {
  const int flags = fd < 0 ? -1 : fcntl(fd, F_GETFL);
  struct stat info {};
  if (flags < 0 || fcntl(fd, F_SETFL, flags | O_NONBLOCK) != 0 || fstat(fd, &info) != 0) {
    const int error = fd < 0 ? EBADF : errno;
    if (fd >= 0) ::close(fd);  // it was handed over either way
    throw LinkError("cannot use descriptor " + std::to_string(fd) + " for " + description_ + ": " +
                    std::strerror(error));
  }
  fd_ = fd;
  socket_ = S_ISSOCK(info.st_mode);
}

RigTransport::~RigTransport() { Close(); }

long RigTransport::ReadSome(char* data, std::size_t size) {
  return static_cast<long>(::read(fd_, data, size));
}

int RigTransport::WriteAll(const char* data, std::size_t size, int stop_fd) {
  while (size > 0) {
    const ssize_t n = socket_ ? ::send(fd_, data, size, MSG_NOSIGNAL) : ::write(fd_, data, size);
    if (n > 0) {
      data += n;
      size -= static_cast<std::size_t>(n);
      continue;
    }
    if (n < 0 && errno == EINTR) continue;
    if (n == 0 || (errno != EAGAIN && errno != EWOULDBLOCK)) return n == 0 ? EIO : errno;
    pollfd wait[2] = {{fd_, POLLOUT, 0}, {stop_fd, POLLIN, 0}};
    if (::poll(wait, stop_fd < 0 ? 1 : 2, -1) < 0 && errno != EINTR) return errno;
    if (stop_fd >= 0 && (wait[1].revents & POLLIN)) return ECANCELED;
  }
  return 0;
}

void RigTransport::Close() {
  if (blocking_reader_ >= 0) ::close(std::exchange(blocking_reader_, -1));
  if (fd_ < 0) return;
  ::close(fd_);
  fd_ = -1;
}

void RigTransport::SetBlockingReader(int fd) {
  if (blocking_reader_ >= 0) ::close(blocking_reader_);
  blocking_reader_ = fd;
}

int RigTransport::ReleaseBlockingReader() { return std::exchange(blocking_reader_, -1); }

}  // namespace lw
