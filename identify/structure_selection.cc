#include "identify/structure_selection.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "lti/error.h"

namespace lw {

namespace {
double LogMeanSquare(double rss, size_t n) {
  const double nn = static_cast<double>(n);
  return nn * std::log(std::max(rss, 1e-300 * nn) / nn);
}
}  // namespace

double Aicc(double rss, size_t n, int k) {
  const double nn = static_cast<double>(n);
  if (nn <= k + 1.0 || !(rss >= 0.0)) return std::numeric_limits<double>::infinity();
  return LogMeanSquare(rss, n) + 2.0 * k + 2.0 * k * (k + 1.0) / (nn - k - 1.0);
}

double Bic(double rss, size_t n, int k) {
  if (n == 0 || !(rss >= 0.0)) return std::numeric_limits<double>::infinity();
  return LogMeanSquare(rss, n) + k * std::log(static_cast<double>(n));
}

int SelectMinimum(const std::vector<double>& criterion, const std::vector<bool>& usable) {
  int best = -1;
  for (size_t i = 0; i < criterion.size() && i < usable.size(); ++i) {
    if (!usable[i] || !std::isfinite(criterion[i])) continue;
    if (best < 0 || criterion[i] < criterion[static_cast<size_t>(best)]) best = static_cast<int>(i);
  }
  return best;
}

void SelectionOptions::Validate() const {
  if (!(std::isfinite(support_width) && support_width >= 0.0)) {
    std::ostringstream v;
    v << support_width;
    throw UsageError("support_width " + v.str() + ": must be a finite number >= 0");
  }
}

Selection SelectStructure(const std::vector<double>& criterion,
                          const std::vector<int>& free_parameters, const std::vector<bool>& usable,
                          const SelectionOptions& options, const std::vector<bool>& determined) {
  options.Validate();
  Selection s;
  s.smallest = SelectMinimum(criterion, usable);
  s.chosen = s.smallest;
  if (s.smallest < 0 || !options.prefer_fewer_parameters) return s;
  const double limit = criterion[static_cast<size_t>(s.smallest)] + options.support_width;
  for (size_t i = 0; i < criterion.size() && i < usable.size() && i < free_parameters.size(); ++i) {
    if (!usable[i] || !std::isfinite(criterion[i]) || criterion[i] > limit) continue;
    const size_t c = static_cast<size_t>(s.chosen);
    const bool det_i = i >= determined.size() || determined[i];
    const bool det_c = c >= determined.size() || determined[c];
    if (free_parameters[i] != free_parameters[c]) {
      if (free_parameters[i] < free_parameters[c]) s.chosen = static_cast<int>(i);
    } else if (det_i != det_c) {
      if (det_i) s.chosen = static_cast<int>(i);
    } else if (criterion[i] < criterion[c]) {
      s.chosen = static_cast<int>(i);
    }
  }
  return s;
}

std::string_view CriterionRationale() {
  return "AICc (Akaike with the small-sample correction): the model is wanted for prediction, "
         "which AIC estimates, and no low-order candidate is the rig's true structure, which "
         "BIC assumes";
}

}  // namespace lw
