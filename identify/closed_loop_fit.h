// Closed-loop identification: the plant inside a known loop, fitted to the recorded output y and
// actuator u of a rig that ran under feedback (`loopwright fit --closed-loop`).
//
// The choice made here. With u recorded one could fit the plant open-loop style from u to y
// (identify/fit.h); that is the START of this fit. The fit itself simulates the whole loop the rig
// ran, on the recorded reference r, with the candidate plant G and the known controller C = K
// shape(s) (lti/controller.h), the exact dead time inside the loop (lti/simulate.h
// SimulateClosedLoop, no Padé), and fits BOTH channels:
//
//   e = dr - dy,  du = C e,  dy = G du    from the zero state, dr = r - r[0]
//   yhat[k] = y_rest + dy(t[k]),   uhat[k] = u_rest + du(t[k])
//
//   minimise  sum_k ((yhat[k] - y[k]) / sd_y)^2 + sum_k ((uhat[k] - u[k]) / sd_u)^2
//
// over the structure's parameters (model_structure.h, same names, order and bounds as
// identify/fit.h) and the operating point y_rest, u_rest. The deviation loop is exact for a linear
// plant with any output offset when the rig is at rest at t[0] (as on a set-point step test). Why
// both channels: a plant that fits y alone can still disagree with the actuator effort the loop
// needed, and the loop with its dead time is what the band design will use.
//
// Weights: sd_y and sd_u start as the open-loop start's residual rms and the start's actuator
// residual rms, then are re-estimated from each channel's residual rms after each solve (at most
// `reweight_rounds` solves, stopping when both change by less than 10 %): for Gaussian noise of
// unknown size per channel that is the maximum-likelihood weighting. sd_u is never taken below
// K_hf sd_y, K_hf = |C(s -> inf)| the controller's high-frequency gain: a controller acting on the
// measured output passes at least that much of its noise on to u; a recording whose u was computed
// from a clean output (a simulator) would otherwise make u's weight unbounded.
//
// Derivatives: the loop with its dead time is not written for Ceres Jets, so the Jacobian of the
// dynamic parameters is by central differences (step 1e-5 of max(|x|, a per-parameter scale),
// one-sided at a bound: dead time 0), the linear y_rest / u_rest columns are exact (0 or 1).
// Each Jacobian costs 2 p closed-loop simulations (p the structure's parameter count).
//
// Uncertainty: 95 % intervals value +- t(0.975, n - p) sd, sd from Ceres' (J'J)^-1 of the weighted
// problem scaled by RSS / (n - p), n counting both channels' samples (as identify/fit.h does).
//
// Structure: `structure` names one (model_structure.h); "auto" fits every structure the
// open-loop fit could use (identify/fit.h's candidates), each started from its own open-loop fit
// and polished in the loop as above, and chooses by structure_selection.h (the smallest criterion,
// or a simpler structure within a near-tie of it). The
// criterion (aicc) is that of the output channel, n ln(RSS_y / n) + 2k + 2k(k + 1)/(n - k - 1)
// (structure_selection.h), k counting y_rest and u_rest. A candidate whose loop is unstable or
// whose solve fails is listed as not usable with the reason. Cost: one solve costs a few
// hundred closed-loop simulations of the record (under a millisecond each for 1500 samples), so
// `auto` takes well under a second there (0.33 s for the bundled 1501-sample recording).
//
// Assumptions, said plainly: the controller is linear and the actuator never at a limit (a loop
// that clipped u is outside this model; the clipped stretch is warned about), the rig is at rest
// at the first sample, and the reference steps at least once.
#ifndef LOOPWRIGHT_IDENTIFY_CLOSED_LOOP_FIT_H_
#define LOOPWRIGHT_IDENTIFY_CLOSED_LOOP_FIT_H_

#include <limits>
#include <string>
#include <vector>

#include "identify/fit.h"
#include "lti/controller.h"
#include "lti/simulate.h"

namespace lw {

// One closed-loop recording: time (s, strictly increasing), reference, actuator, output, all the
// same length (>= 20 samples).
struct ClosedLoopRecording {
  std::vector<double> t, r, u, y;
};

struct ClosedLoopFitOptions {
  std::string structure = "auto";  // a structure name (model_structure.h) or "auto"
  Controller controller;           // the loop's controller shape (lti/controller.h)
  double gain = std::numeric_limits<double>::quiet_NaN();  // its gain K, > 0, finite
  int reweight_rounds = 3;                                 // 1..10 solves
  int max_iterations = 50;                                 // Ceres iterations per solve, >= 1
  std::string input_unit, output_unit;                     // for parameter units, may be empty
  SelectionOptions selection;  // how "auto" chooses (structure_selection.h)
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

struct ClosedLoopFit {
  FitResult model;       // the closed-loop fit: output_offset = y_rest, input_baseline = u_rest
                         // fit_percent / residual_rms are those of y
  Identification start;  // the open-loop fit from u to y it started from
  double input_fit_percent = 0.0;  // 100 (1 - |u - uhat| / |u - mean(u)|)
  double input_residual_rms = 0.0;
  double output_sd = 0.0, input_sd = 0.0;  // the final channel weights' sd
  bool input_sd_floored = false;           // sd_u was held at K_hf sd_y
  int solves = 0;                          // weighted solves run
  bool automatic = false;                  // "auto": chosen among `candidates`
  std::vector<Candidate> candidates;       // "auto" only, in AllStructures() order, in-loop fits
  std::string selection_note;              // "auto": as Identification::selection_note
  std::vector<std::string> warnings;
};

// The closed-loop response the fit models: yhat and uhat as above for plant `plant` and the
// operating point (y_rest, u_rest). For tests and plots.
ClosedLoopResponse ClosedLoopPrediction(const TransferFunction& plant, const Controller& controller,
                                        double gain, const std::vector<double>& t,
                                        const std::vector<double>& r, double y_rest, double u_rest);

// Fits as described above. Throws UsageError for bad options or sizes, DataError when the
// reference never steps or u has no step to start the open-loop fit from, JobFailed when Ceres
// finds no usable solution.
ClosedLoopFit FitClosedLoop(const ClosedLoopRecording& recording,
                            const ClosedLoopFitOptions& options);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_CLOSED_LOOP_FIT_H_
