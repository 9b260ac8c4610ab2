// `fit NEW.csv --compare OLD.json [--band OLD_BAND.json] [--gain K]`: what a fresh fit says
// about an older model, and about the gain band designed on it.
//
// Parameters (identify/parameter_change.h): each parameter in both models, matched by name, with
// old and new value and 95 % interval, the change, z = d / sqrt(se_old^2 + se_new^2) and
// "significant" when |z| > 1.96. The old standard errors come from the old model file's
// covariance when it has one, else from its stored 95 % intervals; the new ones from the fit.
//
// Band (with --band): the band file written by `loopwright band -o` ("loopwright-band") holds
// the specs, the controller, the Padé order and the bands of the old model. The bands are found
// again on the NEW model with the same specs, controller and Padé order (design/: locus band,
// response band, robust band over 500 parameter draws of the new fit's covariance, seed 1, when
// it has one) and the recommendation rule of design/recommendation.h gives the new recommended
// gain. The gain in use is --gain K when given, else the old file's recommended gain; it is
// "still inside" when it lies in the new set the recommendation rule draws from (the first
// non-empty of robust AND response, robust, locus AND response, response, locus).
#ifndef LOOPWRIGHT_APP_FIT_COMPARE_H_
#define LOOPWRIGHT_APP_FIT_COMPARE_H_

#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "design/gain_intervals.h"
#include "design/recommendation.h"
#include "design/specs.h"
#include "identify/fit.h"
#include "identify/parameter_change.h"
#include "io/model_file.h"
#include "lti/controller.h"

namespace lw::app {

// A saved band result, read back.
struct BandFile {
  std::string path;
  Specs specs;
  Controller controller;
  int pade_order = 3;
  double recommended_gain = 0.0;
  GainSet locus, response;
  std::optional<GainSet> robust;
  // The digital controller's sample period (s) when the band was found with --sample-time: the
  // recheck then recommends within the sampled band too, as band did.
  std::optional<double> sample_time;
};

// Reads and checks a band file. DataError naming the file and the field (or "not valid JSON",
// "not a loopwright band file") otherwise.
BandFile ReadBandFile(const std::string& path);

struct BandRecheck {
  BandFile old;
  GainSet locus, response;
  std::optional<GainSet> robust;
  std::string robust_note;  // why there is no robust band, or empty
  Recommendation recommendation;
  double gain_in_use = 0.0;
  std::string gain_source;  // "--gain" or "the old band's recommended gain"
  bool inside_locus = false, inside_response = false;
  std::optional<bool> inside_robust;
  bool still_inside = false;  // inside recommendation.set (the set the rule draws from)
  std::string infeasible;     // when no gain meets the specs on the new model: why
                              // (design/infeasibility.h); empty otherwise
};

// Bands of the new model as described above.
BandRecheck RecheckBand(const BandFile& band, const FitResult& fresh,
                        std::optional<double> gain_in_use);

struct ModelComparison {
  std::string old_path, old_structure, new_structure;
  std::vector<ParameterChange> changes;
  std::vector<std::string> only_old, only_new;
  std::optional<BandRecheck> band;
};

// The old model's estimates with their standard errors (covariance or intervals).
std::vector<EstimateSummary> OldEstimates(const ModelDocument& old);
// The new fit's estimates.
std::vector<EstimateSummary> NewEstimates(const FitResult& fresh);

ModelComparison CompareWithOld(const std::string& old_path, const ModelDocument& old,
                               const FitResult& fresh);

// The `compare` object of fit --json.
nlohmann::json ComparisonJson(const ModelComparison& c);
// The human section (summary tables, colour through ctx).
void PrintComparison(const Context& ctx, const ModelComparison& c);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_FIT_COMPARE_H_
