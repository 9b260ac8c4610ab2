#include "app/predict_plot.h"

#include <algorithm>
#include <cmath>
#include <thread>

#include "design/loop_polynomials.h"
#include "lti/simulate.h"

namespace lw::app {
namespace {

// The q-quantile (0..1) of v by linear interpolation between order statistics; v is reordered.
double Quantile(std::vector<double>& v, double q) {
  std::sort(v.begin(), v.end());
  double pos = q * static_cast<double>(v.size() - 1);
  size_t i = static_cast<size_t>(std::floor(pos));
  size_t j = std::min(i + 1, v.size() - 1);
  return v[i] + (pos - static_cast<double>(i)) * (v[j] - v[i]);
}

}  // namespace

ResponseEnvelope EnvelopeOverDraws(const Prediction& p, const Controller& controller,
                                   const std::vector<TransferFunction>& draws) {
  ResponseEnvelope env;
  std::vector<std::vector<double>> ys(draws.size()), us(draws.size());
  std::vector<char> ok(draws.size(), 0);
  const int pade = p.pade_order > 0 ? p.pade_order : 3;
  auto work = [&](size_t first) {
    for (size_t i = first; i < draws.size(); i += 2) {
      // Stability from the Padé loop's poles, as the prediction itself judges it.
      auto poles = LoopPolynomials::ForGain(draws[i], controller, pade).PolesAt(p.gain);
      if (std::any_of(poles.begin(), poles.end(), [](auto s) { return !(s.real() < 0.0); }))
        continue;
      ClosedLoopResponse r = SimulateClosedLoop(draws[i], controller, p.gain, p.t, p.r);
      if (!std::all_of(r.y.begin(), r.y.end(), [](double v) { return std::isfinite(v); })) continue;
      ys[i] = std::move(r.y);
      us[i] = std::move(r.u);
      ok[i] = 1;
    }
  };
  std::thread other(work, 1);
  work(0);
  other.join();
  std::vector<size_t> use;
  for (size_t i = 0; i < draws.size(); ++i) {
    if (ok[i]) use.push_back(i);
  }
  env.used = use.size();
  env.unstable = draws.size() - use.size();
  if (use.empty()) return env;
  const size_t n = p.t.size();
  env.y_lo.resize(n);
  env.y_hi.resize(n);
  env.u_lo.resize(n);
  env.u_hi.resize(n);
  std::vector<double> col(use.size());
  for (size_t k = 0; k < n; ++k) {
    for (size_t j = 0; j < use.size(); ++j) col[j] = ys[use[j]][k];
    env.y_lo[k] = Quantile(col, 0.025);
    env.y_hi[k] = Quantile(col, 0.975);
    for (size_t j = 0; j < use.size(); ++j) col[j] = us[use[j]][k];
    env.u_lo[k] = Quantile(col, 0.025);
    env.u_hi[k] = Quantile(col, 0.975);
  }
  return env;
}

ResponseFigureData BuildResponseFigure(const PredictPlotInput& in) {
  const Prediction& p = in.prediction;
  ResponseFigureData d;
  d.title = in.title;
  d.t = p.t;
  d.reference = p.r;
  d.predicted = p.y;
  d.effort = p.u;
  d.envelope_lo = in.envelope.y_lo;
  d.envelope_hi = in.envelope.y_hi;
  d.effort_lo = in.envelope.u_lo;
  d.effort_hi = in.envelope.u_hi;
  const double change = in.reference_to - in.reference_from;
  if (in.overshoot_max) d.overshoot_level = in.reference_to + change * *in.overshoot_max / 100.0;
  d.settle_lo = in.reference_to - in.settle_band * std::abs(change);
  d.settle_hi = in.reference_to + in.settle_band * std::abs(change);
  if (in.actuator_lo) d.actuator_lo = *in.actuator_lo;
  if (in.actuator_hi) d.actuator_hi = *in.actuator_hi;
  d.caption = in.caption;
  if (in.envelope.used > 0) {
    std::string line = "Shaded: 2.5-97.5 % of the responses over " +
                       std::to_string(in.envelope.used) + " parameter draws";
    if (in.envelope.unstable > 0)
      line += " (" + std::to_string(in.envelope.unstable) + " unstable draws left out)";
    d.caption.push_back(line + ".");
  }
  return d;
}

}  // namespace lw::app
