// Plant identification from a step-test recording: the library behind `loopwright fit`.
//
// Method (output error): the model's response is simulated exactly from the recorded input
// (any shape: one step, several, a PRBS) by the response kernel (response_kernel.h) and Ceres
// minimises the squared difference to the recorded output over the structure's parameters, an
// output offset and, for `integrating`, an output drift (an input offset the baseline missed).
// The input baseline is the mean of the samples before the first step, and the model starts at
// rest there (the input deviation is zero before the first sample, whatever noise the first
// sample's input carries). The dead time is a
// continuous parameter (fractional samples). Bounds keep parameters physical: time constants in
// [h/1000, 1000 D], 0.001 <= zeta <= 1, wn in [0.001/D, pi/h], 0 <= T <= 0.9 D, |tauz| <= 1000 D
// (h the median sample period, D the record length).
//
// Starting values: the gain from baseline and settled averages, tau and T from Smith's two-point
// method (two_point.h), then a multi-start over the dead time (and for the richer structures
// over their extra parameters, seeded by the simpler fits) on a reduced copy of the record.
//
// Reduced record: blocks of L samples (L odd, about n / start_samples, or n / (20 steps) for an
// input that steps often, at most 10 start_samples blocks), the first block boundary on the
// first step. Block j is represented by its first instant t_j, the block's mean input held from
// t_j to t_{j+1} (exact for a single step, integral-preserving elsewhere) and the mean output
// over the L samples centred on t_j; the model starts from rest at the baseline. The model at
// t_j differs from the mean model over the window only by (L^2 - 1) h^2 y''/24 (and near the
// delayed step, where y'' jumps), so the reduced optimum lies within a small fraction of a
// standard deviation of the full-data optimum; unlike every L-th sample it keeps all the data's
// information. For records longer than 64 start_samples the best start is carried to a finer
// reduction of max(sqrt(n start_samples), 10 start_samples) blocks.
//
// Polish: the reduced optimum is then polished on every sample (the compressed Gauss-Newton cost
// of output_error.h, nearly undamped: SolveOptions::initial_trust_region_radius 1e10) until
// Ceres' tolerances hold on the full problem, typically 2-4 full-length Jacobian passes; the
// answer is the full-data least-squares optimum, the same as a multi-start on every sample
// (start_samples >= n) within those tolerances (a test checks this).
//
// Uncertainty: 95 % intervals value +- t(0.975, n - p) sd from Ceres' covariance scaled by the
// residual variance RSS/(n - p). When J'J is singular or nearly so the intervals are not given
// and `rank_deficiency` names the parameter the data cannot determine.
//
// Fit percentage: 100 (1 - |y - yhat| / |y - mean(y)|) (normalised RMS error; 100 is perfect).
//
// Robust option: iteratively reweighted least squares with Ceres' Huber (a = 1.345 s) or Cauchy
// (a = 2.385 s) loss, s the robust residual scale 1.4826 MAD; the constants give 95 % efficiency
// on Gaussian noise (Holland & Welsch 1977; from memory). The covariance is then Huber's
// sandwich estimate K^2 [sum psi(r)^2 / (n - p)] / [sum psi'(r) / n]^2 (J'J)^-1 with
// K = 1 + (p/n) var(psi') / mean(psi')^2 (Huber, Robust Statistics, 1981; from memory): the
// spikes the loss discounts do not widen the intervals, as they would in the final weighted
// problem's s_w^2 (J'WJ)^-1.
#ifndef LOOPWRIGHT_IDENTIFY_FIT_H_
#define LOOPWRIGHT_IDENTIFY_FIT_H_

#include <limits>
#include <optional>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "identify/model_structure.h"
#include "identify/preprocess.h"
#include "identify/step_detection.h"
#include "identify/structure_selection.h"
#include "lti/transfer_function.h"

