// The live progress line of a hardware command: on a terminal (stderr), one line rewritten in
// place about ten times a second,
//   step 1250 samples  100 Hz  t 12.5 s  r 0 u 55 y 1.154  lost 0  corrupted 0  left ~8 s
// and nothing at all when stderr is not a terminal (logs and tests stay quiet).
#ifndef LOOPWRIGHT_APP_RIG_PROGRESS_H_
#define LOOPWRIGHT_APP_RIG_PROGRESS_H_

#include <cmath>
#include <string>

#include "app/command.h"
#include "io/rig_session.h"

namespace lw::app {

class RigProgress {
 public:
  RigProgress(Context& ctx, const RigSession& session);
  ~RigProgress();  // ends the line
  // Rewrites the line for `phase`; time_left_s NaN when unknown.
  void Show(const std::string& phase, double time_left_s = NAN);
  // Ends the line (a newline) so other output starts on its own line.
  void End();
  bool enabled() const { return enabled_; }

 private:
  Context& ctx_;
  const RigSession& session_;
  bool enabled_ = false;
  bool open_ = false;
};

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_RIG_PROGRESS_H_
