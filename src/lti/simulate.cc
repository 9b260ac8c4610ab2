// Method (see simulate.h and zoh.h for the equations).
//
// Open loop. The rational part is realised (state_space.h) and the input is delayed by T
// exactly: on a uniform grid (every t[k] within 1e-9 h of t[0] + k h) the model is sampled once
// with the split-interval ZOH of zoh.h and run as a recursion; on any other grid the state is
// carried from t[i] to t[i+1] through the sub-intervals where the delayed input u(t - T) is
// constant (it switches at t[j] + T), each with the exact hold blocks of that sub-interval's
// length (HoldCache, to 1e-12 of the longest interval). A switch within 1e-9 of the interval
// length of a sample time is taken as falling on that sample time.
//
// Closed loop without dead time: the loop is rational, so the closed loop from r to (y, u) is
// realised as one state-space model and simulated exactly like the open loop. A dead time
// shorter than 1e-9 of the shortest sample interval is treated as zero: delaying a response by T
// changes it by at most T |y'|, below 1e-9 of what it changes over one sample (to first order).
//
// Closed loop with dead time T > 0 (delayed_loop.h). With the plant and controller states
// z = [x_p; x_c] and the delayed actuator signal w(t) = u(t - T),
//   z' = A z + B_r r + B_w w,   u = C_u z + D_ur r + D_uw w,   y = C_y z + D_y w.
// Between samples the loop is advanced by internal steps h_i no longer than the sample interval
// or a tenth of the fastest time constant among the plant poles, controller poles and delay-free
// closed-loop poles. u is kept as a history of one cubic per step, interpolating u at four
// equally spaced nodes of the step. A step is split where the delayed history changes piece,
// and on each part z is advanced exactly for the polynomial w (Van Loan block exponential,
// zoh.h). A step no longer than T reads only history already stored; a longer one also reads
// its own cubic, found by fixed-point iteration (explicit steps of T if that diverges). Steps
// are also split where a non-smooth point of u (a sample time where r switches, and its first
// echoes T, 2T later) comes back through the delay, so no cubic straddles a kink. The only
// approximation is the cubic interpolation of u within smooth stretches (local error O(h_i^4));
// r is held, and every internal step boundary falls on the sample times where r switches.
// On a uniform grid with steps no longer than T, once r has switched for the last time and the
// echoes of that switch have passed (every stored piece the delay can reach is smooth and one
// step long), every step is the same linear map of the state and two stored cubics: that map is
// composed once and run as a recursion (steady_delayed_loop.h), the same arithmetic to rounding.
#include "lti/simulate.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <optional>
#include <string>

#include <Eigen/Dense>

#include "lti/delayed_loop.h"
#include "lti/error.h"
#include "lti/state_space.h"
#include "lti/steady_delayed_loop.h"
#include "lti/zoh.h"

