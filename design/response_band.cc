#include "design/response_band.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <thread>

#include "design/boundary_crossings.h"
#include "design/loop_polynomials.h"
#include "lti/error.h"
#include "lti/simulate.h"

namespace lw {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

struct Judge {
  const TransferFunction& plant;
  const Controller& controller;
  const Specs& specs;
  const ResponseBandOptions& options;
  LoopPolynomials loop;
  int simulations = 0;
  ResponseCheck operator()(double k) {
    ResponseCheck c = CheckResponse(plant, controller, k, specs, options);
    ++simulations;
    return c;
  }
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
}

GainSet ResponseBand::gains() const {
  GainSet g;
  for (const auto& r : ranges) g.push_back({r.lo.gain, r.hi.gain});
  return g;
}

ResponseCheck CheckResponse(const TransferFunction& plant, const Controller& controller,
                            double gain, const Specs& specs, const ResponseBandOptions& options) {
  ResponseCheck check;
  LoopPolynomials loop = LoopPolynomials::ForGain(plant, controller, options.pade_order);
  double slowest = kInf;
  double fastest = 0.0;
  for (const auto& p : loop.PolesAt(gain)) {
    slowest = std::min(slowest, -p.real());
    fastest = std::max(fastest, std::abs(p));
  }
  if (!(slowest > 0.0)) {
    check.failed = "unstable";
    return check;
  }
  double duration = 12.0 / slowest + 2.0 * plant.delay();
  if (specs.settle_max) duration = std::max(duration, 2.0 * *specs.settle_max);
  if (specs.peak_max) duration = std::max(duration, 3.0 * *specs.peak_max);
  if (specs.rise_max) duration = std::max(duration, 3.0 * *specs.rise_max);
  // The exact-delay simulation steps at about a tenth of the fastest closed-loop time constant,
  // so a record of `duration` costs about 10 * duration * fastest steps. Beyond kMaxModeSpread
  // steps the loop's slowest mode is so much slower than its fastest that no practical response
  // spec is met (it creeps to its final value); such gains are judged too slow, not simulated.
  constexpr double kMaxModeSpread = 2e5;
  if (10.0 * duration * fastest > kMaxModeSpread) {
    check.failed = "too slow";
    return check;
  }
  check.duration = duration;
  const int n = options.samples;
  std::vector<double> t(static_cast<size_t>(n)), r(static_cast<size_t>(n), 1.0);
  for (int i = 0; i < n; ++i) t[static_cast<size_t>(i)] = duration * i / (n - 1);
  SimulateOptions so;
  so.initial = SimulateOptions::Initial::kZero;
  ClosedLoopResponse resp = SimulateClosedLoop(plant, controller, gain, t, r, so);
  // The step happens at t = 0; the "before" level is the zero initial state.
  std::vector<double> tt(t.size() + 1), yy(t.size() + 1), uu(t.size() + 1);
  tt[0] = -duration / (n - 1);
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

ResponseBand FindResponseBand(const TransferFunction& plant, const Controller& controller,
                              const Specs& specs, const ResponseBandOptions& options) {
  options.Validate();
  specs.Validate();
  Judge judge{plant, controller, specs, options,
              LoopPolynomials::ForGain(plant, controller, options.pade_order)};
  std::vector<BoundaryCrossing> cross = AllCrossings(judge.loop, specs.ToRegion());
  double lo, hi;
  if (cross.empty()) {
    std::complex<double> s(0.0, judge.loop.FrequencyScale());
    double ref = std::abs(judge.loop.a(s)) / std::max(std::abs(judge.loop.b(s)), 1e-300);
    lo = ref * 1e-3;
    hi = ref * 1e3;
  } else {
    lo = cross.front().gain / 10.0;
    hi = cross.back().gain * 1.05;
    if (hi / lo < 100.0) hi = lo * 100.0;
  }
  const int n = options.grid;
  std::vector<double> g(static_cast<size_t>(n));
  std::vector<ResponseCheck> v(static_cast<size_t>(n));
  for (int i = 0; i < n; ++i) {
    g[static_cast<size_t>(i)] = lo * std::pow(hi / lo, static_cast<double>(i) / (n - 1));
  }
  // The grid's simulations are independent: two threads share them (same results either way).
  auto scan = [&](size_t first) {
    for (size_t i = first; i < g.size(); i += 2)
      v[i] = CheckResponse(plant, controller, g[i], specs, options);
  };
  std::thread other(scan, 1);
  scan(0);
  other.join();
  judge.simulations += n;
  // Refines an edge between a (verdict va) and b (the other verdict); returns the edge with
  // what fails on its failing side.
  auto refine = [&](double a, double b, bool va, std::string fail_a, std::string fail_b) {
    while (std::max(a, b) / std::min(a, b) - 1.0 > options.rel_tol) {
      double m = std::sqrt(a * b);
      ResponseCheck c = judge(m);
      if (c.meets == va) {
        a = m;
        if (!va) fail_a = c.failed;
      } else {
        b = m;
        if (va) fail_b = c.failed;
      }
    }
    return ResponseEdge{std::sqrt(a * b), va ? fail_b : fail_a};
  };
  // Open ends: extend by decades while the end of the grid still meets.
  auto extend = [&](double k, double factor) {
    for (int i = 0; i < 6; ++i) {
      double next = k * factor;
      ResponseCheck c = judge(next);
      if (!c.meets) return refine(k, next, true, "", c.failed);
      k = next;
    }
    return ResponseEdge{factor < 1.0 ? 0.0 : kInf, ""};
  };
  ResponseBand band;
  bool open = false;
  ResponseEdge start;
  for (int i = 0; i < n; ++i) {
    const auto& c = v[static_cast<size_t>(i)];
    if (c.meets && !open) {
      start = i == 0 ? extend(g[0], 0.1)
                     : refine(g[static_cast<size_t>(i)], g[static_cast<size_t>(i - 1)], true, "",
                              v[static_cast<size_t>(i - 1)].failed);
      open = true;
    } else if (!c.meets && open) {
      ResponseEdge end =
          refine(g[static_cast<size_t>(i - 1)], g[static_cast<size_t>(i)], true, "", c.failed);
      band.ranges.push_back({start, end});
      open = false;
    }
  }
  if (open) band.ranges.push_back({start, extend(g.back(), 10.0)});
  band.simulations = judge.simulations;
  return band;
}

}  // namespace lw
