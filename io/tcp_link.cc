#include "io/tcp_link.h"

// Boost 1.74's Asio uses std::exchange without including <utility> in C++20 mode.
#include <utility>

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <chrono>
#include <optional>

#include "io/rig_transport.h"
#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {

std::unique_ptr<RigTransport> ConnectTcpTransport(const std::string& host, std::uint16_t port,
                                                  double timeout_s) {
  using boost::asio::ip::tcp;
  RigPort where;
  where.kind = RigPort::Kind::kTcp;
  where.host = host;
  where.port = port;
  const std::string name = where.ToString();
  boost::asio::io_context io;
  tcp::socket socket(io);

  boost::system::error_code error;
  tcp::resolver resolver(io);
  const auto endpoints = resolver.resolve(host, std::to_string(port), error);
  if (error) throw LinkError("cannot connect to " + name + ": " + error.message());

  std::optional<boost::system::error_code> result;
  boost::asio::async_connect(
      socket, endpoints,
      [&result](const boost::system::error_code& e, const tcp::endpoint&) { result = e; });
  io.run_for(std::chrono::duration_cast<std::chrono::steady_clock::duration>(
      std::chrono::duration<double>(timeout_s)));
  if (!result) {
    socket.close(error);
    io.restart();
    io.run();  // lets the aborted connect finish
    throw LinkError("cannot connect to " + name + ": timed out after " +
                    SignificantText(timeout_s, 3) + " s");
  }
  if (*result) throw LinkError("cannot connect to " + name + ": " + result->message());
  socket.set_option(tcp::no_delay(true), error);
  // The link reads and writes the descriptor itself (rig_transport.h).
  const int fd = socket.release(error);
  if (error) throw LinkError("cannot connect to " + name + ": " + error.message());
  return std::make_unique<RigTransport>(fd, name);
}

}  // namespace lw
