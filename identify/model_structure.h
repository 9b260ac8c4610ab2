// The low-order model structures `fit` can identify, with their parameters in plain trade words.
//
//   fopdt        K exp(-T s) / (tau s + 1)
//   sopdt        K exp(-T s) / ((tau1 s + 1)(tau2 s + 1)),            tau1 >= tau2 > 0
//   underdamped  K wn^2 exp(-T s) / (s^2 + 2 zeta wn s + wn^2),       0 < zeta <= 1, wn > 0
//   integrating  K exp(-T s) / (s (tau s + 1)),                       tau > 0
//   sopdt-zero   K (tauz s + 1) exp(-T s) / ((tau1 s + 1)(tau2 s + 1)), tauz any sign
//                (tauz < 0 is an inverse response: the output first moves the wrong way)
//
// Units: K is in output units per input unit (per input unit and second for `integrating`),
// time constants and the dead time T are in seconds, wn in rad/s, zeta has none.
//
// Every structure's parameters are kept in the fixed order of ParameterNames(); that order is
// the one model files store their values and covariance in, and the one
// StructureTransferFunction() reads.
#ifndef LOOPWRIGHT_IDENTIFY_MODEL_STRUCTURE_H_
#define LOOPWRIGHT_IDENTIFY_MODEL_STRUCTURE_H_

#include <limits>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "lti/transfer_function.h"

namespace lw {

enum class Structure { kFopdt, kSopdt, kUnderdamped, kIntegrating, kSopdtZero };

// All five, in the order `auto` tries them and tables list them.
const std::vector<Structure>& AllStructures();

// "fopdt", "sopdt", "underdamped", "integrating", "sopdt-zero".
std::string_view StructureName(Structure s);
// The inverse of StructureName; throws UsageError listing the valid names.
Structure ParseStructure(std::string_view name);
// A fit's structure choice: "auto" (every structure, structure_selection.h) or a name that
// ParseStructure takes; anything else throws UsageError listing both.
void CheckStructureChoice(std::string_view name);

// What one parameter is: its name (snake_case), its unit given the recording's input and output
// units, and the rule that keeps it physical.
struct ParameterInfo {
  std::string name;
  std::string unit;
};

// The physical range of a parameter, by name: dead_time, the time constants of poles
// (time_constant, time_constant_1, time_constant_2) and natural_frequency lie in [0, inf),
// damping_ratio in [0, 1] (the underdamped structure's); every other name (gain,
// zero_time_constant, output_offset, output_drift) is unbounded. A 95 % interval value +- t sd
// is symmetric and may reach past it; the range says where the data's interval is cut by
// physics rather than by the data.
struct ParameterRange {
  double lo = -std::numeric_limits<double>::infinity();
  double hi = std::numeric_limits<double>::infinity();
};
ParameterRange PhysicalRange(std::string_view name);

// Parameter names in the structure's fixed order, e.g. fopdt: gain, time_constant, dead_time.
std::vector<std::string> ParameterNames(Structure s);
// Names and units; input_unit/output_unit may be empty (then K is "output/input").
std::vector<ParameterInfo> ParameterInfos(Structure s, std::string_view input_unit = "",
                                          std::string_view output_unit = "");
int ParameterCount(Structure s);
// Index of the dead time in the parameter vector (always the last one).
int DeadTimeIndex(Structure s);

// The transfer function for a parameter vector in the structure's order. Throws UsageError when
// the size is wrong or a value is not physical (tau <= 0, zeta outside (0, 1], wn <= 0, T < 0).
TransferFunction StructureTransferFunction(Structure s, std::span<const double> params);
TransferFunction StructureTransferFunction(std::string_view structure,
                                           std::span<const double> params);

// True when the parameters satisfy the structure's physical rules (listed above).
bool IsPhysical(Structure s, std::span<const double> params);

// Brings an equivalent parameter vector into canonical form: for sopdt and sopdt-zero the two
// time constants are swapped when tau1 < tau2 (the model is the same). Returns the permutation
// applied (perm[i] = old index of new parameter i) so a covariance can be reordered too.
std::vector<int> Canonicalize(Structure s, std::span<double> params);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_MODEL_STRUCTURE_H_
