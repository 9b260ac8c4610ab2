#include "design/boundary_crossings.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace lw {
namespace {

using Complex = std::complex<double>;
using CPoly = std::vector<Complex>;  // ascending powers of q

CPoly Multiply(const CPoly& x, const CPoly& y) {
  if (x.empty() || y.empty()) return {};
  CPoly r(x.size() + y.size() - 1, Complex(0.0, 0.0));
  for (size_t i = 0; i < x.size(); ++i) {
    for (size_t j = 0; j < y.size(); ++j) r[i + j] += x[i] * y[j];
  }
  return r;
}

void AddScaled(CPoly& acc, const CPoly& x, double k) {
  if (acc.size() < x.size()) acc.resize(x.size(), Complex(0.0, 0.0));
  for (size_t i = 0; i < x.size(); ++i) acc[i] += k * x[i];
}

struct Curve {
  Boundary boundary;
  CPoly u, v;  // s(q) = u(q) / v(q), in scaled units
  double q_lo, q_hi;
};

// sum_k c_k w^k u^k v^(n-k) for the real polynomial with ascending coefficients c_k (scaled by
// w^k, the frequency scale) homogenised to degree n.
CPoly Compose(const Polynomial& p, double w, const std::vector<CPoly>& u_pow,
              const std::vector<CPoly>& v_pow, int n) {
  CPoly acc;
  double wk = 1.0;
  for (int k = 0; k <= p.degree(); ++k) {
    double c = p.coefficient(k) * wk;
    wk *= w;
    if (c != 0.0)
      AddScaled(acc, Multiply(u_pow[static_cast<size_t>(k)], v_pow[static_cast<size_t>(n - k)]), c);
  }
  return acc;
}

Complex EvalC(const CPoly& p, double q) {
  Complex r(0.0, 0.0);
  for (size_t i = p.size(); i-- > 0;) r = r * q + p[i];
  return r;
}

Curve MakeCurve(Boundary boundary, double value, double w) {
  const Complex j(0.0, 1.0);
  const double inf = std::numeric_limits<double>::infinity();
  const double x = value / w;  // scaled bound
  switch (boundary) {
    case Boundary::kSigmaLine:
    case Boundary::kDecayLine:
      return {boundary, {Complex(-x, 0.0), j}, {Complex(1.0, 0.0)}, 0.0, inf};
    case Boundary::kWdLine:
      return {boundary, {j * x, Complex(1.0, 0.0)}, {Complex(1.0, 0.0)}, -inf, 0.0};
    case Boundary::kZetaRay:
      return {boundary,
              {Complex(0.0, 0.0), Complex(-value, std::sqrt(1.0 - value * value))},
              {Complex(1.0, 0.0)},
              0.0,
              inf};
    case Boundary::kWnCircle:
      return {boundary, {j * x, Complex(x, 0.0)}, {-j, Complex(1.0, 0.0)}, 0.0, 1.0};
    default:
      return {Boundary::kImaginaryAxis, {Complex(0.0, 0.0), j}, {Complex(1.0, 0.0)}, 0.0, inf};
  }
}

std::vector<BoundaryCrossing> CrossingsScaled(const LoopPolynomials& loop, Boundary boundary,
                                              double value, double w);

}  // namespace

const char* BoundaryName(Boundary b) {
  switch (b) {
    case Boundary::kGainZero:
      return "K = 0";
    case Boundary::kUnbounded:
      return "unbounded";
    case Boundary::kImaginaryAxis:
      return "imaginary axis";
    case Boundary::kWnCircle:
      return "wn circle";
    case Boundary::kZetaRay:
      return "zeta ray";
    case Boundary::kSigmaLine:
      return "sigma line";
    case Boundary::kWdLine:
      return "wd line";
    case Boundary::kDecayLine:
      return "decay line";
    case Boundary::kPoleAtInfinity:
      return "pole at infinity";
    case Boundary::kDominanceSwitch:
      return "dominance switch";
    case Boundary::kBreakaway:
      return "breakaway point";
  }
  return "?";
}

const char* BoundaryKey(Boundary b) {
  switch (b) {
    case Boundary::kGainZero:
      return "gain_zero";
    case Boundary::kUnbounded:
      return "unbounded";
    case Boundary::kImaginaryAxis:
      return "imaginary_axis";
    case Boundary::kWnCircle:
      return "wn_circle";
    case Boundary::kZetaRay:
      return "zeta_ray";
    case Boundary::kSigmaLine:
      return "sigma_line";
    case Boundary::kWdLine:
      return "wd_line";
    case Boundary::kDecayLine:
      return "decay_line";
    case Boundary::kPoleAtInfinity:
      return "pole_at_infinity";
    case Boundary::kDominanceSwitch:
      return "dominance_switch";
    case Boundary::kBreakaway:
      return "breakaway";
  }
  return "?";
}

std::vector<BoundaryCrossing> CrossingsOf(const LoopPolynomials& loop, Boundary boundary,
                                          double value) {
  return CrossingsScaled(loop, boundary, value, loop.FrequencyScale());
}

