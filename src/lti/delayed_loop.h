// The closed loop with a dead time inside it, stepped as simulate.cc's header comment describes:
// plant and controller states z = [x_p; x_c] with the delayed actuator signal w(t) = u(t - T)
// as an input,
//   z' = A z + B [r; w],   u = C_u z + D_ur r + D_uw w,   y = C_y z + D_y w,
// and a history of u kept as one cubic per internal step. Internal to lw_lti (used by
// SimulateClosedLoop); not part of the public manual.
#ifndef LOOPWRIGHT_LTI_DELAYED_LOOP_H_
#define LOOPWRIGHT_LTI_DELAYED_LOOP_H_

#include <array>
#include <utility>
#include <vector>

#include <Eigen/Dense>

#include "lti/state_space.h"
#include "lti/zoh.h"

namespace lw {

struct LoopModel {
  Eigen::MatrixXd a, b;  // b: nz x 2, columns r and w
  Eigen::RowVectorXd cu, cy;
  double dur = 0.0, duw = 0.0, dy = 0.0;
};

// Unity negative feedback e = r - y, u = C e of controller c around plant p, with the plant's
// input cut at the delay (w).
LoopModel BuildLoop(const StateSpace& plant, const StateSpace& controller);

class DelayedLoop {
 public:
  // u(t) = before for t < t0. max_step: the longest internal step; segment lengths are cached
  // to 1e-9 of it (the interpolation of u, O(h^4), dominates that).
  // max_generation: see Step(); 3 suits a strictly proper plant (each round trip smooths u by at
  // least one derivative), 8 a plant with a direct gain.
  DelayedLoop(const LoopModel& m, double delay, double before, double t0, double max_step,
              int max_generation);

  // w(s+), the delayed actuator value just after s (s not later than the newest stored step).
  double WRight(double s, double tol);
  double U(const Eigen::VectorXd& z, double r, double w) const {
    return m_.cu.dot(z) + m_.dur * r + m_.duw * w;
  }
  double Y(const Eigen::VectorXd& z, double w) const { return m_.cy.dot(z) + m_.dy * w; }

  // One internal step [a, b] from state z at a, with u(a+) = u0 and r held; generation 0 when
  // a is a sample time (r may switch there), kSmooth otherwise. The step is split where a
  // non-smooth point of u of generation below max_generation comes back through the delay, so
  // that no stored cubic straddles a kink (or, through a direct plant gain, a jump) of u. A part
  // no longer than T only needs history already stored (explicit). A longer part also needs its
  // own u: its cubic is found by fixed-point iteration (start: the previous cubic continued),
  // to 1e-14 relative at the nodes; when that does not converge the part is taken in explicit
  // steps of T.
  void Step(Eigen::VectorXd& z, double a, double b, double r, double u0, int generation);

  static constexpr int kSmooth = 1 << 20;

  // The hold blocks (degree 3) of a step part of length `length`, from the loop's cache.
  const HoldBlocks& Blocks(double length) { return cache_.Get(length); }

  // The last `count` stored pieces, oldest first, as cubics in sigma = (t - start) / h (the form
  // steady_delayed_loop.h takes), when they are contiguous steps of length h (to 1e-9 h) ending
  // at t, none of them non-smooth enough to split a later step; false otherwise.
  bool SteadyHistory(double t, double h, size_t count,
                     std::vector<std::array<double, 4>>& out) const;

 private:
  static constexpr int kDegree = 3;
  using Cubic = std::array<double, kDegree + 1>;  // coefficients in (t - start)^k
  // u on [start, end); u may be non-smooth at start: generation 0 at a sample time, g + 1 where
  // the delayed image of a generation-g start reaches the loop again.
  struct Piece {
    double start, end;
    Cubic coef;
    int generation;
  };

  // Advances z over [a, b] (reading w from the stored history) and returns u at the four
  // equally spaced nodes a, a + L/3, a + 2L/3, b-.
  std::array<double, 4> Integrate(Eigen::VectorXd& z, double a, double b, double r, double u0);
  // The cubic through the nodes of a step of length len.
  Cubic Fit(const std::array<double, 4>& nodes, double len) const;
  // Stores u on [a, b) and drops history the delay can no longer reach.
  void Append(double a, double b, const std::array<double, 4>& nodes, int generation);
  // The fixed-point solve for a part longer than T; false (state restored) when it diverges.
  bool Implicit(Eigen::VectorXd& z, double a, double b, double r, double u0, int generation);

  const LoopModel& m_;
  double delay_;
  int max_generation_;
  HoldCache cache_;
  std::vector<Piece> pieces_;
  size_t cursor_ = 0;
  Eigen::Matrix4d vinv_;
  std::vector<std::pair<double, int>> splits_;
  Eigen::VectorXd next_;
};

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_DELAYED_LOOP_H_
