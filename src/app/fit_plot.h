// `fit --plot FILE`: the fit figure (io/fit_figure.h) from an identification result.
#ifndef LOOPWRIGHT_APP_FIT_PLOT_H_
#define LOOPWRIGHT_APP_FIT_PLOT_H_

#include <string>

#include "identify/fit.h"
#include "identify/preprocess.h"

namespace lw::app {

// The model's response to the recorded input: output_offset + G (u - input_baseline) from rest
// (plus the drift term for an integrating fit), over the whole recording; the step instants are
// where the input jumps by more than a quarter of its range between two samples.
void WriteFitPlot(const std::string& path, const std::string& recording_name,
                  const StepRecording& data, const Identification& id);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_FIT_PLOT_H_
