#include "lti/steady_delayed_loop.h"

#include <cmath>

namespace lw {
namespace {

using Eigen::MatrixXd;
using Eigen::RowVectorXd;

// [1, sigma, sigma^2, sigma^3] placed at columns [slot, slot + 4) of a row of `cols`.
RowVectorXd PieceAt(int cols, int slot, double sigma) {
  RowVectorXd row = RowVectorXd::Zero(cols);
  double p = 1.0;
  for (int k = 0; k < 4; ++k) {
    row(slot + k) = p;
    p *= sigma;
  }
  return row;
}

}  // namespace

SteadyDelayedLoop::SteadyDelayedLoop(const LoopModel& m, double delay, double h,
                                     const std::function<const HoldBlocks&(double)>& blocks) {
  double whole = std::floor(delay / h);
  double f = delay / h - whole;  // phi / h
  if (f < 1e-9) f = 0.0;
  if (f > 1.0 - 1e-9) {
    f = 0.0;
    whole += 1.0;
  }
  if (!(whole >= 1.0) || !std::isfinite(whole) || whole > 1e8) return;
  usable_ = true;
  whole_ = static_cast<int>(whole);
  n_ = static_cast<int>(m.a.rows());
  rows_ = n_ + 4;
  cols_ = n_ + 9;
  const int kOld = n_, kNew = n_ + 4, kR = n_ + 8;
  RowVectorXd e_r = RowVectorXd::Zero(cols_);
  e_r(kR) = 1.0;
  // The state as a linear function of the columns, advanced part by part.
  MatrixXd zmap = MatrixXd::Zero(n_, cols_);
  zmap.leftCols(n_).setIdentity();
  const RowVectorXd w0 = f > 0.0 ? PieceAt(cols_, kOld, 1.0 - f) : PieceAt(cols_, kNew, 0.0);
  y0_ = m.cy * zmap + m.dy * w0;
  u0_ = m.cu * zmap + m.dur * e_r + m.duw * w0;
  MatrixXd nodes(4, cols_);
  nodes.row(0) = u0_;
  // Parts of the step in units of h: the thirds, the third holding f split there (unless f
  // lies within 1e-9 of a third's end, where DelayedLoop's tolerance would not split either).
  std::vector<double> ends{1.0 / 3.0, 2.0 / 3.0, 1.0};
  if (f > 0.0 && std::abs(f - 1.0 / 3.0) > 1e-9 && std::abs(f - 2.0 / 3.0) > 1e-9) {
    ends.insert(f < 1.0 / 3.0   ? ends.begin()
                : f < 2.0 / 3.0 ? ends.begin() + 1
                                : ends.begin() + 2,
                f);
  }
  double start = 0.0;
  int node = 1;
  for (double end : ends) {
    const bool old = start < f - 1e-9;
    const int slot = old ? kOld : kNew;
    const double sigma_a = old ? start + 1.0 - f : start - f;
    const double len = (end - start) * h;
    // w(s) = sum_j c_j (sigma_a + s / h)^j = sum_k wk s^k: wk = sum_j binom(j, k) sigma_a^(j-k)
    // c_j / h^k.
    MatrixXd shift = MatrixXd::Zero(4, 4);
    for (int j = 0; j < 4; ++j) {
      double binom = 1.0;
      for (int k = 0; k <= j; ++k) {
        shift(k, j) = binom * std::pow(sigma_a, j - k) / std::pow(h, k);
        binom = binom * (j - k) / (k + 1);
      }
    }
    const HoldBlocks& hb = blocks(len);
    MatrixXd w_in(n_, 4);
    for (int k = 0; k < 4; ++k) w_in.col(k) = hb.gamma[static_cast<size_t>(k)].col(1);
    MatrixXd next = hb.phi * zmap + hb.gamma[0].col(0) * e_r;
    next.middleCols(slot, 4) += w_in * shift;
    zmap = next;
    const bool at_node = std::abs(end - node / 3.0) <= 1e-12;
    if (at_node) {
      const RowVectorXd w_left = PieceAt(cols_, slot, sigma_a + end - start);
      nodes.row(node) = m.cu * zmap + m.dur * e_r + m.duw * w_left;
      ++node;
    }
    start = end;
  }
  // The cubic through the nodes at sigma = 0, 1/3, 2/3, 1 (inverse Vandermonde matrix).
  Eigen::Matrix4d v;
  for (int i = 0; i < 4; ++i) {
    for (int k = 0; k < 4; ++k) v(i, k) = std::pow(i / 3.0, k);
  }
  MatrixXd g(rows_, cols_);
  g.topRows(n_) = zmap;
  g.bottomRows(4) = v.inverse() * nodes;
  g_.assign(g.data(), g.data() + g.size());  // column-major
}

namespace {

// On x86-64 with GCC the step loop is also built for AVX2 and picked at run time (no FMA, and
// each output accumulates in the same order, so both builds give the same bits).
#if defined(__GNUC__) && !defined(__clang__) && defined(__x86_64__)
#define LOOPWRIGHT_STEP_CLONES __attribute__((target_clones("avx2", "default")))
#else
#define LOOPWRIGHT_STEP_CLONES
#endif

// The step loop of SteadyDelayedLoop::Run for N loop states (kN > 0: known at compile time, so
// the product unrolls; 0: any N, given in n). x = [z; older piece; newer piece; r].
template <int kN>
LOOPWRIGHT_STEP_CLONES void RunSteps(int n_dynamic, const double* g, const RowVectorXd& y0,
                                     const RowVectorXd& u0, std::vector<double>& store,
                                     std::size_t older, std::size_t newer, std::size_t ring,
                                     double* x, long per_sample, std::size_t samples, double* y,
                                     double* u) {
  const int n = kN > 0 ? kN : n_dynamic;
  const int rows = n + 4, cols = n + 9;
  constexpr int kRows = kN > 0 ? kN + 4 : 1;
  std::vector<double> out_dynamic(kN > 0 ? 0 : static_cast<std::size_t>(rows));
  std::array<double, kRows> out_fixed{};
  double* out = kN > 0 ? out_fixed.data() : out_dynamic.data();
  std::size_t mine = 0;
  const auto next = [ring](std::size_t& i) { i = i + 1 == ring ? 0 : i + 1; };
  const Eigen::Map<const Eigen::VectorXd> xv(x, cols);
  for (std::size_t sample = 0;; ++sample) {
    for (long j = 0; j < per_sample; ++j) {
      for (int k = 0; k < 4; ++k) {
        x[n + k] = store[4 * older + static_cast<std::size_t>(k)];
        x[n + 4 + k] = store[4 * newer + static_cast<std::size_t>(k)];
      }
      if (j == 0) {
        y[sample] = y0.dot(xv);
        u[sample] = u0.dot(xv);
        if (sample + 1 == samples) return;
      }
      for (int i = 0; i < rows; ++i) out[i] = 0.0;
      for (int c = 0; c < cols; ++c) {
        const double xc = x[c];
        const double* column = g + static_cast<std::ptrdiff_t>(c) * rows;
        for (int i = 0; i < rows; ++i) out[i] += column[i] * xc;
      }
      for (int i = 0; i < n; ++i) x[i] = out[i];
      for (int k = 0; k < 4; ++k) store[4 * mine + static_cast<std::size_t>(k)] = out[n + k];
      next(older);
      next(newer);
      next(mine);
    }
  }
}

}  // namespace

void SteadyDelayedLoop::Run(const Eigen::VectorXd& z, const std::vector<Cubic>& pieces, double r,
                            long per_sample, std::size_t samples, double* y, double* u) const {
  if (samples == 0 || per_sample < 1) return;
  const std::size_t ring = static_cast<std::size_t>(whole_) + 2;
  // Piece p (p >= -M-1) lives at ring slot p mod (M + 2); steps count from 0, so step s writes
  // slot s mod (M + 2) and reads the slots after it (advanced without division).
  std::vector<double> store(4 * ring);
  const long m = whole_;
  const auto slot = [&](long p) {
    const long q = p % static_cast<long>(ring);
    return static_cast<std::size_t>(q < 0 ? q + static_cast<long>(ring) : q);
  };
  for (std::size_t i = 0; i < pieces.size(); ++i) {
    const std::size_t s = slot(static_cast<long>(i) - m - 1);
    for (int k = 0; k < 4; ++k) store[4 * s + static_cast<std::size_t>(k)] = pieces[i][k];
  }
  std::vector<double> x(static_cast<std::size_t>(cols_));
  for (int i = 0; i < n_; ++i) x[static_cast<std::size_t>(i)] = z(i);
  x[static_cast<std::size_t>(n_ + 8)] = r;
  using Kernel =
      void (*)(int, const double*, const RowVectorXd&, const RowVectorXd&, std::vector<double>&,
               std::size_t, std::size_t, std::size_t, double*, long, std::size_t, double*, double*);
  // Fixed-size kernels for loops of up to 14 states (a 10th-order plant with a PID controller
  // has 12); larger ones run the same loop with run-time sizes.
  static constexpr Kernel kFixed[] = {&RunSteps<1>,  &RunSteps<2>,  &RunSteps<3>,  &RunSteps<4>,
                                      &RunSteps<5>,  &RunSteps<6>,  &RunSteps<7>,  &RunSteps<8>,
                                      &RunSteps<9>,  &RunSteps<10>, &RunSteps<11>, &RunSteps<12>,
                                      &RunSteps<13>, &RunSteps<14>};
  const Kernel run = n_ >= 1 && n_ <= 14 ? kFixed[n_ - 1] : &RunSteps<0>;
  run(n_, g_.data(), y0_, u0_, store, slot(-m - 1), slot(-m), ring, x.data(), per_sample, samples,
      y, u);
}

}  // namespace lw
