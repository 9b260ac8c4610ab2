// The phases the hardware commands are made of, on an open, connected rig session:
//
//   WaitForRest     wait until the output is at rest after a change (identify/steady_state.h,
//                   `--settle auto`; drift band 2 % of the change after a step, 0.2 % in a hold
//                   before one) or for a fixed time (`--settle S`), at most max_wait_s of
//                   rig time (JobFailed after that: "did not come to rest within ...; give
//                   --settle S or a larger --max-wait")
//   RunOpenLoopStep the step test: go; hold `from` until at rest; start the recording; a
//                   baseline of at least 30 samples (a quarter of a fixed settle time when that
//                   is longer); step to `to`; record until at rest; stop the recording; back to
//                   `from`; halt
//   RunClosedLoopStep the closed-loop step of verify and tune: go; loop C K A; hold until at
//                   rest; start the recording; baseline; ref B; record until at rest; stop the
//                   recording; halt
// Recordings are io/recording_sink.h files (t, r, u, y, seq) with a provenance line. With a
// dry-run session every line is printed and nothing waits; no file is written.
#ifndef LOOPWRIGHT_APP_RIG_PHASES_H_
#define LOOPWRIGHT_APP_RIG_PHASES_H_

#include <algorithm>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/rig_progress.h"
#include "io/rig_session.h"

namespace lw::app {

struct PhaseTiming {
  std::optional<double> settle_s;  // fixed seconds per phase; none: auto
  double max_wait_s = 3600.0;      // rig seconds per phase, > 0
  double min_hold_s = 0.0;         // the hold before a step lasts at least this long (s)
  double min_response_s = 0.0;     // the response recorded after the step lasts at least this
                                   // long (s): a slow response can look at rest while it still
                                   // creeps towards its final value

  // A closed-loop step judged by `check` against a prediction that settles in `settle_s`
  // seconds (0: none known): the hold before the step lasts at least the settling time (the
  // check assumes the loop at rest before it) and the response at least twice it (the tail the
  // check takes the final value from, the last fifth of the record in lti/step_metrics.h, then
  // lies past settling); neither shorter than `floor_s`.
  void CoverSettling(double settle_s, double floor_s = 0.0) {
    min_hold_s = std::max(floor_s, settle_s);
    min_response_s = std::max(floor_s, 2.0 * settle_s);
  }
};

// "auto" or a number of seconds > 0; UsageError naming --settle otherwise.
std::optional<double> ParseSettle(const std::string& text);

// Waits for rest of the output after the change at sample index `begin` (the level before it
// is the mean y of the up to 20 samples before `begin`, or the first sample's y).
void WaitForRest(RigSession& s, RigProgress& progress, const std::string& phase, size_t begin,
                 const PhaseTiming& timing, bool require_change);

struct StepOutcome {
  std::string path;           // the recording ("" in a dry run)
  uint64_t samples = 0;       // rows written
  double step_time_s = 0.0;   // rig time of the first sample after the step (s)
  double level_before = 0.0;  // mean y of the baseline before the step
  double level_after = 0.0;   // mean y of the last 30 samples of the recording
  double duration_s = 0.0;    // rig seconds recorded
};

StepOutcome RunOpenLoopStep(Context& ctx, RigSession& s, double from, double to,
                            const PhaseTiming& timing, const std::string& path,
                            const std::string& provenance);

StepOutcome RunClosedLoopStep(Context& ctx, RigSession& s, const std::string& controller,
                              double gain, double ref_from, double ref_to,
                              const PhaseTiming& timing, const std::string& path,
                              const std::string& provenance);

// Prints the recording's summary (path, rows, rig, rig time, lost and corrupted lines) on
// ctx.out and returns it as JSON for the logbook.
nlohmann::json RecordingSummary(Context& ctx, const RigSession& s, const std::string& path,
                                uint64_t rows);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_RIG_PHASES_H_
