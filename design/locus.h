// The root locus of a(s) + K b(s) = 0 (loop_polynomials.h) for K >= 0: the closed-loop poles
// at chosen gains, the breakaway and break-in points, the asymptotes and the imaginary-axis
// crossings. For plotting and for explaining a band; the band itself is in gain_band.h.
//
// Breakaway / break-in points: real s where two branches meet, i.e. dK/ds = 0 for
// K(s) = -a(s)/b(s): the real roots of a'(s) b(s) - a(s) b'(s) with K(s) > 0 (e.g. Ogata,
// Modern Control Engineering, root-locus rules; from memory).
// Asymptotes: as K -> inf, n - m branches (n = deg a, m = deg b) leave along rays from the
// centroid (sum of roots of a - sum of roots of b) / (n - m) at angles (2k + 1) 180 / (n - m)
// degrees, k = 0 .. n-m-1 (same source); at 2k 180 / (n - m) when lead(a) lead(b) < 0.
#ifndef LOOPWRIGHT_DESIGN_LOCUS_H_
#define LOOPWRIGHT_DESIGN_LOCUS_H_

#include <complex>
#include <vector>

#include "design/boundary_crossings.h"
#include "design/loop_polynomials.h"

namespace lw {

struct LocusPoint {
  double s = 0.0;     // real location (rad/s)
  double gain = 0.0;  // K there, > 0
};

struct Asymptotes {
  double centroid = 0.0;           // real point the rays start from (rad/s)
  std::vector<double> angles_deg;  // empty when n == m
};

// Closed-loop poles at each gain (one vector per gain, Polynomial::roots order).
std::vector<std::vector<std::complex<double>>> LocusAt(const LoopPolynomials& loop,
                                                       const std::vector<double>& gains);
// Real breakaway and break-in points with K > 0, sorted by s.
std::vector<LocusPoint> BreakawayPoints(const LoopPolynomials& loop);
Asymptotes AsymptotesOf(const LoopPolynomials& loop);
// Gains K > 0 where a closed-loop pole is on the imaginary axis (pole = j w, w >= 0), sorted.
std::vector<BoundaryCrossing> ImaginaryAxisCrossings(const LoopPolynomials& loop);

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_LOCUS_H_
