// Ctrl-C and SIGTERM while a command drives a rig: the handler only stores the signal number;
// the rig session (io/rig_session.h) sees it, sends the safe stop and ends the job, and the
// recording is closed after that. While a StopSignalGuard lives, SIGINT and SIGTERM are caught;
// its destructor restores the previous handlers.
#ifndef LOOPWRIGHT_APP_STOP_SIGNAL_H_
#define LOOPWRIGHT_APP_STOP_SIGNAL_H_

#include <signal.h>

#include <atomic>

namespace lw::app {

class StopSignalGuard {
 public:
  StopSignalGuard();
  ~StopSignalGuard();
  StopSignalGuard(const StopSignalGuard&) = delete;
  StopSignalGuard& operator=(const StopSignalGuard&) = delete;

  // 0 until SIGINT or SIGTERM arrives, then that signal's number.
  const std::atomic<int>& flag() const;

 private:
  struct sigaction old_int_ {};
  struct sigaction old_term_ {};
};

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_STOP_SIGNAL_H_
