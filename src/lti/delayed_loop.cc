#include "lti/delayed_loop.h"

#include <algorithm>
#include <cmath>

namespace lw {
namespace {

constexpr int kDegree = 3;
using Cubic = std::array<double, kDegree + 1>;

// Coefficients of q(s) = p(delta + s) (Taylor shift by repeated synthetic division).
Cubic Shift(const Cubic& p, double delta) {
  Cubic q = p;
  for (int i = 0; i < kDegree; ++i) {
    for (int k = kDegree - 1; k >= i; --k) q[k] += delta * q[k + 1];
  }
  return q;
}

double Eval(const Cubic& p, double s) {
  double v = 0.0;
  for (int k = kDegree; k >= 0; --k) v = v * s + p[k];
  return v;
}

}  // namespace

LoopModel BuildLoop(const StateSpace& p, const StateSpace& c) {
  const int np = p.order(), nc = c.order(), nz = np + nc;
  LoopModel m;
  m.a = Eigen::MatrixXd::Zero(nz, nz);
  m.a.topLeftCorner(np, np) = p.a;
  m.a.block(np, 0, nc, np) = -c.b * p.c;
  m.a.bottomRightCorner(nc, nc) = c.a;
  m.b = Eigen::MatrixXd::Zero(nz, 2);
  m.b.block(np, 0, nc, 1) = c.b;
  m.b.block(0, 1, np, 1) = p.b;
  m.b.block(np, 1, nc, 1) = -c.b * p.d;
  m.cu = Eigen::RowVectorXd::Zero(nz);
  m.cu.head(np) = -c.d * p.c;
  m.cu.tail(nc) = c.c;
  m.dur = c.d;
  m.duw = -c.d * p.d;
  m.cy = Eigen::RowVectorXd::Zero(nz);
  m.cy.head(np) = p.c;
  m.dy = p.d;
  return m;
}

DelayedLoop::DelayedLoop(const LoopModel& m, double delay, double before, double t0,
                         double max_step, int max_generation)
    : m_(m),
      delay_(delay),
      max_generation_(max_generation),
      cache_(m.a, m.b, kDegree, max_step, 1e-9) {
  pieces_.push_back({t0 - delay, t0, {before, 0.0, 0.0, 0.0}, kSmooth});
  // Inverse Vandermonde matrix of the nodes 0, 1/3, 2/3, 1.
  Eigen::Matrix4d v;
  for (int i = 0; i < 4; ++i) {
    for (int k = 0; k < 4; ++k) v(i, k) = std::pow(i / 3.0, k);
  }
  vinv_ = v.inverse();
}

double DelayedLoop::WRight(double s, double tol) {
  while (cursor_ + 1 < pieces_.size() && s - delay_ >= pieces_[cursor_].end - tol) ++cursor_;
  const Piece& p = pieces_[cursor_];
  return Eval(p.coef, s - delay_ - p.start);
}

void DelayedLoop::Step(Eigen::VectorXd& z, double a, double b, double r, double u0,
                       int generation) {
  const double tol = 1e-10 * (b - a);
  splits_.clear();
  for (size_t i = cursor_; i < pieces_.size() && pieces_[i].start + delay_ < b - tol; ++i) {
    const double at = pieces_[i].start + delay_;
    if (at > a + tol && pieces_[i].generation + 1 < max_generation_) {
      splits_.push_back({at, pieces_[i].generation + 1});
    }
  }
  double start = a;
  for (size_t i = 0; i <= splits_.size(); ++i) {
    const double end = i < splits_.size() ? splits_[i].first : b;
    if (i > 0) {
      generation = splits_[i - 1].second;
      u0 = U(z, r, WRight(start, tol));
    }
    StoreStep(z, start, end, r, u0, generation);
    start = end;
  }
}

void DelayedLoop::StoreStep(Eigen::VectorXd& z, double a, double b, double r, double u0,
                            int generation) {
  const double len = b - a, tol = 1e-10 * len;
  std::array<double, 4> nodes{u0, 0.0, 0.0, 0.0};
  double now = a;
  for (int i = 1; i <= 3; ++i) {
    const double target = i == 3 ? b : a + len * i / 3.0;
    double w_left = 0.0;
    while (now < target - tol) {
      while (cursor_ + 1 < pieces_.size() && now - delay_ >= pieces_[cursor_].end - tol) {
        ++cursor_;
      }
      const Piece& p = pieces_[cursor_];
      double seg_end = std::min(target, p.end + delay_);
      // The newest piece may be extrapolated by rounding (a step a hair longer than T).
      if (seg_end > target - tol || cursor_ + 1 == pieces_.size()) seg_end = target;
      const Cubic w = Shift(p.coef, now - delay_ - p.start);
      const double l = seg_end - now;
      const HoldBlocks& hb = cache_.Get(l);
      next_.resize(z.size());  // a member buffer: no allocation per segment
      next_.noalias() = hb.phi * z;
      next_ += hb.gamma[0].col(0) * r;
      for (int k = 0; k <= kDegree; ++k) next_ += hb.gamma[k].col(1) * w[k];
      z.swap(next_);
      w_left = Eval(w, l);
      now = seg_end;
    }
    nodes[i] = U(z, r, w_left);
  }
  const Eigen::Vector4d c = vinv_ * Eigen::Map<const Eigen::Vector4d>(nodes.data());
  Piece piece{a, b, {}, generation};
  double scale = 1.0;
  for (int k = 0; k < 4; ++k) {
    piece.coef[k] = c(k) / scale;
    scale *= len;
  }
  pieces_.push_back(piece);
  if (cursor_ > 4096) {  // drop the history the delay can no longer reach
    pieces_.erase(pieces_.begin(), pieces_.begin() + static_cast<long>(cursor_));
    cursor_ = 0;
  }
}

}  // namespace lw
