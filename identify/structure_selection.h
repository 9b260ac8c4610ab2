// Choosing among fitted structures by an information criterion.
//
// loopwright uses AICc, Akaike's criterion with the small-sample correction of Hurvich & Tsai
// (Biometrika 1989; from memory), for Gaussian output errors:
//   AICc = n ln(RSS / n) + 2k + 2k(k + 1) / (n - k - 1),
// with n fitted samples and k free parameters (offsets included). Why AICc and not BIC: the
// model is wanted for prediction (designing a loop around it), which is what AIC estimates
// (expected Kullback-Leibler loss); BIC instead aims to find a "true" structure among the
// candidates, and a low-order model of a real rig is never exactly true. The correction term
// keeps AIC from over-fitting short records and vanishes for long ones.
// BIC = n ln(RSS / n) + k ln n is reported alongside for reference.
#ifndef LOOPWRIGHT_IDENTIFY_STRUCTURE_SELECTION_H_
#define LOOPWRIGHT_IDENTIFY_STRUCTURE_SELECTION_H_

#include <cstddef>
#include <string_view>
#include <vector>

namespace lw {

// +infinity when n <= k + 1 or rss <= 0 is not usable (rss = 0 is floored at 1e-300 n).
double Aicc(double rss, size_t n, int k);
double Bic(double rss, size_t n, int k);

// Index of the smallest criterion among entries with usable[i]; -1 when none is usable.
int SelectMinimum(const std::vector<double>& criterion, const std::vector<bool>& usable);

// One sentence for reports: which criterion and why (the reasoning above).
std::string_view CriterionRationale();

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_STRUCTURE_SELECTION_H_
