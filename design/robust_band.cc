#include "design/robust_band.h"

#include <algorithm>
#include <cmath>
#include <string>

#include "design/gain_band.h"
#include "design/parallel_for.h"
#include "lti/error.h"

namespace lw {

void RobustBandOptions::Validate() const {
  if (!(fraction > 0.0 && fraction <= 1.0)) {
    throw UsageError("robust band fraction = " + std::to_string(fraction) +
                     ": it must satisfy 0 < fraction <= 1");
  }
  if (pade_order < 1 || pade_order > 8) {
    throw UsageError("robust band pade_order = " + std::to_string(pade_order) +
                     ": it must be an integer from 1 to 8");
  }
  if (threads < 1) {
    throw UsageError("robust band threads = " + std::to_string(threads) + ": it must be >= 1");
  }
}

RobustBand FindRobustBand(const std::vector<TransferFunction>& draws, const Controller& controller,
                          const Region& region, const RobustBandOptions& options) {
  options.Validate();
  if (static_cast<int>(draws.size()) < options.min_draws || draws.empty()) {
    throw UsageError("robust band: " + std::to_string(draws.size()) +
                     " parameter draws given; at least " +
                     std::to_string(std::max(options.min_draws, 1)) + " are needed");
  }
  std::vector<GainSet> bands(draws.size());
  ParallelFor(draws.size(), options.threads, [&](size_t, size_t i) {
    LoopPolynomials loop = LoopPolynomials::ForGain(draws[i], controller, options.pade_order);
    bands[i] = FindLocusBand(loop, region).gains();
  });

  RobustBand out;
  out.draws = static_cast<int>(draws.size());
  out.fraction = options.fraction;
  // Sweep: +1 where a draw's range starts, -1 where it ends.
  std::vector<std::pair<double, int>> events;
  for (const GainSet& g : bands) {
    if (!g.empty()) ++out.draws_with_band;
    for (const GainRange& r : g) {
      events.push_back({r.lo, +1});
      events.push_back({r.hi, -1});
    }
  }
  std::sort(events.begin(), events.end());
  const int need = static_cast<int>(std::ceil(options.fraction * out.draws - 1e-9));
  int count = 0;
  for (size_t i = 0; i < events.size();) {
    const double k = events[i].first;
    for (; i < events.size() && events[i].first == k; ++i) count += events[i].second;
    if (count >= need && i < events.size()) out.gains.push_back({k, events[i].first});
  }
  out.gains = Normalized(out.gains);
  return out;
}

int DrawsMeetingAt(const std::vector<TransferFunction>& draws, const Controller& controller,
                   const Region& region, int pade_order, double gain) {
  int n = 0;
  for (const auto& d : draws) {
    if (JudgeGain(LoopPolynomials::ForGain(d, controller, pade_order), region, gain).meets) ++n;
  }
  return n;
}

}  // namespace lw
