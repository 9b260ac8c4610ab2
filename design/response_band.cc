#include "design/response_band.h"

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>
#include <optional>
#include <string>

#include "design/boundary_crossings.h"
#include "design/discrete_band.h"
#include "design/loop_polynomials.h"
#include "design/parallel_for.h"
#include "design/sampled_step.h"
#include "lti/error.h"
#include "lti/simulate.h"

namespace lw {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

// What the closed-loop poles alone say about a gain (CheckResponse's first step): "unstable",
// "too slow" (see CheckResponse) or nothing, with the record length to simulate.
struct PoleScreen {
  std::string failed;
  double duration = 0.0;
  bool sampled = false;  // simulate the sampled loop (else the continuous one)
};

bool FailsByPoles(const std::string& failed) {
  return failed == "unstable" || failed == "too slow";
}

PoleScreen ScreenPoles(const LoopPolynomials& loop, double delay, double gain, const Specs& specs) {
  PoleScreen screen;
  double slowest = kInf;
  double fastest = 0.0;
  for (const auto& p : loop.PolesAt(gain)) {
    slowest = std::min(slowest, -p.real());
    fastest = std::max(fastest, std::abs(p));
  }
  if (!(slowest > 0.0)) {
    screen.failed = "unstable";
    return screen;
  }
  // The record covers the slowest mode (e^-12 of it left) and the delay; the specs lengthen it
  // so that a response slower than they allow is seen to be.
  const double settle = 12.0 / slowest + 2.0 * delay;
  double duration = settle;
  if (specs.settle_max) duration = std::max(duration, 2.0 * *specs.settle_max);
  if (specs.peak_max) duration = std::max(duration, 3.0 * *specs.peak_max);
  if (specs.rise_max) duration = std::max(duration, 3.0 * *specs.rise_max);
  // The exact-delay simulation steps at about a tenth of the fastest closed-loop time constant,
  // so a record of `duration` costs about 10 * duration * fastest steps. Beyond kMaxModeSpread
  // steps over the slowest mode's own settling the loop's slowest mode is so much slower than its
  // fastest that no practical response spec is met (it creeps to its final value); such gains are
  // judged too slow, not simulated. A loop that is merely fast next to the specs (a high gain
  // on a first-order plant) is not: its record is cut to the step budget, never below `settle`,
  // after which the response is at its final value and the specs' extra length adds nothing.
  constexpr double kMaxModeSpread = 2e5;
  if (10.0 * settle * fastest > kMaxModeSpread) {
    screen.failed = "too slow";
    return screen;
  }
  screen.duration = std::min(duration, std::max(settle, kMaxModeSpread / (10.0 * fastest)));
  return screen;
}

// The sampled loop's screen (response_band.h): unstable when a pole has |z| >= 1; else the
// record length from the slowest pole, s = ln(z) / T, as ScreenPoles has it. A record of more
// than kMaxSampledPeriods periods is left to the continuous screen and simulation (nullopt).
constexpr double kMaxSampledPeriods = 1e6;

std::optional<PoleScreen> ScreenSampledPoles(const LoopPolynomials& sampled, double period,
                                             double delay, double gain, const Specs& specs) {
  PoleScreen screen;
  screen.sampled = true;
  double slowest = kInf;
  for (const auto& z : sampled.PolesAt(gain)) {
    if (!(std::abs(z) < 1.0)) {
      screen.failed = "unstable";
      return screen;
    }
    if (std::abs(z) > 1e-300) slowest = std::min(slowest, -std::log(std::abs(z)) / period);
  }
  const double settle =
      std::isfinite(slowest) ? 12.0 / slowest + 2.0 * delay : 2.0 * delay + 12.0 * period;
  if (settle / period > kMaxSampledPeriods) return std::nullopt;
  double duration = settle;
  if (specs.settle_max) duration = std::max(duration, 2.0 * *specs.settle_max);
  if (specs.peak_max) duration = std::max(duration, 3.0 * *specs.peak_max);
  if (specs.rise_max) duration = std::max(duration, 3.0 * *specs.rise_max);
  screen.duration = std::min(duration, kMaxSampledPeriods * period);
  return screen;
}

// Simulates the unit step over `duration` seconds and judges it against the specs.
ResponseCheck SimulateAndJudge(const TransferFunction& plant, const Controller& controller,
                               double gain, const Specs& specs, const ResponseBandOptions& options,
                               double duration, bool sampled) {
  ResponseCheck check;
  check.duration = duration;
  int n = options.samples;
  double dt = duration / (n - 1);
  if (sampled) {
    // Every sample instant on the grid (a sampled loop's peaks are often at one), the grid a
    // whole fraction of the period, or a whole multiple of it for a record of many periods.
    const double period = options.sample_time;
    const double per = std::floor((n - 1) * period / duration);
    dt = per >= 1.0 ? period / per : period * std::ceil(duration / period / (n - 1));
    n = static_cast<int>(std::ceil(duration / dt - 1e-9)) + 1;
  }
  std::vector<double> t(static_cast<size_t>(n)), r(static_cast<size_t>(n), 1.0);
  for (int i = 0; i < n; ++i) {
    t[static_cast<size_t>(i)] = sampled ? dt * i : duration * i / (n - 1);
  }
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  ClosedLoopResponse resp =
      sampled ? SimulateSampledStep(plant, controller, gain, options.sample_time, t)
              : SimulateClosedLoop(plant, controller, gain, t, r, so);
  // The step happens at t = 0; the "before" level is the zero initial state.
  std::vector<double> tt(t.size() + 1), yy(t.size() + 1), uu(t.size() + 1);
  tt[0] = -dt;
  yy[0] = 0.0;
  uu[0] = 0.0;
  std::copy(t.begin(), t.end(), tt.begin() + 1);
  std::copy(resp.y.begin(), resp.y.end(), yy.begin() + 1);
  std::copy(resp.u.begin(), resp.u.end(), uu.begin() + 1);
  for (double v : yy) {
    if (!std::isfinite(v)) {
      check.failed = "unstable";
      return check;
    }
  }
  StepMetricsOptions mo;
  mo.settle_band = specs.settle_band;
  mo.refine_peak = !sampled;  // a sampled loop's peak is often a corner, on a sample instant
  check.metrics = MeasureStep(tt, yy, 0.0, mo, 1.0, uu);
  const StepMetrics& m = check.metrics;
  double overshoot_cap = kInf;
  if (specs.overshoot_max) overshoot_cap = *specs.overshoot_max;
  if (specs.zeta_min) overshoot_cap = std::min(overshoot_cap, OvershootForZeta(*specs.zeta_min));
  double rise_cap = kInf;
  if (specs.rise_max) rise_cap = *specs.rise_max;
  if (specs.wn_min) rise_cap = std::min(rise_cap, kRiseConstant / *specs.wn_min);
  if (!m.settled || !std::isfinite(m.rise_time) || !std::isfinite(m.settling_time)) {
    check.failed = "not settled";
  } else if (m.rise_time > rise_cap) {
    check.failed = "rise";
  } else if (m.overshoot_percent > overshoot_cap) {
    check.failed = "overshoot";
  } else if (specs.settle_max && m.settling_time > *specs.settle_max) {
    check.failed = "settling";
  } else if (specs.peak_max && m.peak_time > *specs.peak_max) {
    check.failed = "peak time";
  }
  check.meets = check.failed.empty();
  return check;
}

// Judges gains for one search task, counting the steps it simulates.
struct Judge {
  const TransferFunction& plant;
  const Controller& controller;
  const Specs& specs;
  const ResponseBandOptions& options;
  const LoopPolynomials& loop;          // the Padé loop
  const LoopPolynomials* sampled_loop;  // the sampled loop with a sample time, else null
  int simulations = 0;

