#include "design/pole_verdict.h"

#include <cmath>
#include <limits>

namespace lw {

const char* FailureName(Failure f) {
  switch (f) {
    case Failure::kNone:
      return "none";
    case Failure::kUnstable:
      return "unstable";
    case Failure::kWn:
      return "wn";
    case Failure::kZeta:
      return "zeta";
    case Failure::kSigma:
      return "sigma";
    case Failure::kWd:
      return "wd";
    case Failure::kDecay:
      return "decay";
  }
  return "none";
}

namespace {

bool InsideBounds(const std::complex<double>& q, const Region& region) {
  const PoleShape e = ShapeOf(q);
  return e.wn >= region.wn_min && e.sigma >= region.zeta_min * e.wn &&
         e.sigma >= region.sigma_min && e.wd >= region.wd_min;
}

}  // namespace

PoleVerdict JudgePoles(const std::vector<std::complex<double>>& poles, const Region& region) {
  PoleVerdict v;
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const double inf = std::numeric_limits<double>::infinity();
  v.dominant = {nan, nan};
  if (poles.empty()) {
    v.meets = true;  // a static loop: nothing to judge
    v.lead = inf;
    v.uniform = true;
    return v;
  }
  const size_t n = poles.size();
  size_t dom = 0;
  for (size_t i = 1; i < n; ++i) {
    const auto& p = poles[i];
    const auto& d = poles[dom];
    if (p.real() > d.real() || (p.real() == d.real() && p.imag() > d.imag())) dom = i;
  }
  const std::complex<double> s = poles[dom];
  v.dominant = {s.real(), std::abs(s.imag())};
  v.shape = ShapeOf(v.dominant);
  // Per pole: whether it decays by decay_min, and whether it has a conjugate partner (the
  // decay test skips the dominant pole and one partner).
  size_t slow = 0;  // poles with -Re < decay_min
  for (const auto& q : poles) slow += -q.real() < region.decay_min;
  auto passes = [&](size_t i) {
    const auto& p = poles[i];
    if (!InsideBounds(p, region)) return false;
    const bool p_slow = -p.real() < region.decay_min;
    size_t others_slow = slow - (p_slow ? 1 : 0);
    if (p_slow && p.imag() != 0.0) {
      const double tol = 1e-9 * std::max(1.0, std::abs(p));
      for (size_t j = 0; j < n; ++j) {
        if (j != i && std::abs(poles[j] - std::conj(p)) <= tol) {
          --others_slow;
          break;
        }
      }
    }
    return others_slow == 0;
  };
  double best_pass = -inf, best_fail = -inf;
  size_t passing = 0, inside = 0;
  for (size_t i = 0; i < n; ++i) {
    if (passes(i)) {
      ++passing;
      best_pass = std::max(best_pass, poles[i].real());
    } else {
      best_fail = std::max(best_fail, poles[i].real());
    }
    inside += InsideBounds(poles[i], region);
  }
  v.lead = passing == n ? inf : (passing == 0 ? -inf : best_pass - best_fail);
  {
    const double tol = 1e-9 * std::max(1.0, std::abs(s));
    bool conj_seen = s.imag() == 0.0;
    double next = -inf;
    for (size_t i = 0; i < n; ++i) {
      if (i == dom) continue;
      if (!conj_seen && std::abs(poles[i] - std::conj(s)) <= tol) {
        conj_seen = true;
        continue;
      }
      next = std::max(next, poles[i].real());
    }
    v.gap = s.real() - next;
  }
  if (s.real() >= 0.0) {
    v.failure = Failure::kUnstable;
    v.uniform = true;
    return v;
  }
  v.uniform = inside == 0 || (inside == n && slow == 0);
  const PoleShape& p = v.shape;
  if (p.wn < region.wn_min)
    v.failure = Failure::kWn;
  else if (p.sigma < region.zeta_min * p.wn)
    v.failure = Failure::kZeta;
  else if (p.sigma < region.sigma_min)
    v.failure = Failure::kSigma;
  else if (p.wd < region.wd_min)
    v.failure = Failure::kWd;
  else if (!passes(dom))
    v.failure = Failure::kDecay;
  v.meets = v.failure == Failure::kNone;
  return v;
}

}  // namespace lw
