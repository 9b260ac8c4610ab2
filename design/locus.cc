#include "design/locus.h"

#include <algorithm>
#include <cmath>

namespace lw {

std::vector<std::vector<std::complex<double>>> LocusAt(const LoopPolynomials& loop,
                                                       const std::vector<double>& gains) {
  std::vector<std::vector<std::complex<double>>> out;
  out.reserve(gains.size());
  for (double k : gains) out.push_back(loop.PolesAt(k));
  return out;
}

std::vector<LocusPoint> BreakawayPoints(const LoopPolynomials& loop) {
  std::vector<LocusPoint> out;
  Polynomial d = loop.a.derivative() * loop.b - loop.a * loop.b.derivative();
  for (const auto& r : d.roots()) {
    if (std::abs(r.imag()) > 1e-7 * (1.0 + std::abs(r.real()))) continue;
    double s = r.real();
    double bs = loop.b(s);
    if (bs == 0.0) continue;
    double k = -loop.a(s) / bs;
    if (k > 0.0 && std::isfinite(k)) out.push_back({s, k});
  }
  std::sort(out.begin(), out.end(),
            [](const LocusPoint& x, const LocusPoint& y) { return x.s < y.s; });
  return out;
}

Asymptotes AsymptotesOf(const LoopPolynomials& loop) {
  Asymptotes as;
  const int n = loop.a.degree(), m = loop.b.degree();
  if (n <= m) return as;
  // Sum of roots = -c[1]/c[0] (Vieta).
  auto root_sum = [](const Polynomial& p) {
    return p.degree() >= 1 ? -p.coefficient(p.degree() - 1) / p.leading() : 0.0;
  };
  as.centroid = (root_sum(loop.a) - root_sum(loop.b)) / (n - m);
  // With leading coefficients of opposite sign the K > 0 locus takes the even multiples.
  const double odd = loop.a.leading() * loop.b.leading() > 0.0 ? 1.0 : 0.0;
  for (int k = 0; k < n - m; ++k) as.angles_deg.push_back((2.0 * k + odd) * 180.0 / (n - m));
  return as;
}

std::vector<BoundaryCrossing> ImaginaryAxisCrossings(const LoopPolynomials& loop) {
  return CrossingsOf(loop, Boundary::kImaginaryAxis, 0.0);
}

}  // namespace lw
