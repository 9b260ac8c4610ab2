#include "design/margins.h"

#include <algorithm>
#include <cmath>
#include <complex>
#include <limits>
#include <numbers>

#include "lti/error.h"

namespace lw {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
const double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kPi = std::numbers::pi;

// p(-s).
Polynomial Mirror(const Polynomial& p) {
  std::vector<double> c = p.coefficients();
  const int n = p.degree();
  for (int i = 0; i <= n; ++i) {
    if ((n - i) % 2 == 1) c[static_cast<size_t>(i)] = -c[static_cast<size_t>(i)];
  }
  return Polynomial(c);
}

// Positive real roots w of the real polynomial in w given by ascending coefficients.
std::vector<double> PositiveRoots(const std::vector<double>& ascending) {
  std::vector<double> out;
  double scale = 0.0;
  for (double c : ascending) scale = std::max(scale, std::abs(c));
  if (scale == 0.0) return out;
  std::vector<double> desc(ascending.rbegin(), ascending.rend());
  for (double& c : desc) c = std::abs(c) < 1e-14 * scale ? 0.0 : c / scale;
  for (const auto& r : Polynomial(desc).roots()) {
    if (std::abs(r.imag()) <= 1e-7 * (1.0 + std::abs(r.real())) && r.real() > 0.0) {
      out.push_back(r.real());
    }
  }
  std::sort(out.begin(), out.end());
  return out;
}

// Unwrapped phase (rad) of L(jw), rational part from its poles and zeros, minus w T.
struct Phase {
  std::vector<std::complex<double>> zeros, poles;
  double base = 0.0;  // sign of the gain
  double delay = 0.0;
  double operator()(double w) const {
    const std::complex<double> s(0.0, w);
    double ph = base - w * delay;
    for (const auto& z : zeros) ph += std::arg(s - z);
    for (const auto& p : poles) ph -= std::arg(s - p);
    return ph;
  }
};

double WrapDeg(double deg) {
  double d = std::fmod(deg + 180.0, 360.0);
  if (d <= 0.0) d += 360.0;
  return d - 180.0;
}

}  // namespace

Margins ComputeMargins(const TransferFunction& l) {
  if (!l.is_proper() || l.num().is_zero()) {
    throw UsageError("margins: the open loop must be proper with a nonzero numerator");
  }
  Margins m{kInf, kInf, kNaN, kInf, kNaN, kInf, {}, {}};
  const Polynomial& n = l.num();
  const Polynomial& d = l.den();
  // |N|^2 - |D|^2 at s = jw: M(s) = N(s)N(-s) - D(s)D(-s) is even; s^(2k) -> (-1)^k w^(2k).
  Polynomial mm = n * Mirror(n) - d * Mirror(d);
  std::vector<double> in_w2;
  for (int k = 0; 2 * k <= mm.degree(); ++k) {
    in_w2.push_back(mm.coefficient(2 * k) * (k % 2 ? -1.0 : 1.0));
  }
  for (double x : PositiveRoots(in_w2)) m.gain_crossovers.push_back(std::sqrt(x));

  Phase phase;
  phase.zeros = n.roots();
  phase.poles = d.roots();
  phase.base = n.leading() / d.leading() < 0.0 ? -kPi : 0.0;
  phase.delay = l.delay();

  if (l.delay() == 0.0) {
    // Im(N(jw) D(-jw)): odd powers s^(2k+1) -> (-1)^k w^(2k+1).
    Polynomial q = n * Mirror(d);
    std::vector<double> in_w;
    for (int k = 0; k <= q.degree(); ++k) {
      in_w.push_back(k % 2 ? q.coefficient(k) * ((k / 2) % 2 ? -1.0 : 1.0) : 0.0);
    }
    for (double w : PositiveRoots(in_w)) {
      if (l.frequency_response(w).real() < 0.0) m.phase_crossovers.push_back(w);
    }
  } else {
    double lo = kInf, hi = 0.0;
    auto widen = [&](double v) {
      if (v > 1e-12 && std::isfinite(v)) {
        lo = std::min(lo, v);
        hi = std::max(hi, v);
      }
    };
    for (const auto& z : phase.zeros) widen(std::abs(z));
    for (const auto& p : phase.poles) widen(std::abs(p));
    widen(1.0 / l.delay());
    const double w0 = lo * 1e-3, w1 = hi * 1e3;
    const int samples = 4000;
    auto level = [](double ph) { return std::floor((ph + kPi) / (2.0 * kPi)); };
    double wa = w0, la = level(phase(w0));
    for (int i = 1; i <= samples; ++i) {
      double wb = w0 * std::pow(w1 / w0, static_cast<double>(i) / samples);
      double lb = level(phase(wb));
      if (lb != la) {
        // The phase passed -180 - 360 k between wa and wb: bisect on the level.
        double a = wa, b = wb;
        for (int it = 0; it < 200 && b / a - 1.0 > 1e-12; ++it) {
          double c = std::sqrt(a * b);
          (level(phase(c)) == la ? a : b) = c;
        }
        m.phase_crossovers.push_back(std::sqrt(a * b));
      }
      wa = wb;
      la = lb;
    }
  }
  for (double w : m.phase_crossovers) {
    double gm = 1.0 / std::abs(l.frequency_response(w));
    if (std::isinf(m.gain_margin) || std::abs(std::log(gm)) < std::abs(std::log(m.gain_margin))) {
      m.gain_margin = gm;
      m.phase_crossover = w;
    }
  }
  m.gain_margin_db = std::isinf(m.gain_margin) ? kInf : 20.0 * std::log10(m.gain_margin);
  for (double w : m.gain_crossovers) {
    double pm = WrapDeg(180.0 + phase(w) * 180.0 / kPi);
    if (std::isinf(m.phase_margin_deg) || std::abs(pm) < std::abs(m.phase_margin_deg)) {
      m.phase_margin_deg = pm;
      m.gain_crossover = w;
    }
  }
  if (!std::isinf(m.phase_margin_deg)) {
    m.delay_margin =
        m.phase_margin_deg > 0.0 ? m.phase_margin_deg * kPi / 180.0 / m.gain_crossover : 0.0;
  }
  return m;
}

}  // namespace lw