  PoleScreen Screen(double k) const {
    PoleScreen continuous = ScreenPoles(loop, plant.delay(), k, specs);
    if (sampled_loop && continuous.failed != "too slow") {
      // "too slow" is the continuous loop's verdict in either case (a creeping loop creeps
      // sampled too), so that a fast sampling gives the continuous band.
      if (auto s =
              ScreenSampledPoles(*sampled_loop, options.sample_time, plant.delay(), k, specs)) {
        return *s;
      }
    }
    return continuous;
  }
  ResponseCheck operator()(double k) {
    const PoleScreen screen = Screen(k);
    if (!screen.failed.empty()) {
      ResponseCheck c;
      c.failed = screen.failed;
      return c;
    }
    ++simulations;
    return SimulateAndJudge(plant, controller, k, specs, options, screen.duration, screen.sampled);
  }

  // The edge between `in` (meets) and `out` (fails with `fail_out`), by bisection in log K until
  // hi/lo - 1 <= rel_tol; the edge is the geometric middle of the last bracket, and `limiting`
  // what fails at its outer end. When `out` fails by its poles alone, the bisection first runs
  // on the pole screen (no simulation) and then simulates only the inner end it arrives at: the
  // same edge as simulating every middle that passes the screen whenever those all meet (the
  // monotone bracket bisection assumes anyway); if that inner end fails (another requirement
  // breaks first), the bisection starts again from [in, out] with simulations, as it would
  // without the screen.
  ResponseEdge Refine(double in, double out, std::string fail_out) {
    const auto open = [&](double a, double b) {
      return std::max(a, b) / std::min(a, b) - 1.0 > options.rel_tol;
    };
    if (FailsByPoles(fail_out)) {
      double inner = in, outer = out;
      std::string fail_outer = fail_out;
      while (open(inner, outer)) {
        const double m = std::sqrt(inner * outer);
        const PoleScreen s = Screen(m);
        if (s.failed.empty()) {
          inner = m;
        } else {
          outer = m;
          fail_outer = s.failed;
        }
      }
      if (inner == in || (*this)(inner).meets) {
        return ResponseEdge{std::sqrt(inner * outer), fail_outer};
      }
    }
    while (open(in, out)) {
      const double m = std::sqrt(in * out);
      const ResponseCheck c = (*this)(m);
      if (c.meets) {
        in = m;
      } else {
        out = m;
        fail_out = c.failed;
      }
    }
    return ResponseEdge{std::sqrt(in * out), fail_out};
  }

