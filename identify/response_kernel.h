// The exact sampled response of a model structure (model_structure.h) to a held input, written
// once as a template so it runs on doubles and on Ceres Jets (automatic derivatives).
//
// Input: deviations v[i] of the input from its baseline, held between samples (zero-order hold):
// v(t) = v[i] for t[i] <= t < t[i+1]. Before t[0] the input is the history value (v[0] when the
// system starts at rest, 0 when it starts from the zero state). The structure sees the input
// delayed by its dead time T, which may be any non-negative real (fractional samples): every
// sample interval is split where the delayed input switches, and each piece is propagated with
// the exact transition of the structure's two states (modal closed forms, no matrix exponential):
//
//   fopdt         x1' = (v - x1)/tau                          y = K x1
//   sopdt         x1' = (v - x1)/tau1, x2' = (x1 - x2)/tau2   y = K x2
//   sopdt-zero    same states                                 y = K (x2 + tauz x2')
//   integrating   x1' = (v - x1)/tau,  x2' = x1               y = K x2
//   underdamped   x1'' + 2 zeta wn x1' + wn^2 x1 = wn^2 v,    y = K x1   (x2 = x1')
//
// For a piece of length h with the input held at v the transition is affine, x <- M x + g v,
// with e.g. a = exp(-h/tau); the cascade's coupling term beta (e^{-alpha h} - e^{-beta h}) /
// (beta - alpha) and the second-order cos/sin (zeta < 1) terms are evaluated through series
// where the closed form would cancel (tau1 = tau2, zeta = 1), so the derivatives stay exact there.
//
// On a uniform grid (every interval within 1e-6 of the mean period h) the two pieces of every
// interval have the same lengths, phi h and (1 - phi) h with T = (m + phi) h, so their maps are
// computed once per call and composed into one map of the whole interval driven by the two
// inputs (IntervalMap): the cost is a few multiply-adds per sample.
#ifndef LOOPWRIGHT_IDENTIFY_RESPONSE_KERNEL_H_
#define LOOPWRIGHT_IDENTIFY_RESPONSE_KERNEL_H_

#include <cmath>
#include <span>
#include <vector>

#include <ceres/jet.h>

#include "identify/model_structure.h"

