// Opening the rig session a hardware command works in: the link named by the resolved options
// (app/rig_options.h) or, with --dry-run, a printer that writes every line the command would
// send on ctx.out ("would send: u 0 55 *1A2B"), with the limits and the stop flag attached.
#ifndef LOOPWRIGHT_APP_RIG_CONNECT_H_
#define LOOPWRIGHT_APP_RIG_CONNECT_H_

#include <atomic>
#include <memory>

#include "app/command.h"
#include "app/rig_options.h"
#include "app/stop_signal.h"
#include "io/rig_session.h"

namespace lw::app {

// Opens the link (LinkError when it cannot be opened) or the dry-run printer; no line is sent
// yet. `stop` is the StopSignalGuard's flag (may be null).
std::unique_ptr<RigSession> OpenRigSession(Context& ctx, const ResolvedRig& rig,
                                           const std::atomic<int>* stop);

// What every hardware command does first: the cautions when it drives the actuator
// (PrintCautions), the session (OpenRigSession with the guard's flag) and the hello/caps
// handshake (RigSession::Connect; the caps are then session->caps()).
std::unique_ptr<RigSession> ConnectRig(Context& ctx, const ResolvedRig& rig,
                                       const StopSignalGuard& guard, bool drives);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_RIG_CONNECT_H_
