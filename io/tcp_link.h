// TCP transport for a RigLink: a client connection to a rig's Ethernet or Wi-Fi bridge, or to
// `loopwright emulate --listen tcp:127.0.0.1:PORT`. Nagle's algorithm is off so each line goes
// out at once.
#ifndef LOOPWRIGHT_IO_TCP_LINK_H_
#define LOOPWRIGHT_IO_TCP_LINK_H_

#include <cstdint>
#include <memory>
#include <string>

#include "io/rig_link.h"

namespace lw {

// Resolves HOST and connects to the first address that answers, waiting up to timeout_s seconds
// in all. Throws LinkError("cannot connect to tcp:HOST:PORT: <reason>"), the reason "timed out
// after 5 s" when nothing answered in time.
std::unique_ptr<RigTransport> ConnectTcpTransport(const std::string& host, std::uint16_t port,
                                                  double timeout_s);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_TCP_LINK_H_
