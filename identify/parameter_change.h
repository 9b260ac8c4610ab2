// How much a plant parameter moved between two fits (before and after a hardware change), and
// whether the move is larger than the two fits' uncertainties explain.
//
// For one parameter with old and new estimates a_old, a_new and standard errors se_old, se_new
// (independent fits of independent recordings), the change d = a_new - a_old has standard error
// sqrt(se_old^2 + se_new^2), and
//   z = d / sqrt(se_old^2 + se_new^2),   significant when |z| > 1.96
// (the two-sample z test at the 5 % level, e.g. Montgomery & Runger, Applied Statistics and
// Probability for Engineers, ch. 10; from memory). A standard error comes from the fit's
// covariance when there is one, otherwise from its 95 % interval as (high - low) / (2 x 1.96);
// the fits' intervals use Student's t, which for the hundreds of samples of a step test is 1.96
// to three digits. When either standard error is unknown the significance is unknown.
#ifndef LOOPWRIGHT_IDENTIFY_PARAMETER_CHANGE_H_
#define LOOPWRIGHT_IDENTIFY_PARAMETER_CHANGE_H_

#include <limits>
#include <optional>
#include <string>
#include <vector>

namespace lw {

inline constexpr double kSignificanceZ = 1.96;

// One fit's estimate of one parameter (unknown numbers are NaN).
struct EstimateSummary {
  std::string name, unit;
  double value = 0.0;
  double se = std::numeric_limits<double>::quiet_NaN();
  double ci_low = std::numeric_limits<double>::quiet_NaN();
  double ci_high = std::numeric_limits<double>::quiet_NaN();
};

// se from a 95 % interval: (high - low) / (2 x 1.96); NaN when the interval is not finite.
double StandardErrorFromInterval(double ci_low, double ci_high);

struct ParameterChange {
  std::string name, unit;
  EstimateSummary before, after;
  double change = 0.0;          // after - before
  double change_percent = 0.0;  // 100 change / |before| (NaN when before is 0)
  double z = std::numeric_limits<double>::quiet_NaN();
  std::optional<bool> significant;  // unknown without both standard errors
};

// z and significance as above for one pair.
ParameterChange CompareEstimate(const EstimateSummary& before, const EstimateSummary& after);

// Every parameter present in both lists, matched by name, in the order of `after`; the names
// found in only one list are appended to only_before / only_after.
std::vector<ParameterChange> CompareEstimates(const std::vector<EstimateSummary>& before,
                                              const std::vector<EstimateSummary>& after,
                                              std::vector<std::string>& only_before,
                                              std::vector<std::string>& only_after);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_PARAMETER_CHANGE_H_
