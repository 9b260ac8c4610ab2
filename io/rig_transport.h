// The byte stream under a RigLink (rig_link.h): a Boost.Asio serial port, TCP socket or POSIX
// descriptor with its own io_context. Internal to io/: serial_link.cc, tcp_link.cc and
// rig_link.cc include it; nothing else needs Asio.
#ifndef LOOPWRIGHT_IO_RIG_TRANSPORT_H_
#define LOOPWRIGHT_IO_RIG_TRANSPORT_H_

// Boost 1.74's Asio uses std::exchange without including <utility> in C++20 mode.
#include <utility>

#include <boost/asio.hpp>
#include <cstddef>
#include <functional>
#include <string>
#include <utility>

namespace lw {

class RigTransport {
 public:
  using ReadHandler = std::function<void(const boost::system::error_code&, std::size_t)>;

  explicit RigTransport(std::string description) : description_(std::move(description)) {}
  virtual ~RigTransport() = default;
  RigTransport(const RigTransport&) = delete;
  RigTransport& operator=(const RigTransport&) = delete;

  // The context every operation runs on; RigLink runs it on its thread.
  boost::asio::io_context& io() { return io_; }
  // The port as text, e.g. "/dev/ttyUSB0" or "tcp:10.0.0.7:5000".
  const std::string& description() const { return description_; }

  // Starts one read of up to buffer.size() bytes; the handler runs on io().
  virtual void AsyncReadSome(boost::asio::mutable_buffer buffer, ReadHandler handler) = 0;
  // Writes every byte (blocking; call on io()'s thread).
  virtual void WriteAll(boost::asio::const_buffer buffer, boost::system::error_code& error) = 0;
  // Cancels pending reads (their handlers see operation_aborted) and closes. Idempotent.
  virtual void Close() = 0;

 protected:
  boost::asio::io_context io_;

 private:
  std::string description_;
};

// A transport over any Asio stream (serial_port, ip::tcp::socket, posix::stream_descriptor)
// constructed on the transport's io_context.
template <typename Stream>
class StreamTransport : public RigTransport {
 public:
  explicit StreamTransport(std::string description)
      : RigTransport(std::move(description)), stream_(io_) {}

  Stream& stream() { return stream_; }

  void AsyncReadSome(boost::asio::mutable_buffer buffer, ReadHandler handler) override {
    stream_.async_read_some(buffer, std::move(handler));
  }
  void WriteAll(boost::asio::const_buffer buffer, boost::system::error_code& error) override {
    boost::asio::write(stream_, buffer, error);
  }
  void Close() override {
    boost::system::error_code ignored;
    if (stream_.is_open()) stream_.close(ignored);
  }

 private:
  Stream stream_;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_TRANSPORT_H_
