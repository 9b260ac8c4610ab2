// The gain a closed-loop record shows (design/applied_gain.h). For proportional control the
// least-squares K of u - u0 = K (e - e0) is sum(e u) / sum(e^2) in closed form, computed here
// directly; for PI the record comes from the foundation's closed-loop simulator, whose u is by
// definition K (s + Z)/s applied to r - y, so the estimate must return the K it ran.
#include <cmath>
#include <vector>

#include <doctest/doctest.h>

#include "design/applied_gain.h"
#include "lti/error.h"
#include "lti/simulate.h"

namespace lw {
namespace {

TEST_CASE("applied gain: proportional in closed form, PI from a simulated loop") {
  // P: any error signal with u = 0.7 e (plus a rest value) and a little extra actuator noise.
  std::vector<double> t, r, u, y;
  double sum_eu = 0.0, sum_ee = 0.0, u0 = 0.0;
  for (int k = 0; k < 200; ++k) {
    t.push_back(0.1 * k);
    r.push_back(k >= 20 ? 2.0 : 0.0);
    y.push_back(k >= 20 ? 2.0 - 2.0 * std::exp(-0.05 * (k - 20)) * 0.9 : 0.0);
    const double e = r.back() - y.back();
    const double wobble = 0.01 * std::sin(1.7 * k);
    u.push_back(5.0 + 0.7 * e + wobble);
    if (k < 20) u0 += u.back() / 20.0;
  }
  for (size_t k = 20; k < t.size(); ++k) {
    const double e = r[k] - y[k];  // e0 = 0: at rest before the step
    sum_eu += e * (u[k] - u0);
    sum_ee += e * e;
  }
  AppliedGain p = EstimateAppliedGain(Controller(), t, r, u, y, 20);
  CHECK(p.gain == doctest::Approx(sum_eu / sum_ee).epsilon(1e-12));
  CHECK(p.gain == doctest::Approx(0.7).epsilon(0.01));
  CHECK(p.fit_percent > 95.0);

  // PI around 2 exp(-0.3 s)/(3 s + 1), K = 0.8, zero at 0.4 rad/s, a unit reference step at 1 s.
  // The simulator's controller integrates the continuous error; the estimate holds the sampled
  // one, so its integral lags by half a sample: at h = 0.01 s that moves K by about 0.3 %.
  const TransferFunction plant({2.0}, {3.0, 1.0}, 0.3);
  const Controller pi = Controller::Parse("pi:0.4");
  std::vector<double> tt, rr;
  for (int k = 0; k <= 3000; ++k) {
    tt.push_back(0.01 * k);
    rr.push_back(tt.back() >= 1.0 ? 1.0 : 0.0);
  }
  const ClosedLoopResponse loop = SimulateClosedLoop(plant, pi, 0.8, tt, rr);
  AppliedGain a = EstimateAppliedGain(pi, tt, rr, loop.u, loop.y, 100);
  CHECK(a.gain == doctest::Approx(0.8).epsilon(5e-3));
  CHECK(a.fit_percent > 99.5);
  // The same record read with the wrong zero follows no gain as closely.
  AppliedGain wrong = EstimateAppliedGain(Controller::Parse("pi:2"), tt, rr, loop.u, loop.y, 100);
  CHECK(wrong.fit_percent < a.fit_percent);

  CHECK_THROWS_AS(EstimateAppliedGain(pi, tt, rr, loop.u, loop.y, 0), UsageError);
}

}  // namespace
}  // namespace lw
