#include "design/discrete_band.h"

#include <cmath>
#include <limits>
#include <numbers>

#include <Eigen/Eigenvalues>

#include "lti/error.h"
#include "lti/state_space.h"
#include "lti/zoh.h"

namespace lw {
namespace {

using Complex = std::complex<double>;
constexpr double kPi = std::numbers::pi;

Polynomial CharPoly(const Eigen::MatrixXd& m) {
  if (m.rows() == 0) return Polynomial::Constant(1.0);
  Eigen::EigenSolver<Eigen::MatrixXd> es(m, false);
  std::vector<Complex> roots;
  for (Eigen::Index i = 0; i < m.rows(); ++i) roots.push_back(es.eigenvalues()[i]);
  // Make conjugate pairs exact (the solver returns them to rounding).
  for (auto& r : roots) {
    if (std::abs(r.imag()) <= 1e-12 * std::max(1.0, std::abs(r))) r = {r.real(), 0.0};
  }
  return Polynomial::FromRoots(roots);
}

std::vector<Complex> PolesInS(const LoopPolynomials& loop, double k, double period) {
  std::vector<Complex> out;
  for (const Complex& z : loop.PolesAt(k)) {
    if (std::abs(z) < 1e-300) continue;  // infinitely fast
    out.push_back(std::log(z) / period);
  }
  return out;
}

struct ZCurve {
  Boundary boundary;
  double q_lo, q_hi;
  std::function<Complex(double)> s;  // s(q); z = exp(s T)
};

}  // namespace

LoopPolynomials SampledLoop(const TransferFunction& plant, const Controller& controller,
                            double period) {
  if (!std::isfinite(period) || period <= 0.0) {
    throw UsageError("sample time " + std::to_string(period) + " s: it must be a number > 0");
  }
  TransferFunction l = controller.Shape() * plant.Rational();
  SampledStateSpace sd = SampleZoh(Realize(l), period, plant.delay());
  Polynomial cp = CharPoly(sd.phi);
  auto part = [&](const Eigen::VectorXd& g) {
    if (sd.phi.rows() == 0) return Polynomial();
    return CharPoly(sd.phi - g * sd.c) - cp;
  };
  Polynomial z({1.0, 0.0});
  Polynomial b =
      (sd.fraction > 0.0 ? z * part(sd.gamma_late) + part(sd.gamma_early) : part(sd.gamma_late)) +
      cp * sd.d;
  Polynomial a = cp;
  for (int i = 0; i < sd.output_lag(); ++i) a = a * z;
  return LoopPolynomials::FromPolynomials(a, b);
}

DiscreteBand FindDiscreteBand(const TransferFunction& plant, const Controller& controller,
                              const Region& region, double period, const GainSet& continuous) {
  LoopPolynomials loop = SampledLoop(plant, controller, period);
  const double T = period, strip = kPi / period;
  std::vector<ZCurve> curves;
  curves.push_back({Boundary::kImaginaryAxis, 0.0, strip, [](double q) { return Complex(0, q); }});
  auto vertical = [&](Boundary b, double sigma) {
    if (sigma > 0) curves.push_back({b, 0.0, strip, [=](double q) { return Complex(-sigma, q); }});
  };
  vertical(Boundary::kSigmaLine, region.sigma_min);
  if (region.decay_min != region.sigma_min) vertical(Boundary::kDecayLine, region.decay_min);
  if (region.wd_min > 0 && region.wd_min < strip) {
    // z = r exp(j wd T), r in [0, 1]  <=>  s = ln(r)/T + j wd.
    double wd = region.wd_min;
    curves.push_back(
        {Boundary::kWdLine, 1e-12, 1.0, [=](double r) { return Complex(std::log(r) / T, wd); }});
  }
  if (region.zeta_min > 0) {
    double zt = region.zeta_min, c = std::sqrt(1.0 - zt * zt);
    curves.push_back(
        {Boundary::kZetaRay, 0.0, strip / c, [=](double q) { return q * Complex(-zt, c); }});
  }
  if (region.wn_min > 0) {
    double wn = region.wn_min;
    // theta from pi (s = -wn) up to pi/2, only where wn sin(theta) <= pi / T.
    double th_min = wn <= strip ? kPi / 2 : kPi - std::asin(strip / wn);
    curves.push_back({Boundary::kWnCircle, th_min, kPi,
                      [=](double th) { return wn * Complex(std::cos(th), std::sin(th)); }});
  }
  std::vector<BoundaryCrossing> crossings;
  auto f = [&](const ZCurve& c, double q) {
    Complex z = std::exp(c.s(q) * T);
    return (loop.a(z) * std::conj(loop.b(z))).imag();
  };
  auto add = [&](const ZCurve& c, double q) {
    Complex s = c.s(q), z = std::exp(s * T);
    Complex bz = loop.b(z);
    if (std::abs(bz) == 0.0) return;
    Complex k = -loop.a(z) / bz;
    if (k.real() > 0.0 && std::isfinite(k.real()) && std::abs(k.imag()) <= 1e-6 * std::abs(k)) {
      crossings.push_back({k.real(), c.boundary, Complex(s.real(), std::abs(s.imag()))});
    }
  };
  for (const ZCurve& c : curves) {
    const int n = 3000;
    add(c, c.q_lo);
    add(c, c.q_hi);
    double qa = c.q_lo, fa = f(c, qa);
    for (int i = 1; i <= n; ++i) {
      double qb = c.q_lo + (c.q_hi - c.q_lo) * i / n;
      double fb = f(c, qb);
      if (i < n && fb == 0.0) add(c, qb);
      if (fa * fb < 0.0) {
        double x = qa, y = qb, fx = fa;
        while (y - x > 1e-13 * (c.q_hi - c.q_lo)) {
          double m = 0.5 * (x + y), fm = f(c, m);
          if ((fm < 0) == (fx < 0)) {
            x = m;
            fx = fm;
          } else {
            y = m;
          }
        }
        add(c, 0.5 * (x + y));
      }
      qa = qb;
      fa = fb;
    }
  }
  if (loop.a.degree() == loop.b.degree()) {
    double k = -loop.a.leading() / loop.b.leading();
    if (k > 0.0) {
      crossings.push_back(
          {k, Boundary::kPoleAtInfinity, Complex(-std::numeric_limits<double>::infinity(), 0.0)});
    }
  }
  Complex s1 = std::exp(Complex(0.0, 0.5 * strip) * T);
  double ref = std::abs(loop.a(s1)) / std::max(std::abs(loop.b(s1)), 1e-300);
  DiscreteBand out;
  out.period = period;
  out.band = BandFromCrossings(
      crossings, [&](double k) { return JudgePoles(PolesInS(loop, k, T), region); }, ref, region,
      0);
  // Linear measure of each set, an open upper end counted up to 10 times the largest finite edge.
  GainSet disc = out.band.gains();
  double cap = 0.0;
  for (const GainSet* g : {&continuous, static_cast<const GainSet*>(&disc)}) {
    for (const auto& r : *g) {
      for (double e : {r.lo, r.hi}) {
        if (std::isfinite(e)) cap = std::max(cap, 10.0 * e);
      }
    }
  }
  auto measure = [&](const GainSet& g) {
    double m = 0.0;
    for (const auto& r : g) m += std::min(r.hi, cap) - r.lo;
    return m;
  };
  double mc = measure(continuous);
  out.shrink_percent =
      mc > 0.0 ? 100.0 * (1.0 - measure(disc) / mc) : std::numeric_limits<double>::quiet_NaN();
  return out;
}

}  // namespace lw