namespace lw {

struct FitOptions {
  std::string structure = "auto";  // a structure name (model_structure.h) or "auto"
  enum class Robust { kNone, kHuber, kCauchy };
  Robust robust = Robust::kNone;
  // Only samples with window_start <= t <= window_end are used.
  double window_start = -std::numeric_limits<double>::infinity();
  double window_end = std::numeric_limits<double>::infinity();
  size_t decimate_above = 1'000'000;    // records longer than this are decimated ...
  size_t decimate_to = 200'000;         // ... to at most this many samples
  size_t start_samples = 400;           // blocks of the reduced record the multi-start runs on
  int max_iterations = 100;             // Ceres iterations of the final polish
  std::string input_unit, output_unit;  // for parameter units, may be empty
  SelectionOptions selection;           // how "auto" chooses (structure_selection.h)
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

struct ParameterEstimate {
  std::string name, unit;
  double value = 0.0;
  double sd = std::numeric_limits<double>::quiet_NaN();  // NaN when not determined
  double ci_low = std::numeric_limits<double>::quiet_NaN();
  double ci_high = std::numeric_limits<double>::quiet_NaN();
};

struct FitResult {
  Structure structure = Structure::kFopdt;
  std::vector<ParameterEstimate> parameters;  // the structure's, in its fixed order
  std::vector<double> values;                 // the same values, plain
  Eigen::MatrixXd covariance;                 // of `values`, in that order
  bool covariance_ok = false;
  std::string rank_deficiency;                    // empty when every parameter is determined
  ParameterEstimate output_offset;                // output units: the model's output at rest
  std::optional<ParameterEstimate> output_drift;  // integrating only, output units / s
  double input_baseline = 0.0;
  TransferFunction tf;
  double fit_percent = 0.0;
  double residual_rms = 0.0;
  double aicc = 0.0, bic = 0.0;
  size_t samples = 0;
  int free_parameters = 0;
  int iterations = 0;
  bool converged = false;
  std::string termination;  // Ceres' termination and message
  double seconds = 0.0;
  std::vector<std::string> warnings;  // about this model
};

struct Candidate {
  Structure structure = Structure::kFopdt;
  bool usable = false;
  // The structure was fitted: fit_percent and residual_rms describe its last iterate, also
  // when it is not usable (the solver stopped without converging); false when not tried.
  bool fitted = false;
  std::string note;  // why not usable, or empty
  // delta_aicc = aicc - the smallest usable aicc (0 for the smallest, also when another
  // candidate is chosen).
  double fit_percent = 0.0, residual_rms = 0.0, aicc = 0.0, delta_aicc = 0.0;
  int free_parameters = 0;
  // Empty when the data determine the parameters; else why not (structure_selection.h: a
  // rank-deficient covariance, or e.g. "the 95 % interval of gain contains 0").
  std::string undetermined;
  bool smallest = false;  // has the smallest AICc
  bool chosen = false;    // is the model returned
};

struct Identification {
  FitResult model;  // the chosen (or requested) structure's fit
  bool automatic = false;
  // `auto` only, in AllStructures() order. integrating is not tried when the output settles
  // while the input stays away from its baseline (RecordingAnalysis::input_away): an
  // integrator would still be ramping there. After a pulse that returns the input to its
  // baseline an integrator's output settles too, so it is tried.
  std::vector<Candidate> candidates;
  std::string criterion = "AICc";
  SelectionOptions selection;         // `auto`: the rule the choice followed
  std::string selection_note;         // `auto`: why the chosen is not the smallest AICc, or empty
  std::vector<std::string> warnings;  // about the recording, then about the model
  RecordingAnalysis analysis;
  size_t samples_in = 0;  // after the window, before decimation
  int decimation = 1;     // factor applied (1: none)
};

// Identifies a model from the recording. Throws DataError for an unusable recording (see
// AnalyseRecording), UsageError for bad options or a window with fewer than 10 samples, and
// JobFailed when no structure could be fitted (Ceres failed or did not converge).
Identification Identify(const StepRecording& recording, const FitOptions& options);

// Fits one structure to a recording already analysed (deviation input v = u - baseline);
// used by Identify and by tests. `seed` optionally provides a fit of a simpler structure
// (fopdt for the others, sopdt for sopdt-zero) to start from.
FitResult FitStructure(Structure s, const StepRecording& recording, const RecordingAnalysis& a,
                       const FitOptions& options, const FitResult* seed = nullptr);

// Chooses among `candidates` (their usable, aicc and free_parameters) by SelectStructure, fills
// delta_aicc, smallest and chosen, and returns the chosen index (-1: none usable) and in `note`
// one sentence when the chosen is not the smallest AICc (else empty).
int ChooseCandidate(std::vector<Candidate>& candidates, const SelectionOptions& options,
                    std::string& note);

// Student t quantile (two-sided 95 %: p = 0.975) for dof degrees of freedom.
double StudentQuantile(double p, double dof);

// The outlier warning's threshold in robust residual sd (1.4826 MAD) for n residuals: 5, or
// more on long records, the z with P(|e| > z sd) = 0.01 / n for Gaussian noise, so white noise
// alone raises the warning on at most 1 % of records whatever their length (Bonferroni); e.g.
// 5 up to about 17 000 samples, 5.45 at 2e5, 5.73 at 1e6.
double OutlierThreshold(size_t n);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_FIT_H_
