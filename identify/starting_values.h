// Starting values for the output-error fit of each structure, in the full parameter layout of
// output_error.h ([structure parameters..., output_offset, output_drift]). Several starts per
// structure make the multi-start: the dead time is varied around the two-point estimate (and,
// for the richer structures, the split between time constants, the damping and the zero).
// The gain and offsets of each start are refined linearly by SolveMultiStart, so only the
// dynamics matter here.
#ifndef LOOPWRIGHT_IDENTIFY_STARTING_VALUES_H_
#define LOOPWRIGHT_IDENTIFY_STARTING_VALUES_H_

#include <vector>

#include "identify/model_structure.h"
#include "identify/preprocess.h"
#include "identify/step_detection.h"

namespace lw {

// seed: the fitted structure parameters of a simpler model (fopdt for sopdt, underdamped and
// integrating; sopdt for sopdt-zero) or empty.
std::vector<std::vector<double>> StartingValues(Structure s, const StepRecording& rec,
                                                const RecordingAnalysis& a,
                                                const std::vector<double>& seed);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_STARTING_VALUES_H_
