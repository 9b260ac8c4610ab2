// The gain band of the sampled loop: the plant preceded by a zero-order hold with period T and
// the controller's shape lumped with it, both sampled together (the error is sampled, held,
// and drives C(s)/K G(s); exact for P control, an approximation of a digital PI/lead/PID), with
// the dead time exact (split-interval ZOH of lti/zoh.h, so a fraction of a period is kept).
//
//   L(z) = K Gd(z),  Gd(z) = ZOH{shape(s) G(s)},   closed-loop poles: a(z) + K b(z) = 0,
//   b = z Nl + Ne + d cp (fractional delay) or Nl + d cp (whole periods), a = z^lag cp,
// with cp(z) = det(zI - Phi) and Nx(z) = det(zI - Phi + Gamma_x c) - cp(z) (the SISO identity
// det(zI - Phi + Gamma c) = cp(z)(1 + c (zI - Phi)^-1 Gamma)).
//
// Region: every pole z maps back to s = ln(z) / T (principal branch; poles at z = 0 are
// infinitely fast) and is judged by pole_verdict.h; the boundaries are the images z = exp(s T)
// of the continuous ones within the primary strip |Im s| <= pi / T: the unit circle (stability),
// circles of radius exp(-sigma T), the ray at angle wd T, the logarithmic spiral of constant zeta
// and the image of the wn circle. These are not algebraic in z, so on each F(q) =
// Im(a(z(q)) conj(b(z(q)))) is bracketed on 3000 samples and refined by bisection to 1e-13 of the
// curve's range (real-axis end points, where F = 0 always, are taken as they are), then the
// intervals are judged as in gain_band.h.
#ifndef LOOPWRIGHT_DESIGN_DISCRETE_BAND_H_
#define LOOPWRIGHT_DESIGN_DISCRETE_BAND_H_

#include "design/gain_band.h"
#include "design/loop_polynomials.h"
#include "lti/controller.h"
#include "lti/transfer_function.h"

namespace lw {

// a(z) + K b(z) of the sampled loop (loop_polynomials' form, in z). Throws UsageError for a
// period that is not a finite number > 0.
LoopPolynomials SampledLoop(const TransferFunction& plant, const Controller& controller,
                            double period);

struct DiscreteBand {
  double period = 0.0;
  LocusBand band;  // edges' poles are in s (ln z / T)
  // 100 (1 - measure / continuous measure), measures the total length of the gain ranges with an
  // open upper end counted up to 10 times the largest finite edge of either band; NaN when the
  // continuous band is empty. Negative when sampling widens the band.
  double shrink_percent = 0.0;
};

// `continuous` is the locus band of the same loop (for the shrinkage).
DiscreteBand FindDiscreteBand(const TransferFunction& plant, const Controller& controller,
                              const Region& region, double period, const GainSet& continuous);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_DISCRETE_BAND_H_