  // An open end of the grid that meets: extends by `factor` (0.1 down, 10 up) up to 6 times
  // while it still meets, then refines that edge, or reports the end open (0 or inf).
  ResponseEdge Extend(double k, double factor) {
    for (int i = 0; i < 6; ++i) {
      const double next = k * factor;
      const ResponseCheck c = (*this)(next);
      if (!c.meets) return Refine(k, next, c.failed);
      k = next;
    }
    return ResponseEdge{factor < 1.0 ? 0.0 : kInf, ""};
  }
};

// One edge to find: refine between a meeting and a failing grid gain, or extend an open end.
struct EdgeTask {
  double in = 0.0, out = 0.0;  // out unused when extending
  std::string fail_out;
  double extend = 0.0;  // 0: refine; else the factor to extend by
};

}  // namespace

void ResponseBandOptions::Validate() const {
  if (samples < 100) {
    throw UsageError("response band samples = " + std::to_string(samples) + ": it must be >= 100");
  }
  if (grid < 8) {
    throw UsageError("response band grid = " + std::to_string(grid) + ": it must be >= 8");
  }
  if (!(rel_tol > 0.0 && rel_tol < 0.1)) {
    throw UsageError("response band rel_tol = " + std::to_string(rel_tol) +
                     ": it must satisfy 0 < rel_tol < 0.1");
  }
  if (pade_order < 1 || pade_order > 8) {
    throw UsageError("response band pade_order = " + std::to_string(pade_order) +
                     ": it must be an integer from 1 to 8");
  }
  if (threads < 1) {
    throw UsageError("response band threads = " + std::to_string(threads) + ": it must be >= 1");
  }
  if (!(std::isfinite(sample_time) && sample_time >= 0.0)) {
    throw UsageError("response band sample_time = " + std::to_string(sample_time) +
                     ": it must be 0 (continuous) or a number > 0 (s)");
  }
}

GainSet ResponseBand::gains() const {
  GainSet g;
  for (const auto& r : ranges) g.push_back({r.lo.gain, r.hi.gain});
  return g;
}

namespace {
// The sampled loop with a sample time (response_band.h), else nothing.
std::optional<LoopPolynomials> MaybeSampledLoop(const TransferFunction& plant,
                                                const Controller& controller,
                                                const ResponseBandOptions& options) {
  if (options.sample_time > 0.0) return SampledLoop(plant, controller, options.sample_time);
  return std::nullopt;
}
}  // namespace

