#include "app/rig_progress.h"

#include <unistd.h>

#include <ostream>

#include "app/output.h"

namespace lw::app {

RigProgress::RigProgress(Context& ctx, const RigSession& session)
    : ctx_(ctx), session_(session), enabled_(isatty(STDERR_FILENO) == 1 && !session.dry_run()) {}

RigProgress::~RigProgress() { End(); }

void RigProgress::Show(const std::string& phase, double time_left_s) {
  if (!enabled_) return;
  RigSessionStats s = session_.stats();
  std::string line = phase + "  " + std::to_string(s.samples) + " samples";
  double span = s.last_t_s - s.first_t_s;
  if (s.samples > 1 && span > 0.0) {
    line += "  " + FormatNumber(static_cast<double>(s.samples - 1) / span, 4) + " Hz";
  }
  if (s.last) {
    line += "  t " + FormatNumber(s.last_t_s, 6) + " s  r " + FormatNumber(s.last->reference) +
            " u " + FormatNumber(s.last->actuator) + " y " + FormatNumber(s.last->output);
  }
  line += "  lost " + std::to_string(s.lost) + "  corrupted " + std::to_string(s.corrupted);
  if (std::isfinite(time_left_s)) line += "  left ~" + FormatNumber(time_left_s, 3) + " s";
  ctx_.err << "\r" << line << "\x1b[K" << std::flush;
  open_ = true;
}

void RigProgress::End() {
  if (!open_) return;
  ctx_.err << "\n" << std::flush;
  open_ = false;
}

}  // namespace lw::app
