#include "lti/delayed_loop.h"

#include <algorithm>
#include <cmath>
#include <limits>

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
  double start = a;
  while (start < b - tol) {
    // The next non-smooth point to come back through the delay: an echo of a stored piece's
    // start, or of the piece about to start here.
    double end = b;
    int end_generation = kSmooth;
    if (generation + 1 < max_generation_ && start + delay_ < end - tol) {
      end = start + delay_;
      end_generation = generation + 1;
    }
    for (size_t i = cursor_; i < pieces_.size() && pieces_[i].start + delay_ < end - tol; ++i) {
      const double at = pieces_[i].start + delay_;
      if (at > start + tol && pieces_[i].generation + 1 < max_generation_) {
        end = at;
        end_generation = pieces_[i].generation + 1;
      }
    }
    if (end - start <= delay_ * (1.0 + 1e-9)) {
      Append(start, end, Integrate(z, start, end, r, u0), generation);
    } else if (!Implicit(z, start, end, r, u0, generation)) {
      end = start + delay_;  // did not converge: explicit steps of T instead
      end_generation = kSmooth;
      Append(start, end, Integrate(z, start, end, r, u0), generation);
    }
    start = end;
    generation = end_generation;
    if (start < b - tol) u0 = U(z, r, WRight(start, tol));
  }
}

bool DelayedLoop::Implicit(Eigen::VectorXd& z, double a, double b, double r, double u0,
                           int generation) {
  const Eigen::VectorXd z0 = z;
  const size_t cursor0 = cursor_;
  const double len = b - a;
  // First guess: the previous piece continued, through u0.
  const Piece& last = pieces_.back();
  Cubic guess = Shift(last.coef, a - last.start);
  guess[0] = u0;
  pieces_.push_back({a, b, guess, generation});
  std::array<double, 4> previous;
  for (int i = 0; i < 4; ++i) previous[i] = Eval(guess, len * i / 3.0);
  double first_change = 0.0;
  for (int iteration = 0; iteration < 60; ++iteration) {
    z = z0;
    cursor_ = cursor0;
    const std::array<double, 4> nodes = Integrate(z, a, b, r, u0);
    pieces_.back().coef = Fit(nodes, len);
    double change = 0.0, size = 0.0;
    for (int i = 0; i < 4; ++i) {
      change = std::max(change, std::abs(nodes[i] - previous[i]));
      size = std::max(size, std::abs(nodes[i]));
    }
    previous = nodes;
    if (change <= 1e-14 * size || change == 0.0) {
      const Piece done = pieces_.back();
      pieces_.pop_back();
      Append(a, b, nodes, done.generation);
      return true;
    }
    if (iteration == 0) first_change = change;
    if (!std::isfinite(change) || (iteration > 2 && change > first_change)) break;
  }
  pieces_.pop_back();
  z = z0;
  cursor_ = cursor0;
  return false;
}

std::array<double, 4> DelayedLoop::Integrate(Eigen::VectorXd& z, double a, double b, double r,
                                             double u0) {
  // The tolerance is at least a few rounding units of the times involved: a delayed piece end
  // p.end + T may round onto `now` while now - T still rounds below p.end (a dead time within
  // a hair of a whole number of samples), which would otherwise be a segment of length 0.
  const double len = b - a;
  const double tol = std::max(1e-10 * len, 8.0 * std::numeric_limits<double>::epsilon() *
                                               std::max({std::abs(a), std::abs(b), delay_}));
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
      if (seg_end <= now + tol) {  // this piece's image ends here: read the next one
        ++cursor_;
        continue;
      }
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
  return nodes;
}

DelayedLoop::Cubic DelayedLoop::Fit(const std::array<double, 4>& nodes, double len) const {
  const Eigen::Vector4d c = vinv_ * Eigen::Map<const Eigen::Vector4d>(nodes.data());
  Cubic coef;
  double scale = 1.0;
  for (int k = 0; k < 4; ++k) {
    coef[k] = c(k) / scale;
    scale *= len;
  }
  return coef;
}

bool DelayedLoop::SteadyHistory(double t, double h, size_t count,
                                std::vector<std::array<double, 4>>& out) const {
  if (count == 0 || pieces_.size() < count) return false;
  const double tol = 1e-9 * h + 1e-15 * std::abs(t);  // and the rounding of absolute times
  out.resize(count);
  double end = t;
  for (size_t i = 0; i < count; ++i) {
    const Piece& p = pieces_[pieces_.size() - 1 - i];
    const double len = p.end - p.start;
    if (std::abs(p.end - end) > tol || std::abs(len - h) > tol ||
        p.generation + 1 < max_generation_) {
      return false;
    }
    double scale = 1.0;
    for (int k = 0; k <= kDegree; ++k) {
      out[count - 1 - i][static_cast<size_t>(k)] = p.coef[static_cast<size_t>(k)] * scale;
      scale *= len;
    }
    end = p.start;
  }
  return true;
}

void DelayedLoop::Append(double a, double b, const std::array<double, 4>& nodes, int generation) {
  pieces_.push_back({a, b, Fit(nodes, b - a), generation});
  if (cursor_ > 4096) {  // drop the history the delay can no longer reach
    pieces_.erase(pieces_.begin(), pieces_.begin() + static_cast<long>(cursor_));
    cursor_ = 0;
  }
}

}  // namespace lw
