#include "app/rig_phases.h"

#include <algorithm>
#include <cmath>
#include <functional>
#include <memory>
#include <vector>

#include "app/output.h"
#include "identify/steady_state.h"
#include "io/recording_sink.h"
#include "io/rig_link.h"
#include "lti/error.h"

namespace lw::app {
namespace {

constexpr size_t kBaselineSamples = 30;

double Seconds(const RigSample& s) { return static_cast<double>(s.t_us) / 1e6; }

// The mean output of samples [first, last).
double MeanOutput(const std::vector<RigSample>& samples, size_t first, size_t last) {
  double sum = 0.0;
  for (size_t k = first; k < last; ++k) sum += samples[k].output;
  return last > first ? sum / static_cast<double>(last - first) : NAN;
}

void WaitFirstSample(RigSession& s, RigProgress& progress) {
  s.WaitUntil([&] { return !s.samples().empty(); }, [&] { progress.Show("waiting for samples"); });
}

// Records at least `count` more samples (and `seconds` more rig time).
void RecordBaseline(RigSession& s, RigProgress& progress, size_t count, double seconds) {
  const size_t start = s.samples().size();
  const double t0 = start ? Seconds(s.samples().back()) : 0.0;
  s.WaitUntil(
      [&] {
        return s.samples().size() >= start + count && Seconds(s.samples().back()) - t0 >= seconds;
      },
      [&] { progress.Show("baseline"); });
}

std::unique_ptr<RecordingSink> StartRecording(RigSession& s, const std::string& path,
                                              const std::string& provenance) {
  if (s.dry_run()) return nullptr;
  RecordingSinkOptions o;
  o.provenance = provenance;
  auto sink = std::make_unique<RecordingSink>(path, o);
  s.AttachRecording(sink.get());
  return sink;
}

void StopRecording(RigSession& s, std::unique_ptr<RecordingSink>& sink, StepOutcome& out) {
  if (!sink) return;
  s.AttachRecording(nullptr);
  out.samples = sink->samples();
  sink->Close();
}

}  // namespace

std::optional<double> ParseSettle(const std::string& text) {
  if (text == "auto") return std::nullopt;
  try {
    size_t used = 0;
    double v = std::stod(text, &used);
    if (used == text.size() && std::isfinite(v) && v > 0.0) return v;
  } catch (const std::exception&) {
  }
  throw UsageError("--settle '" + text + "': expected auto or a number of seconds > 0");
}

void WaitForRest(RigSession& s, RigProgress& progress, const std::string& phase, size_t begin,
                 const PhaseTiming& timing, bool require_change) {
  if (s.dry_run()) return;
  const std::vector<RigSample>& all = s.samples();
  const double t_begin = begin < all.size() ? Seconds(all[begin]) : Seconds(all.back());
  if (timing.settle_s) {
    const double need = *timing.settle_s;
    s.WaitUntil(
        [&] { return !all.empty() && Seconds(all.back()) - t_begin >= need; },
        [&] { progress.Show(phase, need - (all.empty() ? 0.0 : Seconds(all.back()) - t_begin)); });
    return;
  }
  // The level before the change: the mean of up to 20 samples before it (one noisy sample
  // would make the change look larger or smaller than it is).
  const size_t stop = std::max<size_t>(1, std::min(begin, all.size()));
  const size_t first = stop > 20 ? stop - 20 : 0;
  double level = 0.0;
  for (size_t k = first; k < stop; ++k) level += all[k].output;
  level /= static_cast<double>(stop - first);
  SteadyStateOptions o;
  o.require_change = require_change;
  // A hold before a step must be truly at rest (the fit and the check assume the step starts
  // from rest): a tenth of the band a response is judged settled by.
  if (phase.rfind("hold", 0) == 0 || phase.rfind("closed loop", 0) == 0) o.band = 0.002;
  std::vector<double> y;
  size_t used = begin;
  s.WaitUntil(
      [&] {
        if (all.size() == used) return false;
        for (; used < all.size(); ++used) y.push_back(all[used].output);
        if (TestSteadyState(y, 0, level, o).at_rest) return true;
        if (Seconds(all.back()) - t_begin > timing.max_wait_s) {
          throw JobFailed("the output did not come to rest within " +
                          FormatNumber(timing.max_wait_s, 6) + " s (" + phase +
                          "); give --settle S or a larger --max-wait");
        }
        return false;
      },
      [&] { progress.Show(phase); });
}

namespace {

struct StepActions {
  std::function<bool()> start;  // true: the hold must see the output move before it rests
  std::function<void()> step, finish;
  std::function<bool(const RigSample&)> shows_step;  // a sample taken after the step
  std::string hold_phase, step_phase, note;
};

// go; start() and hold until at rest; record a baseline; step(); record until at rest; finish();
// halt. The recording holds the baseline and the response.
StepOutcome RunStep(Context& ctx, RigSession& s, const PhaseTiming& timing, const std::string& path,
                    const std::string& provenance, const StepActions& a) {
  RigProgress progress(ctx, s);
  StepOutcome out;
  s.SetStreaming(true);
  WaitFirstSample(s, progress);
  size_t begin = s.samples().size();
  const bool moved = a.start();
  WaitForRest(s, progress, a.hold_phase, begin, timing, moved);
  if (!s.dry_run() && timing.min_hold_s > 0.0) {
    const double t0 = Seconds(s.samples()[std::min(begin, s.samples().size() - 1)]);
    s.WaitUntil([&] { return Seconds(s.samples().back()) - t0 >= timing.min_hold_s; },
                [&] { progress.Show(a.hold_phase); });
  }
  auto sink = StartRecording(s, path, provenance);
  const size_t baseline = s.samples().size();
  double baseline_s = timing.settle_s ? *timing.settle_s / 4.0 : 0.0;
  RecordBaseline(s, progress, s.dry_run() ? 0 : kBaselineSamples, baseline_s);
  size_t step = s.samples().size();
  // The mean, not the last sample: a closed loop run towards one noisy sample would first have
  // to move there.
  if (!s.dry_run()) out.level_before = MeanOutput(s.samples(), baseline, step);
  s.Note(a.note);
  a.step();
  if (!s.dry_run()) {
    // The step's rig time: the first sample that shows it (the rig acts on a line at its next
    // instant; the host's own delay does not count).
    size_t k = step;
    s.WaitUntil([&] {
      for (; k < s.samples().size(); ++k) {
        if (a.shows_step(s.samples()[k])) return true;
      }
      return false;
    });
    out.step_time_s = Seconds(s.samples()[k]);
  }
  // A slow response can look at rest just after it starts to move, or while it still creeps
  // towards its final value; the response is recorded for at least min_response_s (tune: the
  // step test's length, and twice the predicted settling time in closed loop).
  if (!s.dry_run() && timing.min_response_s > 0.0) {
    s.WaitUntil(
        [&] { return Seconds(s.samples().back()) - out.step_time_s >= timing.min_response_s; },
        [&] { progress.Show(a.step_phase); });
  }
  WaitForRest(s, progress, a.step_phase, step, timing, true);
  progress.End();
  StopRecording(s, sink, out);
  if (!s.dry_run()) {
    const size_t n = s.samples().size();
    out.level_after = MeanOutput(s.samples(), n - std::min(n - step, kBaselineSamples), n);
    out.duration_s = Seconds(s.samples().back()) - out.step_time_s;
  }
  if (a.finish) a.finish();
  s.SetStreaming(false);
  out.path = s.dry_run() ? std::string() : path;
  return out;
}

}  // namespace

StepOutcome RunOpenLoopStep(Context& ctx, RigSession& s, double from, double to,
                            const PhaseTiming& timing, const std::string& path,
                            const std::string& provenance) {
  StepActions a;
  a.start = [&] {
    // Moving the actuator to `from`: wait for the output to answer (a dead time looks like rest).
    bool moves = !s.samples().empty() && s.samples().back().actuator != from;
    s.SetActuator(from);
    return moves;
  };
  a.step = [&] { s.SetActuator(to); };
  a.finish = [&] { s.SetActuator(from); };
  a.shows_step = [&](const RigSample& x) {
    return std::abs(x.actuator - to) <= 0.5 * std::abs(to - from);
  };
  a.hold_phase = "hold at " + FormatNumber(from, 6);
  a.step_phase = "step to " + FormatNumber(to, 6);
  a.note = "step: actuator " + FormatNumber(from, 9) + " -> " + FormatNumber(to, 9);
  return RunStep(ctx, s, timing, path, provenance, a);
}

StepOutcome RunClosedLoopStep(Context& ctx, RigSession& s, const std::string& controller,
                              double gain, double ref_from, double ref_to,
                              const PhaseTiming& timing, const std::string& path,
                              const std::string& provenance) {
  StepActions a;
  a.start = [&] {
    s.CloseLoop(controller, gain, ref_from);
    return false;
  };
  a.step = [&] { s.SetReference(ref_to); };
  a.shows_step = [&](const RigSample& x) {
    return std::abs(x.reference - ref_to) <= 0.5 * std::abs(ref_to - ref_from);
  };
  a.hold_phase = "closed loop at " + FormatNumber(ref_from, 6);
  a.step_phase = "reference " + FormatNumber(ref_to, 6);
  a.note = "reference step: " + FormatNumber(ref_from, 9) + " -> " + FormatNumber(ref_to, 9);
  return RunStep(ctx, s, timing, path, provenance, a);
}

// The summary every recording command prints at its end and logs.
nlohmann::json RecordingSummary(Context& ctx, const RigSession& s, const std::string& path,
                                uint64_t rows) {
  RigSessionStats st = s.stats();
  KeyValueList kv;
  kv.Add("recording", path + " (" + std::to_string(rows) + " samples)");
  kv.Add("rig", s.caps().name + " on " + s.port());
  kv.Add("rig time", FormatNumber(st.last_t_s - st.first_t_s, 6) + " s");
  kv.Add("lost lines", std::to_string(st.lost));
  kv.Add("corrupted lines", std::to_string(st.corrupted));
  kv.Print(ctx.out);
  return {{"recording", path},         {"samples", rows},         {"lost", st.lost},
          {"corrupted", st.corrupted}, {"rejected", st.rejected}, {"rig", s.caps().name},
          {"port", s.port()}};
}

}  // namespace lw::app
