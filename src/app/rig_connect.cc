#include "app/rig_connect.h"

#include <ostream>

#include "io/rig_link.h"

namespace lw::app {

std::unique_ptr<RigSession> OpenRigSession(Context& ctx, const ResolvedRig& rig,
                                           const std::atomic<int>* stop) {
  RigSessionOptions o;
  o.heartbeat = std::chrono::milliseconds(rig.heartbeat_ms);
  o.stop_request = stop;
  if (rig.dry_run) {
    std::ostream* out = &ctx.out;
    ctx.out << "dry run: nothing is opened or sent"
            << (rig.port.empty() ? std::string() : " (port " + rig.port + ")")
            << "; the lines it would send, in order (a beat line also goes out whenever no "
               "other line did for the heartbeat interval):\n";
    return std::make_unique<RigSession>(
        [out](const std::string& line) { *out << "would send: " << line << "\n"; }, rig.limits, o);
  }
  RigLinkOptions lo;
  lo.baud = rig.baud;
  lo.flow_control = ParseSerialFlowControl(rig.flow);
  lo.Validate();
  return std::make_unique<RigSession>(OpenRigLink(ParseRigPort(rig.port), lo), rig.limits, o);
}

std::unique_ptr<RigSession> ConnectRig(Context& ctx, const ResolvedRig& rig,
                                       const StopSignalGuard& guard, bool drives) {
  const bool cautioned = drives && PrintCautions(ctx, rig);
  std::unique_ptr<RigSession> session = OpenRigSession(ctx, rig, &guard.flag());
  session->Connect();
  if (cautioned) RememberCautions(ctx, rig);
  return session;
}

}  // namespace lw::app
