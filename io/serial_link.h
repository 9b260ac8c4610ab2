// Serial transport for a RigLink: boost::asio::serial_port in raw mode, 8 data bits, no parity,
// one stop bit (8N1), at a standard baud rate, with no or hardware (RTS/CTS) flow control. It
// also opens a pseudo-terminal's slave path (what `loopwright emulate --pty` prints), where the
// rate is accepted and has no effect. Raw mode with MIN 1 and TIME 0 (a read returns as soon as
// a byte is there). The device is opened a second time, blocking, for the link's reader thread
// (rig_transport.h); when that fails the link reads the first descriptor after epoll_wait.
#ifndef LOOPWRIGHT_IO_SERIAL_LINK_H_
#define LOOPWRIGHT_IO_SERIAL_LINK_H_

#include <memory>
#include <string>

#include "io/rig_link.h"

namespace lw {

// The rates RigLinkOptions::baud accepts: 1200, 2400, 4800, 9600, 19200, 38400, 57600, 115200,
// 230400, 460800, 500000, 576000, 921600, 1000000, 1152000, 1500000, 2000000, 2500000, 3000000,
// 3500000, 4000000.
bool IsStandardBaud(unsigned baud);

// Opens and configures the device. Throws LinkError("cannot open /dev/ttyUSB0: <reason>") or
// LinkError("cannot set 115200 baud on /dev/ttyUSB0: <reason>").
std::unique_ptr<RigTransport> OpenSerialTransport(const std::string& device, unsigned baud,
                                                  SerialFlowControl flow_control);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_SERIAL_LINK_H_
