#include "app/stop_signal.h"

namespace lw::app {
namespace {

std::atomic<int> g_stop{0};
static_assert(std::atomic<int>::is_always_lock_free, "the signal handler needs a lock-free int");

extern "C" void OnStopSignal(int sig) { g_stop.store(sig); }

}  // namespace

StopSignalGuard::StopSignalGuard() {
  g_stop.store(0);
  struct sigaction sa {};
  sa.sa_handler = OnStopSignal;
  sigemptyset(&sa.sa_mask);
  sa.sa_flags = 0;  // no SA_RESTART: a blocking read returns and the loop sees the flag
  sigaction(SIGINT, &sa, &old_int_);
  sigaction(SIGTERM, &sa, &old_term_);
}

StopSignalGuard::~StopSignalGuard() {
  sigaction(SIGINT, &old_int_, nullptr);
  sigaction(SIGTERM, &old_term_, nullptr);
}

const std::atomic<int>& StopSignalGuard::flag() const { return g_stop; }

}  // namespace lw::app