namespace lw {
namespace {

using Eigen::MatrixXd;
using Eigen::RowVectorXd;
using Eigen::VectorXd;

// The mean period when t is uniform to 1e-9 of it, else 0 (also for non-finite times).
double UniformPeriod(std::span<const double> t) {
  const size_t n = t.size();
  if (n < 2) return 0.0;
  const double t0 = t[0], h = (t[n - 1] - t0) / static_cast<double>(n - 1), tol = 1e-9 * h;
  if (!std::isfinite(t0) || !std::isfinite(h) || !(h > 0.0)) return 0.0;
  // Four independent lanes so the loop is not bound by one chain of comparisons; a NaN fails
  // every comparison and so counts as off the grid.
  long off = 0;
  size_t k = 1;
  for (; k + 4 <= n; k += 4) {
    const double kd = static_cast<double>(k);
    off += !(std::abs(t[k] - (t0 + kd * h)) <= tol) +
           !(std::abs(t[k + 1] - (t0 + (kd + 1) * h)) <= tol) +
           !(std::abs(t[k + 2] - (t0 + (kd + 2) * h)) <= tol) +
           !(std::abs(t[k + 3] - (t0 + (kd + 3) * h)) <= tol);
  }
  for (; k < n; ++k) off += !(std::abs(t[k] - (t0 + static_cast<double>(k) * h)) <= tol);
  return off == 0 ? h : 0.0;
}

// Checks the preconditions on t and the values v; returns the period when t is uniform, else 0.
// A uniform grid (h > 0, finite ends) is finite and strictly increasing, so it needs no second
// pass; each pass counts failures without branches and only a failure looks for the message.
double CheckGrid(std::span<const double> t, std::span<const double> v, const char* what) {
  if (t.size() != v.size()) {
    throw UsageError("simulation needs one " + std::string(what) + " value per time: got " +
                     std::to_string(t.size()) + " times and " + std::to_string(v.size()) +
                     " values");
  }
  if (t.empty()) throw UsageError("simulation needs at least one time");
  const size_t n = t.size();
  const double h = UniformPeriod(t);
  long bad = 0;
  for (size_t i = 0; i < n; ++i) bad += !(std::abs(v[i]) <= std::numeric_limits<double>::max());
  if (h == 0.0) {
    bad += !std::isfinite(t[0]) + !std::isfinite(t[n - 1]);
    for (size_t i = 1; i < n; ++i) bad += !(t[i] > t[i - 1]);
  }
  if (bad == 0) return h;
  for (size_t i = 0; i < n; ++i) {
    if (!std::isfinite(t[i]) || !std::isfinite(v[i])) {
      throw UsageError("simulation sample " + std::to_string(i) + " has a non-finite time or " +
                       what + " value");
    }
    if (i > 0 && !(t[i] > t[i - 1])) {
      throw UsageError("simulation times must increase strictly: t[" + std::to_string(i) +
                       "] = " + std::to_string(t[i]) + " follows " + std::to_string(t[i - 1]));
    }
  }
  return h;
}

double LongestInterval(std::span<const double> t) {
  double longest = 0.0;
  for (size_t i = 1; i < t.size(); ++i) longest = std::max(longest, t[i] - t[i - 1]);
  return longest > 0.0 ? longest : 1.0;
}

// y[k] = c x[k] + d u(t_k - T) on a uniform grid, x[k+1] by the sampled recursion. u(j) for
// j < 0 is `before`. N is the state order at compile time (Eigen::Dynamic for any).
template <int N>
void RunSampled(const SampledStateSpace& s, std::span<const double> u, double before,
                const VectorXd& x_start, std::vector<double>& y) {
  using Mat = Eigen::Matrix<double, N, N>;
  using Vec = Eigen::Matrix<double, N, 1>;
  using Row = Eigen::Matrix<double, 1, N>;
  const Mat phi = s.phi;
  const Vec gl = s.gamma_late, ge = s.gamma_early;
  const Row c = s.c;
  const double d = s.d;
  Vec x = x_start;
  const long n = static_cast<long>(u.size());
  const long m = s.whole_delay, lag = s.output_lag();
  const auto at = [&](long j) { return j < 0 ? before : u[j]; };
  const long head = std::min(n, m + 1);
  long k = 0;
  for (; k < head; ++k) {
    y[k] = c.dot(x) + d * at(k - lag);
    x = phi * x + gl * at(k - m) + ge * at(k - m - 1);
  }
  const double* um = u.data();  // here k > m, so every index below is >= 0
  for (; k < n; ++k) {
    y[k] = c.dot(x) + d * um[k - lag];
    x = phi * x + (gl * um[k - m] + ge * um[k - m - 1]);
  }
}

void RunSampledAnyOrder(const SampledStateSpace& s, std::span<const double> u, double before,
                        const VectorXd& x0, std::vector<double>& y) {
  using Runner = void (*)(const SampledStateSpace&, std::span<const double>, double,
                          const VectorXd&, std::vector<double>&);
  // Fixed-size kernels for the orders that matter for speed; any other order is dynamic.
  static constexpr Runner kFixed[] = {&RunSampled<1>, &RunSampled<2>, &RunSampled<3>,
                                      &RunSampled<4>, &RunSampled<5>, &RunSampled<6>};
  const auto order = static_cast<size_t>(s.phi.rows());
  const Runner run = order >= 1 && order <= 6 ? kFixed[order - 1] : &RunSampled<Eigen::Dynamic>;
  run(s, u, before, x0, y);
}

// Any grid: x' = a x + b v(t), v(t) = u(t - delay) held (u(t) = `before` for t < t[0]);
// outputs rows of c_out x + d_out v at every t[i] into out[row][i].
void WalkHeld(const MatrixXd& a, const VectorXd& b, const MatrixXd& c_out, const VectorXd& d_out,
              double delay, std::span<const double> t, std::span<const double> u, double before,
              VectorXd x, std::vector<std::vector<double>*> out) {
  HoldCache cache(a, b, 0, LongestInterval(t), 1e-12);
  const long n = static_cast<long>(t.size());
  long j = -1;  // the input sample the delayed input currently holds (-1: before t[0])
  const auto value = [&](long i) { return i < 0 ? before : u[i]; };
  const auto advance = [&](double length) {
    if (length <= 0.0) return;
    const HoldBlocks& hb = cache.Get(length);
    x = hb.phi * x + hb.gamma[0] * value(j);
  };
  for (long i = 0; i < n; ++i) {
    const double tol = 1e-9 * (i + 1 < n ? t[i + 1] - t[i] : t[i] - t[i - (i > 0)]);
    while (j + 1 < n && t[j + 1] + delay <= t[i] + tol) ++j;
    const VectorXd yi = c_out * x + d_out * value(j);
    for (size_t r = 0; r < out.size(); ++r) (*out[r])[i] = yi(r);
    if (i + 1 == n) break;
    double now = t[i];
    const double end = t[i + 1];
    while (true) {
      const double next = j + 1 < n ? t[j + 1] + delay : std::numeric_limits<double>::infinity();
      if (next >= end - tol) {
        advance(end - now);
        break;
      }
      advance(next - now);
      now = std::max(now, next);
      ++j;
    }
  }
}

double FastestRate(const TransferFunction& plant, const TransferFunction& ctrl) {
  double rate = 0.0;
  const Polynomial loop = plant.den() * ctrl.den() + plant.num() * ctrl.num();
  for (const Polynomial* p : {&plant.den(), &ctrl.den(), &loop}) {
    for (const auto& r : p->roots()) rate = std::max(rate, std::abs(r));
  }
  return rate;
}

}  // namespace

std::vector<double> Simulate(const TransferFunction& plant, std::span<const double> t,
                             std::span<const double> u, const SimulateOptions& options) {
  const double h = CheckGrid(t, u, "input");
  const StateSpace ss = Realize(plant);
  const bool at_rest =
      options.initial == SimulateOptions::Initial::kSteadyState && !HasRootAtOrigin(plant.den());
  const double before = at_rest ? u[0] : 0.0;
  const VectorXd x0 = at_rest ? SteadyState(ss, u[0]) : VectorXd::Zero(ss.order());
  std::vector<double> y(t.size());
  if (h > 0.0) {
    RunSampledAnyOrder(SampleZoh(ss, h, plant.delay()), u, before, x0, y);
  } else {
    WalkHeld(ss.a, ss.b, ss.c, VectorXd::Constant(1, ss.d), plant.delay(), t, u, before, x0, {&y});
  }
  return y;
}

ClosedLoopResponse SimulateClosedLoop(const TransferFunction& plant, const Controller& controller,
                                      double gain, std::span<const double> t,
                                      std::span<const double> r, const SimulateOptions& options) {
  const double period = CheckGrid(t, r, "reference");
  if (!std::isfinite(gain)) throw UsageError("controller gain must be finite");
  const TransferFunction ctrl = controller.WithGain(gain);
  const StateSpace p = Realize(plant);
  const StateSpace c = Realize(ctrl);
  if (std::abs(1.0 + p.d * c.d) < 1e-12) {
    throw UsageError(
        "the loop has no solution: the plant's and controller's direct gains "
        "multiply to -1");
  }
  const LoopModel m = BuildLoop(p, c);
  const int nz = static_cast<int>(m.a.rows());

  // Equilibrium for r[0]: A z + B_w u0 = -B_r r0, C_u z + (D_uw - 1) u0 = -D_ur r0.
  VectorXd z0 = VectorXd::Zero(nz);
  double u_before = 0.0;
  const Polynomial characteristic = plant.den() * ctrl.den() + plant.num() * ctrl.num();
  if (options.initial == SimulateOptions::Initial::kSteadyState &&
      !HasRootAtOrigin(characteristic)) {
    MatrixXd e(nz + 1, nz + 1);
    e.topLeftCorner(nz, nz) = m.a;
    e.topRightCorner(nz, 1) = m.b.col(1);
    e.bottomLeftCorner(1, nz) = m.cu;
    e(nz, nz) = m.duw - 1.0;
    VectorXd rhs(nz + 1);
    rhs.head(nz) = -m.b.col(0) * r[0];
    rhs(nz) = -m.dur * r[0];
    const VectorXd sol = e.fullPivLu().solve(rhs);
    z0 = sol.head(nz);
    u_before = sol(nz);
  }

  ClosedLoopResponse out;
  out.u.resize(t.size());
  out.y.resize(t.size());
  double shortest = std::numeric_limits<double>::infinity();
  for (size_t k = 1; k < t.size(); ++k) shortest = std::min(shortest, t[k] - t[k - 1]);
  const double delay = plant.delay() < 1e-9 * shortest ? 0.0 : plant.delay();
  if (delay == 0.0) {
    // Rational loop: u = (C_u z + D_ur r) / (1 - D_uw), one state-space model from r.
    const double k = 1.0 / (1.0 - m.duw);
    const RowVectorXd cu = m.cu * k;
    const double du = m.dur * k;
    const MatrixXd a = m.a + m.b.col(1) * cu;
    const VectorXd b = m.b.col(0) + m.b.col(1) * du;
    MatrixXd c_out(2, nz);
    c_out.row(0) = m.cy + m.dy * cu;
    c_out.row(1) = cu;
    const Eigen::Vector2d d_out(m.dy * du, du);
    if (period > 0.0) {
      for (int row = 0; row < 2; ++row) {
        const StateSpace part{a, b, c_out.row(row), d_out(row)};
        RunSampledAnyOrder(SampleZoh(part, period, 0.0), r, r[0], z0, row == 0 ? out.y : out.u);
      }
    } else {
      WalkHeld(a, b, c_out, d_out, 0.0, t, r, r[0], z0, {&out.y, &out.u});
    }
    return out;
  }

  // Internal steps may be longer than T (delayed_loop.h solves those implicitly).
  double max_step = LongestInterval(t);
  const double rate = FastestRate(plant, ctrl);
  if (rate > 0.0) max_step = std::min(max_step, 0.1 / rate);
  double steps = 0.0;
  for (size_t k = 0; k + 1 < t.size(); ++k) steps += std::ceil((t[k + 1] - t[k]) / max_step);
  if (steps > 5e7) {
    throw UsageError("closed-loop simulation would need " + std::to_string(steps) +
                     " internal steps of " + std::to_string(max_step) +
                     " s (a closed-loop time constant far shorter than the record); "
                     "shorten the record or simulate the delay-free loop");
  }

  const int max_generation = m.dy != 0.0 ? 8 : 3;
  DelayedLoop loop(m, delay, u_before, t[0], max_step, max_generation);
  VectorXd z = z0;
  const size_t n = t.size();
  // On a uniform grid, once r stays put and the echoes of its last switch have passed, every
  // internal step is alike: hand over to the precomputed step map (steady_delayed_loop.h).
  size_t last_switch = 0;
  for (size_t k = 1; k < n; ++k) {
    if (r[k] != r[k - 1]) last_switch = k;
  }
  const long per_sample =
      period > 0.0 ? std::max(1L, static_cast<long>(std::ceil(period / max_step - 1e-9))) : 0;
  const double steady_step = period > 0.0 ? period / static_cast<double>(per_sample) : 0.0;
  const double steady_from = t[last_switch] + (max_generation + 1) * delay + 3.0 * steady_step;
  int steady_tries = period > 0.0 && steady_step <= delay * (1.0 + 1e-9) ? 4 : 0;
  std::optional<SteadyDelayedLoop> steady;
  std::vector<std::array<double, 4>> history;
  for (size_t k = 0; k < n; ++k) {
    if (steady_tries > 0 && k >= last_switch && t[k] >= steady_from) {
      --steady_tries;
      if (!steady) {
        steady.emplace(m, delay, steady_step,
                       [&](double len) -> const HoldBlocks& { return loop.Blocks(len); });
      }
      if (!steady->usable()) {
        steady_tries = 0;
      } else if (loop.SteadyHistory(t[k], steady_step, steady->history(), history)) {
        steady->Run(z, history, r[k], per_sample, n - k, &out.y[k], &out.u[k]);
        return out;
      }
    }
    const double tol = 1e-10 * (k + 1 < n ? t[k + 1] - t[k] : 1.0);
    double w = loop.WRight(t[k], tol);
    out.y[k] = loop.Y(z, w);
    out.u[k] = loop.U(z, r[k], w);
    if (k + 1 == n) break;
    const double h = t[k + 1] - t[k];
    const long q = std::max(1L, static_cast<long>(std::ceil(h / max_step - 1e-9)));
    double u0 = out.u[k];
    for (long j = 0; j < q; ++j) {
      const double a = t[k] + h * static_cast<double>(j) / static_cast<double>(q);
      const double b = j + 1 == q ? t[k + 1] : t[k] + h * static_cast<double>(j + 1) / q;
      if (j > 0) u0 = loop.U(z, r[k], loop.WRight(a, 1e-10 * (b - a)));
      // u can only jump (generation 0) where r switches, or at t[0] from the state before.
      const bool jump = j == 0 && (k == 0 || r[k] != r[k - 1]);
      loop.Step(z, a, b, r[k], u0, jump ? 0 : DelayedLoop::kSmooth);
    }
  }
  return out;
}

}  // namespace lw
