// The response band: the gains for which the SIMULATED closed-loop step (exact dead time, no
// Padé; lti/simulate.h) itself meets the specs, measured with the foundation's step metrics
// (lti/step_metrics.h).
//
// Requirements on the simulated unit step of the reference (at t = 0, from rest):
//   rise_max       10-90 % rise time <= rise_max
//   overshoot_max  overshoot <= overshoot_max (percent of the change)
//   zeta_min       overshoot <= 100 exp(-pi zeta / sqrt(1 - zeta^2)) (its second-order meaning)
//   settle_max     settling time in the settle_band (1 % or 2 %) <= settle_max
//   peak_max       peak time <= peak_max. Without a peak (StepMetrics::has_peak false) the peak
//                  time is still that of the largest value, as before has_peak existed: a
//                  monotone response has it at the end of the record (>= 3 peak_max), so it
//                  fails, as the pole meaning wd >= pi / peak_max (specs.h) fails for real
//                  poles; an overshoot too small to count as a peak still passes when its peak
//                  comes early enough (its poles have wd >= pi / peak_max).
//   wn_min         rise time <= 1.8 / wn_min (the same approximation as specs.h, read backwards)
//   always         the response reaches 90 % and ends settled within the band (2 % unless
//                  settle_band says 1 %) — a stable, non-creeping loop.
// decay_min has no response meaning and is not used here.
//
// Record length at gain K: 12 / sigma + 2 T, where sigma is the decay rate of the slowest
// closed-loop pole of the Padé loop (order `pade_order`; only to choose the length), at least
// 2 settle_max, 3 peak_max and 3 rise_max (a loop fast next to those has its record cut to
// about 2e4 of its fastest time constants, never below 12 / sigma + 2 T); `samples` uniform
// samples. A gain whose Padé loop has a pole with Re >= 0 is judged unstable without
// simulating; one whose slowest mode needs more than 2e5 simulation steps (12 / sigma next to
// a tenth of the fastest time constant) is judged too slow.
//
// Search: `grid` log-spaced gains from a tenth of the smallest to 1.05 times the largest gain at
// which a pole of the Padé loop crosses a region boundary (boundary_crossings.h); neighbours
// with different verdicts bracket an edge, refined by bisection in log K until
// hi/lo - 1 <= rel_tol. When an end of the grid meets the specs the search extends by decades
// (up to 6) to find that edge or reports it open (0 or inf). Two edges between neighbouring grid
// gains are missed. Gains judged "unstable" or "too slow" from their poles are not simulated;
// an edge whose outer end fails that way is bisected on the poles alone and only its inner end
// is simulated (when that end fails after all, the bisection is redone with simulations). The
// grid's gains, then the edges, are shared by `threads` threads; the result does not depend on
// how many.
//
// Sampled loop (sample_time T > 0): the same search and judgement on the step of the loop a
// digital controller closes every T seconds (sampled_step.h: the error sampled and held, exact
// between samples). The pole screen then reads the sampled loop's poles (discrete_band.h
// SampledLoop): unstable when one has |z| >= 1; otherwise the record length as above from the
// slowest, s = ln(z) / T (poles at z = 0 left out), capped at 1e6 periods. "too slow" stays the
// continuous loop's verdict (a creeping loop creeps sampled too; a fast sampling then gives the
// continuous band). A gain whose slowest mode needs more than 1e6 periods to settle is screened
// and simulated as the continuous loop instead: the hold's half-period lag is then below 1e-5
// of that mode's time constant, far below what the metrics resolve. The scan range also covers
// the sampled loop's stability edges (FindDiscreteBand with no region).
#ifndef LOOPWRIGHT_DESIGN_RESPONSE_BAND_H_
#define LOOPWRIGHT_DESIGN_RESPONSE_BAND_H_

#include <string>
#include <vector>

#include "design/gain_intervals.h"
#include "design/specs.h"
#include "lti/controller.h"
#include "lti/step_metrics.h"
#include "lti/transfer_function.h"

namespace lw {

struct ResponseBandOptions {
  int samples = 1500;        // per simulated step, >= 100
  int grid = 40;             // gains scanned, >= 8
  double rel_tol = 1e-6;     // edge bisection tolerance, 0 < rel_tol < 0.1
  int pade_order = 3;        // 1..8, only for record lengths and the scan range
  int threads = 2;           // >= 1, share the grid and the edges; the result does not depend on it
  double sample_time = 0.0;  // s; 0: the continuous loop; > 0 finite: the sampled loop
  void Validate() const;     // throws UsageError naming the field
};

struct ResponseCheck {
  bool meets = false;
  std::string failed;  // the first requirement broken: "unstable", "too slow" (see .cc), "rise",
                       // "overshoot", "settling", "peak time", "not settled"; empty when it meets
  StepMetrics metrics;
  double duration = 0.0;  // s, simulated record length
};

// Simulates and judges one gain.
ResponseCheck CheckResponse(const TransferFunction& plant, const Controller& controller,
                            double gain, const Specs& specs, const ResponseBandOptions& options);

struct ResponseEdge {
  double gain = 0.0;     // 0 or inf for open ends
  std::string limiting;  // what fails just outside (empty for open ends)
};

struct ResponseRange {
  ResponseEdge lo, hi;
};

struct ResponseBand {
  std::vector<ResponseRange> ranges;
  GainSet gains() const;
  bool empty() const { return ranges.empty(); }
  int simulations = 0;  // how many steps were simulated (gains screened out by poles not counted)
};

ResponseBand FindResponseBand(const TransferFunction& plant, const Controller& controller,
                              const Specs& specs, const ResponseBandOptions& options = {});

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_RESPONSE_BAND_H_
