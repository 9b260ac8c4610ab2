// Plausible plants from a fitted model's uncertainty: multivariate normal draws of the
// parameter vector, mean the fitted values and covariance the fit's (model-file order), each
// turned into a transfer function. For robust gain bands and checks of a model against fresh
// data.
//
// Draws use x = mean + L z with L L' = covariance (eigen-decomposition, so a positive
// semi-definite covariance is fine) and z standard normal from a 64-bit Mersenne Twister with a
// Box-Muller transform written here, so a seed gives the same draws on every platform. Draws
// that break the structure's physical rules (model_structure.h: IsPhysical) are rejected and
// redrawn; their count is reported.
#ifndef LOOPWRIGHT_IDENTIFY_PARAMETER_DRAWS_H_
#define LOOPWRIGHT_IDENTIFY_PARAMETER_DRAWS_H_

#include <cstdint>
#include <span>
#include <vector>

#include <Eigen/Dense>

#include "identify/model_structure.h"
#include "lti/transfer_function.h"

namespace lw {

struct ParameterDraws {
  std::vector<std::vector<double>> parameters;  // count entries, structure order
  std::vector<TransferFunction> plants;         // the same, as transfer functions
  size_t rejected = 0;                          // unphysical draws redrawn
};

// count >= 1 draws. Throws UsageError when sizes disagree, the covariance is not symmetric
// positive semi-definite (to 1e-9 relative), the mean is not physical, or more than 100 count
// draws are rejected in a row (the covariance puts most of its mass outside the physical region).
ParameterDraws DrawParameters(Structure s, std::span<const double> mean,
                              const Eigen::MatrixXd& covariance, size_t count, uint64_t seed);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_PARAMETER_DRAWS_H_