namespace {

// CrossingsOf with the loop's frequency scale w given (computed once for all boundaries).
std::vector<BoundaryCrossing> CrossingsScaled(const LoopPolynomials& loop, Boundary boundary,
                                              double value, double w) {
  std::vector<BoundaryCrossing> out;
  const Curve curve = MakeCurve(boundary, value, w);
  const int n = std::max(loop.a.degree(), loop.b.degree());
  std::vector<CPoly> u_pow{{Complex(1.0, 0.0)}}, v_pow{{Complex(1.0, 0.0)}};
  for (int k = 1; k <= n; ++k) {
    u_pow.push_back(Multiply(u_pow.back(), curve.u));
    v_pow.push_back(Multiply(v_pow.back(), curve.v));
  }
  const CPoly ca = Compose(loop.a, w, u_pow, v_pow, n);
  const CPoly cb = Compose(loop.b, w, u_pow, v_pow, n);
  // F(q) = Im(ca(q) conj(cb(q))) for real q.
  std::vector<double> f(ca.size() + cb.size() - 1, 0.0);
  double scale = 0.0;
  for (size_t i = 0; i < ca.size(); ++i) {
    for (size_t k = 0; k < cb.size(); ++k) {
      f[i + k] += (ca[i] * std::conj(cb[k])).imag();
      scale = std::max(scale, std::abs(ca[i]) * std::abs(cb[k]));
    }
  }
  if (scale == 0.0) return out;
  for (double& c : f) {
    if (std::abs(c) < 1e-14 * scale) c = 0.0;  // cancellation noise
    c /= scale;
  }
  // On a vertical line s = w (-x + j q), ca(q) = A(j q) and cb(q) = B(j q) for the real
  // polynomials A(z) = a(w (z - x)), B(z) = b(w (z - x)), so the coefficient of q^k in F is a
  // sum of A_i B_l Im(j^(i - l)) with i + l = k: zero for every even k. F = q G(q^2), and the
  // roots come from G, of half the degree (an eigenvalue problem an eighth the size): q = 0 and
  // q = sqrt(u) for each root u of G.
  const bool vertical = boundary == Boundary::kImaginaryAxis || boundary == Boundary::kSigmaLine ||
                        boundary == Boundary::kDecayLine;
  if (vertical) {
    for (size_t k = 0; k < f.size(); k += 2) f[k] = 0.0;
  }
  std::vector<double> descending(f.rbegin(), f.rend());
  Polynomial fp(descending);
  if (fp.degree() < 1) return out;
  const Polynomial dfp = fp.derivative();
  std::vector<Complex> candidates;
  if (vertical) {
    std::vector<double> g;  // descending powers of u = q^2
    for (size_t k = f.size(); k-- > 0;) {
      if (k % 2 == 1) g.push_back(f[k]);
    }
    candidates.emplace_back(0.0, 0.0);
    for (const Complex& u : Polynomial(g).roots()) {
      if (u != Complex(0.0, 0.0)) candidates.push_back(std::sqrt(u));
    }
  } else {
    candidates = fp.roots();
  }
  for (const Complex& r : candidates) {
    if (std::abs(r.imag()) > 1e-6 * (1.0 + std::abs(r.real()))) continue;
    double q = r.real();
    for (int it = 0; it < 4; ++it) {  // Newton polish, kept only while it helps
      double d = dfp(q);
      if (d == 0.0) break;
      double next = q - fp(q) / d;
      if (!(std::abs(fp(next)) < std::abs(fp(q)))) break;
      q = next;
    }
    const double tol = 1e-9 * (1.0 + std::abs(q));
    if (q < curve.q_lo - tol || q > curve.q_hi + tol) continue;
    q = std::clamp(q, curve.q_lo, curve.q_hi);
    const Complex s = w * (EvalC(curve.u, q) / EvalC(curve.v, q));
    const Complex as = loop.a(s), bs = loop.b(s);
    if (std::abs(bs) <= 1e-13 * std::abs(as) || std::abs(bs) == 0.0) continue;
    const Complex k = -as / bs;
    if (!(k.real() > 0.0) || !std::isfinite(k.real())) continue;
    if (std::abs(k.imag()) > 1e-6 * std::abs(k)) continue;
    out.push_back({k.real(), boundary, Complex(s.real(), std::abs(s.imag()))});
  }
  std::sort(out.begin(), out.end(),
            [](const BoundaryCrossing& x, const BoundaryCrossing& y) { return x.gain < y.gain; });
  return out;
}

}  // namespace

std::vector<BoundaryCrossing> AllCrossings(const LoopPolynomials& loop, const Region& region) {
  const double w = loop.FrequencyScale();
  std::vector<BoundaryCrossing> out = CrossingsScaled(loop, Boundary::kImaginaryAxis, 0.0, w);
  auto add = [&](Boundary b, double v) {
    if (v <= 0.0) return;
    auto c = CrossingsScaled(loop, b, v, w);
    out.insert(out.end(), c.begin(), c.end());
  };
  add(Boundary::kWnCircle, region.wn_min);
  add(Boundary::kZetaRay, region.zeta_min);
  add(Boundary::kSigmaLine, region.sigma_min);
  add(Boundary::kWdLine, region.wd_min);
  if (region.decay_min != region.sigma_min) add(Boundary::kDecayLine, region.decay_min);
  if (loop.a.degree() == loop.b.degree()) {
    double k = -loop.a.leading() / loop.b.leading();
    if (k > 0.0 && std::isfinite(k)) {
      const double inf = std::numeric_limits<double>::infinity();
      out.push_back({k, Boundary::kPoleAtInfinity, Complex(-inf, 0.0)});
    }
  }
  std::sort(out.begin(), out.end(),
            [](const BoundaryCrossing& x, const BoundaryCrossing& y) { return x.gain < y.gain; });
  return out;
}

}  // namespace lw