ResponseCheck CheckResponse(const TransferFunction& plant, const Controller& controller,
                            double gain, const Specs& specs, const ResponseBandOptions& options) {
  options.Validate();
  const LoopPolynomials loop = LoopPolynomials::ForGain(plant, controller, options.pade_order);
  const std::optional<LoopPolynomials> sampled = MaybeSampledLoop(plant, controller, options);
  Judge judge{plant, controller, specs, options, loop, sampled ? &*sampled : nullptr};
  return judge(gain);
}

ResponseBand FindResponseBand(const TransferFunction& plant, const Controller& controller,
                              const Specs& specs, const ResponseBandOptions& options) {
  options.Validate();
  specs.Validate();
  // The scan range comes from the Padé loop's crossings in either case (the sampled loop's
  // boundaries are not lines in z); the decade extension finds edges beyond it.
  const LoopPolynomials pade = LoopPolynomials::ForGain(plant, controller, options.pade_order);
  const std::optional<LoopPolynomials> sampled = MaybeSampledLoop(plant, controller, options);
  std::vector<BoundaryCrossing> cross = AllCrossings(pade, specs.ToRegion());
  double lo, hi;
  if (cross.empty()) {
    std::complex<double> s(0.0, pade.FrequencyScale());
    double ref = std::abs(pade.a(s)) / std::max(std::abs(pade.b(s)), 1e-300);
    lo = ref * 1e-3;
    hi = ref * 1e3;
  } else {
    lo = cross.front().gain / 10.0;
    hi = cross.back().gain * 1.05;
    if (hi / lo < 100.0) hi = lo * 100.0;
  }
  if (sampled) {
    // The sampled loop's own stability edges (often far below the Padé loop's crossings when
    // the period is long) join the scan range.
    const DiscreteBand stable =
        FindDiscreteBand(plant, controller, Region{}, options.sample_time, GainSet{});
    for (const auto& iv : stable.band.intervals) {
      for (double g : {iv.lo.gain, iv.hi.gain}) {
        if (g > 0.0 && std::isfinite(g)) {
          lo = std::min(lo, g / 10.0);
          hi = std::max(hi, g * 1.05);
        }
      }
    }
  }
  const int n = options.grid;
  std::vector<double> g(static_cast<size_t>(n));
  std::vector<ResponseCheck> v(static_cast<size_t>(n));
  for (int i = 0; i < n; ++i) {
    g[static_cast<size_t>(i)] = lo * std::pow(hi / lo, static_cast<double>(i) / (n - 1));
  }
  // The grid's gains, then the edges, are independent: `threads` threads share each list (the
  // same results for any count, each task being a pure function of its inputs).
  std::vector<Judge> judges(
      ParallelWorkers(g.size(), options.threads),
      Judge{plant, controller, specs, options, pade, sampled ? &*sampled : nullptr});
  const auto shared = [&](size_t count, const std::function<void(Judge&, size_t)>& job) {
    ParallelFor(count, static_cast<int>(judges.size()),
                [&](size_t worker, size_t i) { job(judges[worker], i); });
  };
  shared(g.size(), [&](Judge& judge, size_t i) { v[i] = judge(g[i]); });
  // Each range's start and end edge.
  std::vector<EdgeTask> tasks;
  bool open = false;
  for (int i = 0; i < n; ++i) {
    const auto& c = v[static_cast<size_t>(i)];
    if (c.meets && !open) {
      if (i == 0) {
        tasks.push_back({g[0], 0.0, "", 0.1});
      } else {
        tasks.push_back({g[static_cast<size_t>(i)], g[static_cast<size_t>(i - 1)],
                         v[static_cast<size_t>(i - 1)].failed, 0.0});
      }
      open = true;
    } else if (!c.meets && open) {
      tasks.push_back({g[static_cast<size_t>(i - 1)], g[static_cast<size_t>(i)], c.failed, 0.0});
      open = false;
    }
  }
  if (open) tasks.push_back({g.back(), 0.0, "", 10.0});
  std::vector<ResponseEdge> edges(tasks.size());
  shared(tasks.size(), [&](Judge& judge, size_t i) {
    const EdgeTask& t = tasks[i];
    edges[i] =
        t.extend != 0.0 ? judge.Extend(t.in, t.extend) : judge.Refine(t.in, t.out, t.fail_out);
  });
  ResponseBand band;
  for (size_t i = 0; i + 1 < edges.size(); i += 2) band.ranges.push_back({edges[i], edges[i + 1]});
  for (const Judge& j : judges) band.simulations += j.simulations;
  return band;
}

}  // namespace lw
