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
//
// Near-ties go to the simpler structure. A difference of AICc below about 2 is weak evidence:
// Burnham & Anderson (Model Selection and Multimodel Inference, 2nd ed., Springer 2002; from
// memory) read every model within delta AICc <= 2 of the best as having substantial support.
// The structures nest (fopdt inside sopdt inside sopdt-zero), so on first-order data the larger
// ones reach about the same residual and, by the noise alone, now and then a slightly smaller
// AICc; their extra pole or zero is then poorly determined (a near pole-zero pair, a shifted dead
// time). SelectStructure therefore takes, among the usable candidates within
// `support_width` of the smallest AICc, the one with the fewest free parameters, and among
// those the one whose parameters the data determine (`determined`, below), then the smallest
// AICc. Taking the simplest supported, identifiable model is common practice, not a theorem;
// `prefer_fewer_parameters = false` (or width 0) restores the plain minimum.
// `determined[i]` is false when candidate i's covariance is rank-deficient or a 95 % interval
// of a quantity that must not be zero (a gain, a time constant, a damping ratio, a natural
// frequency) contains zero: e.g. a sopdt fitted to an integrating tank, whose first time
// constant runs far beyond the record so that gain and time constant are not told apart, ties
// with the integrating structure (same number of parameters) and loses to it.
#ifndef LOOPWRIGHT_IDENTIFY_STRUCTURE_SELECTION_H_
#define LOOPWRIGHT_IDENTIFY_STRUCTURE_SELECTION_H_

#include <cstddef>
#include <string_view>
#include <vector>

namespace lw {

// +infinity when n <= k + 1 or rss <= 0 is not usable (rss = 0 is floored at 1e-300 n).
double Aicc(double rss, size_t n, int k);
double Bic(double rss, size_t n, int k);

struct SelectionOptions {
  bool prefer_fewer_parameters = true;  // the near-tie rule above
  double support_width = 2.0;           // delta AICc counted as a near-tie: finite, >= 0
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

struct Selection {
  int smallest = -1;  // index of the smallest criterion (-1: none usable)
  int chosen = -1;    // the index chosen by the rule (== smallest when the rule is off)
};

// The choice described above among entries with usable[i] and a finite criterion;
// `free_parameters[i]` is entry i's k. All vectors have the same length; an empty `determined`
// counts every entry as determined.
Selection SelectStructure(const std::vector<double>& criterion,
                          const std::vector<int>& free_parameters, const std::vector<bool>& usable,
                          const SelectionOptions& options,
                          const std::vector<bool>& determined = {});

// Index of the smallest criterion among entries with usable[i]; -1 when none is usable.
int SelectMinimum(const std::vector<double>& criterion, const std::vector<bool>& usable);

// One sentence for reports: which criterion and why (the reasoning above).
std::string_view CriterionRationale();

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_STRUCTURE_SELECTION_H_