namespace lw {

// Sample instants and whether they are uniform.
struct SampleGrid {
  std::span<const double> t;
  double h = 0.0;  // the period when uniform, 0 otherwise
};
// Detects a uniform grid (every interval within 1e-6 h of h = (t.back() - t[0]) / (n - 1)).
SampleGrid MakeSampleGrid(std::span<const double> t);

// Number of "dynamic" parameters (those that shape the states): every structure parameter but
// the gain, and for sopdt-zero also not tauz (it only weights the output). Layout:
//   fopdt, integrating: [tau, T]; sopdt, sopdt-zero: [tau1, tau2, T]; underdamped: [zeta, wn, T].
constexpr int DynamicCount(Structure s) {
  return (s == Structure::kFopdt || s == Structure::kIntegrating) ? 2 : 3;
}

namespace kernel {

inline double Scalar(double x) { return x; }
template <typename T, int N>
double Scalar(const ceres::Jet<T, N>& x) {
  return x.a;
}

// x <- M x + g v over one piece.
template <typename T>
struct PieceMap {
  T m00, m01, m10, m11, g0, g1;
};

template <typename T>
PieceMap<T> MakePieceMap(Structure s, const T* dyn, const T& h) {
  using std::cos;
  using std::exp;
  using std::expm1;
  using std::sin;
  using std::sqrt;
  PieceMap<T> m{T(0.0), T(0.0), T(0.0), T(0.0), T(0.0), T(0.0)};
  switch (s) {
    case Structure::kFopdt: {
      T em = expm1(-h / dyn[0]);
      m.m00 = T(1.0) + em;
      m.g0 = -em;
      break;
    }
    case Structure::kIntegrating: {
      const T& tau = dyn[0];
      T x = h / tau;
      T em = expm1(-x);
      m.m00 = T(1.0) + em;
      m.g0 = -em;
      m.m10 = -tau * em;
      m.m11 = T(1.0);
      // g1 = h - tau (1 - a) = tau (x + expm1(-x)) = tau x^2 (1/2 - x/6 + x^2/24 - ...).
      if (Scalar(x) < 1e-3) {
        m.g1 = tau * x * x * (T(0.5) - x * (T(1.0 / 6.0) - x * (T(1.0 / 24.0) - x / 120.0)));
      } else {
        m.g1 = tau * (x + em);
      }
      break;
    }
    case Structure::kSopdt:
    case Structure::kSopdtZero: {
      T alpha = T(1.0) / dyn[0];
      T beta = T(1.0) / dyn[1];
      T em1 = expm1(-alpha * h);
      T a1 = T(1.0) + em1;
      T a2 = exp(-beta * h);
      T z = (alpha - beta) * h;
      T c;
      if (std::abs(Scalar(z)) < 1e-3) {
        // beta h e^{-beta h} (expm1(-z)/(-z)) by its series.
        c = beta * h * a2 *
            (T(1.0) - z * (T(0.5) - z * (T(1.0 / 6.0) - z * (T(1.0 / 24.0) - z / 120.0))));
      } else {
        c = beta * (a1 - a2) / (beta - alpha);
      }
      m.m00 = a1;
      m.g0 = -em1;
      m.m10 = c;
      m.m11 = a2;
      m.g1 = -expm1(-beta * h) - c;
      break;
    }
    case Structure::kUnderdamped: {
      const T& zeta = dyn[0];
      const T& wn = dyn[1];
      T sigma = zeta * wn;
      T q = wn * wn * (T(1.0) - zeta * zeta);
      T e = exp(-sigma * h);
      T qh2 = q * h * h;
      T c, sn;  // cos(wd h) and sin(wd h)/wd
      if (Scalar(qh2) > 1e-3) {
        T wd = sqrt(q);
        c = cos(wd * h);
        sn = sin(wd * h) / wd;
      } else {
        c = T(1.0) - qh2 * (T(0.5) - qh2 * (T(1.0 / 24.0) - qh2 / 720.0));
        sn = h * (T(1.0) - qh2 * (T(1.0 / 6.0) - qh2 * (T(1.0 / 120.0) - qh2 / 5040.0)));
      }
      m.m00 = e * (c + sigma * sn);
      m.m01 = e * sn;
      m.m10 = -e * wn * wn * sn;
      m.m11 = e * (c - sigma * sn);
      m.g0 = T(1.0) - m.m00;
      m.g1 = -m.m10;
      break;
    }
  }
  return m;
}

// Which entries of the maps can be non-zero, so the hot loops skip the rest.
template <Structure S>
struct Shape {
  static constexpr bool kX2 = S != Structure::kFopdt;
  static constexpr bool kM01 = S == Structure::kUnderdamped;
  static constexpr bool kM11IsOne = S == Structure::kIntegrating;
};

template <Structure S, typename T>
[[gnu::always_inline]] inline void Apply(const PieceMap<T>& m, T& x1, T& x2, double v) {
  using Sh = Shape<S>;
  if constexpr (!Sh::kX2) {
    x1 = m.m00 * x1 + m.g0 * v;
  } else {
    T n1 = m.m00 * x1 + m.g0 * v;
    if constexpr (Sh::kM01) n1 += m.m01 * x2;
    if constexpr (Sh::kM11IsOne) {
      x2 += m.m10 * x1 + m.g1 * v;
    } else {
      x2 = m.m10 * x1 + m.m11 * x2 + m.g1 * v;
    }
    x1 = n1;
  }
}

// One whole sample interval on a uniform grid: the piece with the older input u_old followed by
// the piece with the newer input u_new, x <- M x + p u_old + q u_new with M = M2 M1, p = M2 g1
// and q = g2 (formed once per call, so each sample costs one map instead of two).
template <typename T>
struct IntervalMap {
  T m00, m01, m10, m11, p0, p1, q0, q1;
  T s0, s1;  // p + q: the input column when both inputs are equal (a held input)
};

template <typename T>
IntervalMap<T> Compose(const PieceMap<T>& a, const PieceMap<T>& b) {
  // b after a: M = B A, p = B g_a, q = g_b.
  IntervalMap<T> m{b.m00 * a.m00 + b.m01 * a.m10,
                   b.m00 * a.m01 + b.m01 * a.m11,
                   b.m10 * a.m00 + b.m11 * a.m10,
                   b.m10 * a.m01 + b.m11 * a.m11,
                   b.m00 * a.g0 + b.m01 * a.g1,
                   b.m10 * a.g0 + b.m11 * a.g1,
                   b.g0,
                   b.g1,
                   T(0.0),
                   T(0.0)};
  m.s0 = m.p0 + m.q0;
  m.s1 = m.p1 + m.q1;
  return m;
}

template <Structure S, typename T>
[[gnu::always_inline]] inline void ApplyInterval(const IntervalMap<T>& m, T& x1, T& x2,
                                                 double u_old, double u_new) {
  using Sh = Shape<S>;
  // Most samples of a step test see one held value across the interval: one input column.
  const bool held = u_old == u_new;
  if constexpr (!Sh::kX2) {
    x1 = m.m00 * x1 + (held ? m.s0 * u_new : m.p0 * u_old + m.q0 * u_new);
  } else {
    T n1 = m.m00 * x1 + (held ? m.s0 * u_new : m.p0 * u_old + m.q0 * u_new);
    if constexpr (Sh::kM01) n1 += m.m01 * x2;
    const T in1 = held ? m.s1 * u_new : m.p1 * u_old + m.q1 * u_new;
    if constexpr (Sh::kM11IsOne) {
      x2 += m.m10 * x1 + in1;
    } else {
      x2 = m.m10 * x1 + m.m11 * x2 + in1;
    }
    x1 = n1;
  }
}

template <Structure S, typename T, typename Emit>
void Run(const T* dyn, const SampleGrid& grid, std::span<const double> v, bool zero_initial,
         Emit&& emit) {
  const auto& t = grid.t;
  const size_t n = t.size();
  if (n == 0) return;
  const T& delay = dyn[DynamicCount(S) - 1];
  const double hist = zero_initial ? 0.0 : v[0];
  auto input = [&](long i) { return i < 0 ? hist : v[static_cast<size_t>(i)]; };
  // At rest for the history value (stable structures), or the zero state.
  T x1 = T(hist);
  T x2 = (S == Structure::kSopdt || S == Structure::kSopdtZero) ? T(hist) : T(0.0);
  emit(size_t{0}, x1, x2);
  if (grid.h > 0.0) {
    const double h = grid.h;
    double m_real = std::floor(Scalar(delay) / h);
    long m = static_cast<long>(m_real);
    T phi_h = delay - m_real * h;                                             // in [0, h)
    const IntervalMap<T> step = Compose(MakePieceMap(S, dyn, phi_h),          // input v[k - m - 1]
                                        MakePieceMap(S, dyn, T(h) - phi_h));  // input v[k - m]
    // While the delayed input is still the history value, then on the recorded values.
    size_t k = 0;
    for (; k + 1 < n && static_cast<long>(k) - m < 1; ++k) {
      const long i = static_cast<long>(k) - m;
      ApplyInterval<S>(step, x1, x2, input(i - 1), input(i));
      emit(k + 1, x1, x2);
    }
    for (; k + 1 < n; ++k) {
      const size_t i = k - static_cast<size_t>(m);  // >= 1 here
      ApplyInterval<S>(step, x1, x2, v[i - 1], v[i]);
      emit(k + 1, x1, x2);
    }
    return;
  }
  // Non-uniform grid: the delayed input switches at s_j = t[j] + T (j = 0..n-1) to v[j]; before
  // s_0 it holds the history value. j counts the switches already passed.
  const double d = Scalar(delay);
  size_t j = 0;
  while (j < n && t[j] + d <= t[0]) ++j;
  auto current = [&](size_t passed) { return passed == 0 ? hist : v[passed - 1]; };
  for (size_t k = 0; k + 1 < n; ++k) {
    T start = T(t[k]);
    while (j < n && t[j] + d < t[k + 1]) {
      T sw = T(t[j]) + delay;
      Apply<S>(MakePieceMap(S, dyn, sw - start), x1, x2, current(j));
      start = sw;
      ++j;
    }
    Apply<S>(MakePieceMap(S, dyn, T(t[k + 1]) - start), x1, x2, current(j));
    emit(k + 1, x1, x2);
  }
}

}  // namespace kernel

// Calls emit(k, x1, x2) for every sample k in order with the states at t[k] (see above for
// their meaning per structure). dyn holds the dynamic parameters (DynamicCount(s) values).
template <typename T, typename Emit>
void RunResponseKernel(Structure s, const T* dyn, const SampleGrid& grid, std::span<const double> v,
                       bool zero_initial, Emit&& emit) {
  switch (s) {
    case Structure::kFopdt:
      return kernel::Run<Structure::kFopdt>(dyn, grid, v, zero_initial, emit);
    case Structure::kSopdt:
      return kernel::Run<Structure::kSopdt>(dyn, grid, v, zero_initial, emit);
    case Structure::kUnderdamped:
      return kernel::Run<Structure::kUnderdamped>(dyn, grid, v, zero_initial, emit);
    case Structure::kIntegrating:
      return kernel::Run<Structure::kIntegrating>(dyn, grid, v, zero_initial, emit);
    case Structure::kSopdtZero:
      return kernel::Run<Structure::kSopdtZero>(dyn, grid, v, zero_initial, emit);
  }
}

// The structure's output weights: y = K (w0 x1 + w1 x2). tauz and tau2 only matter for
// sopdt-zero (w0 = tauz/tau2, w1 = 1 - tauz/tau2).
template <typename T>
void OutputWeights(Structure s, const T& tau2, const T& tauz, T& w0, T& w1) {
  switch (s) {
    case Structure::kFopdt:
    case Structure::kUnderdamped:
      w0 = T(1.0);
      w1 = T(0.0);
      return;
    case Structure::kSopdt:
    case Structure::kIntegrating:
      w0 = T(0.0);
      w1 = T(1.0);
      return;
    case Structure::kSopdtZero:
      w0 = tauz / tau2;
      w1 = T(1.0) - w0;
      return;
  }
}

// Convenience for doubles: y[k] = y_offset + K (w0 x1 + w1 x2) for structure parameters p (in
// the structure's order), input deviations v, starting at rest (or from zero).
std::vector<double> StructureResponse(Structure s, std::span<const double> p,
                                      std::span<const double> t, std::span<const double> v,
                                      double y_offset = 0.0, bool zero_initial = false);

}  // namespace lw

#endif  // LOOPWRIGHT_IDENTIFY_RESPONSE_KERNEL_H_
