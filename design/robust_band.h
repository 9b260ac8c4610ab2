// The robust band: the gains that meet the specs for at least a fraction (95 % by default) of
// a set of plausible plants, e.g. parameter draws from a fitted model's covariance (the app makes
// them; design/ takes the plants, never a file).
//
// For each draw the exact locus band (gain_band.h) is found with the same controller, Padé order
// and region; the number of draws whose band contains K only changes at those bands' edges, so
// the set {K : count(K) >= ceil(fraction * draws)} is found exactly by one sweep over the sorted
// edges. The pole-region test (not simulation) is used per draw: simulating 500 draws at every
// candidate gain would cost a thousand times more, and the response band of the nominal model
// is reported beside it. Draws are split over `threads` std::threads; the result does not depend
// on the thread count.
#ifndef LOOPWRIGHT_DESIGN_ROBUST_BAND_H_
#define LOOPWRIGHT_DESIGN_ROBUST_BAND_H_

#include <vector>

#include "design/gain_intervals.h"
#include "design/specs.h"
#include "lti/controller.h"
#include "lti/transfer_function.h"

namespace lw {

struct RobustBandOptions {
  double fraction = 0.95;  // 0 < fraction <= 1
  int pade_order = 3;      // 1..8, for draws with dead time
  int threads = 2;         // >= 1
  int min_draws = 1;       // the caller's floor on draws.size() (the band command uses 500)
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

struct RobustBand {
  GainSet gains;            // where at least `fraction` of the draws meet
  int draws = 0;            // how many draws were judged
  int draws_with_band = 0;  // draws that meet the specs at some gain
  double fraction = 0.95;
};

// Throws UsageError when draws.size() < options.min_draws.
RobustBand FindRobustBand(const std::vector<TransferFunction>& draws, const Controller& controller,
                          const Region& region, const RobustBandOptions& options = {});

// How many of the draws meet the region at `gain` (for tests and explanations).
int DrawsMeetingAt(const std::vector<TransferFunction>& draws, const Controller& controller,
                   const Region& region, int pade_order, double gain);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_ROBUST_BAND_H_
