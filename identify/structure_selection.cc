#include "identify/structure_selection.h"

#include <algorithm>
#include <cmath>
#include <limits>

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

std::string_view CriterionRationale() {
  return "AICc (Akaike with the small-sample correction): the model is wanted for prediction, "
         "which AIC estimates, and no low-order candidate is the rig's true structure, which "
         "BIC assumes";
}

}  // namespace lw
