// `predict --plot FILE`: the predicted closed-loop step response (io/response_figure.h) with the
// envelope of the responses over parameter draws when the model has a covariance.
#ifndef LOOPWRIGHT_APP_PREDICT_PLOT_H_
#define LOOPWRIGHT_APP_PREDICT_PLOT_H_

#include <optional>
#include <string>
#include <vector>

#include "design/prediction.h"
#include "io/response_figure.h"
#include "lti/controller.h"
#include "lti/transfer_function.h"

namespace lw::app {

// The pointwise 2.5 % and 97.5 % quantiles of the closed-loop output and actuator effort over
// the draws, simulated on the prediction's own time grid and reference (exact dead time, the
// loop at rest at the reference's initial level, as design/prediction.h). Draws whose closed loop
// is unstable at this gain are left out and counted. On 2 threads.
struct ResponseEnvelope {
  std::vector<double> y_lo, y_hi, u_lo, u_hi;  // empty when no draw was usable
  size_t used = 0;
  size_t unstable = 0;
};
ResponseEnvelope EnvelopeOverDraws(const Prediction& p, const Controller& controller,
                                   const std::vector<TransferFunction>& draws);

struct PredictPlotInput {
  const Prediction& prediction;
  const ResponseEnvelope& envelope;
  double reference_from = 0.0, reference_to = 1.0;
  std::optional<double> overshoot_max;  // percent of the reference change
  double settle_band = 0.02;            // fraction of the change
  std::optional<double> actuator_lo, actuator_hi;
  std::string title;
  std::vector<std::string> caption;  // at most 3 lines (one is added for the envelope)
};

ResponseFigureData BuildResponseFigure(const PredictPlotInput& in);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_PREDICT_PLOT_H_
