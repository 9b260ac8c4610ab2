// Where a closed-loop pole of a(s) + K b(s) = 0 (loop_polynomials.h) sits exactly on a boundary
// of the region (specs.h), for K > 0. Not by sweeping K.
//
// Each boundary is a curve s(q) = U(q) / V(q) with U, V complex polynomials in a real q:
//   imaginary axis       s = j q,                        q >= 0
//   sigma line           s = -sigma_min + j q,           q >= 0
//   decay line           s = -decay_min + j q,           q >= 0
//   wd line              s = q + j wd_min,               q <= 0
//   zeta ray             s = q (-zeta + j sqrt(1 - zeta^2)),  q >= 0
//   wn circle            s = wn (q + j) / (q - j),       0 <= q <= 1  (the left quarter circle
//                        from s = -wn at q = 0 to s = j wn at q = 1)
// (only Im s >= 0: poles come in conjugate pairs). A point s is a closed-loop pole for
// K = -a(s)/b(s), and that K is real exactly when Im(a(s) conj(b(s))) = 0. Multiplying a and b by
// V(q)^n (n = degree of a) turns this into a real polynomial F(q) of degree <= 2n; ALL its roots
// come from the eigenvalues of its companion matrix (Polynomial::roots; on the vertical lines,
// the imaginary axis and the sigma and decay lines, F is odd in q, F = q G(q^2), and they come
// from G's companion, of half the size), the real ones in the curve's range are kept
// (|Im q| <= 1e-6 (1 + |q|), then Newton-polished on F), and K = -a/b is evaluated there; K > 0 and
// finite is a crossing. s is scaled by the loop's frequency scale first so the coefficients stay of
// similar size. A tangency (a double root of F) is kept too: it is a candidate gain that changes no
// classification.
//
// Also reported: the gain where lead(a) + K lead(b) = 0 (a pole leaves through infinity), which
// only happens for a biproper loop whose leading coefficients have opposite signs.
#ifndef LOOPWRIGHT_DESIGN_BOUNDARY_CROSSINGS_H_
#define LOOPWRIGHT_DESIGN_BOUNDARY_CROSSINGS_H_

#include <complex>
#include <vector>

#include "design/loop_polynomials.h"
#include "design/specs.h"

namespace lw {

enum class Boundary {
  kGainZero,         // the open lower end K = 0
  kUnbounded,        // the open upper end K = inf
  kImaginaryAxis,    // stability
  kWnCircle,         // |s| = wn_min
  kZetaRay,          // zeta = zeta_min
  kSigmaLine,        // Re s = -sigma_min
  kWdLine,           // Im s = wd_min
  kDecayLine,        // Re s = -decay_min (non-dominant poles)
  kPoleAtInfinity,   // lead(a) + K lead(b) = 0
  kDominanceSwitch,  // two poles with equal real part trade the dominant role (gain_band.h)
  kBreakaway,        // two real poles meet and leave as a pair, or the reverse (locus.h)
};
// "K = 0", "unbounded", "imaginary axis", "wn circle", "zeta ray", "sigma line", "wd line",
// "decay line", "pole at infinity", "dominance switch", "breakaway point".
const char* BoundaryName(Boundary b);
// A short key for JSON: "gain_zero", "unbounded", "imaginary_axis", "wn_circle", ...
const char* BoundaryKey(Boundary b);

struct BoundaryCrossing {
  double gain = 0.0;  // K > 0
  Boundary boundary = Boundary::kImaginaryAxis;
  std::complex<double> pole;  // the closed-loop pole on the boundary, Im >= 0
};

// The crossings of one boundary curve. `value` is the curve's bound (wn for the circle, zeta
// for the ray, sigma for the sigma and decay lines, wd for the wd line; ignored for the
// imaginary axis). Sorted by gain.
std::vector<BoundaryCrossing> CrossingsOf(const LoopPolynomials& loop, Boundary boundary,
                                          double value);

// The crossings of every boundary the region has (the imaginary axis always; each other curve
// when its bound is > 0), plus the pole-at-infinity gain. Sorted by gain.
std::vector<BoundaryCrossing> AllCrossings(const LoopPolynomials& loop, const Region& region);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_BOUNDARY_CROSSINGS_H_
