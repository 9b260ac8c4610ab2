#include "io/serial_link.h"

// Boost 1.74's Asio uses std::exchange without including <utility> in C++20 mode.
#include <utility>

#include <fcntl.h>
#include <termios.h>
#include <unistd.h>

#include <algorithm>
#include <array>
#include <boost/asio/io_context.hpp>
#include <boost/asio/serial_port.hpp>
#include <cerrno>
#include <cstring>

#include "io/rig_transport.h"
#include "lti/error.h"

namespace lw {
namespace {

constexpr std::array<unsigned, 21> kStandardBauds = {
    1200,   2400,   4800,    9600,    19200,   38400,   57600,   115200,  230400,  460800, 500000,
    576000, 921600, 1000000, 1152000, 1500000, 2000000, 2500000, 3000000, 3500000, 4000000};

// The reader's own descriptor of the device, in blocking mode (rig_transport.h), or -1: then the
// link waits with epoll_wait on `fd` instead, as it does for every other transport. A blocking
// read(2) in raw mode returns once MIN bytes are there, so MIN is set to 1 and TIME to 0 (what
// cfmakeraw sets): a read returns as soon as one byte arrived, and never 0 for lack of data.
int OpenBlockingReader(const std::string& device, int fd) {
  termios settings{};
  if (::tcgetattr(fd, &settings) != 0) return -1;
  if (settings.c_cc[VMIN] != 1 || settings.c_cc[VTIME] != 0) {
    settings.c_cc[VMIN] = 1;
    settings.c_cc[VTIME] = 0;
    if (::tcsetattr(fd, TCSANOW, &settings) != 0) return -1;
  }
  // Opened non-blocking so that a modem line without carrier does not hold the open; then made
  // blocking, which changes only this descriptor's own open file description.
  const int reader = ::open(device.c_str(), O_RDONLY | O_NOCTTY | O_CLOEXEC | O_NONBLOCK);
  if (reader < 0) return -1;
  const int flags = ::fcntl(reader, F_GETFL);
  if (flags < 0 || ::fcntl(reader, F_SETFL, flags & ~O_NONBLOCK) != 0 || !::isatty(reader)) {
    ::close(reader);
    return -1;
  }
  return reader;
}

}  // namespace

bool IsStandardBaud(unsigned baud) {
  return std::find(kStandardBauds.begin(), kStandardBauds.end(), baud) != kStandardBauds.end();
}

std::unique_ptr<RigTransport> OpenSerialTransport(const std::string& device, unsigned baud,
                                                  SerialFlowControl flow_control) {
  using boost::asio::serial_port;
  boost::asio::io_context io;
  serial_port port(io);
  boost::system::error_code error;
  port.open(device, error);
  if (error) throw LinkError("cannot open " + device + ": " + error.message());
  const auto flow = flow_control == SerialFlowControl::kHardware
                        ? serial_port::flow_control::hardware
                        : serial_port::flow_control::none;
  if (port.set_option(serial_port::baud_rate(baud), error); error) {
    throw LinkError("cannot set " + std::to_string(baud) + " baud on " + device + ": " +
                    error.message());
  }
  const char* step = "8N1";
  if (!port.set_option(serial_port::character_size(8), error) &&
      !port.set_option(serial_port::parity(serial_port::parity::none), error) &&
      !port.set_option(serial_port::stop_bits(serial_port::stop_bits::one), error)) {
    step = "flow control";
    port.set_option(serial_port::flow_control(flow), error);
  }
  if (error) {
    throw LinkError(std::string("cannot set ") + step + " on " + device + ": " + error.message());
  }
  // The link reads and writes the descriptor itself (rig_transport.h); Asio's copy closes here.
  const int fd = ::dup(port.native_handle());
  if (fd < 0) throw LinkError("cannot open " + device + ": " + std::strerror(errno));
  auto transport = std::make_unique<RigTransport>(fd, device);
  transport->SetBlockingReader(OpenBlockingReader(device, fd));
  return transport;
}

}  // namespace lw
