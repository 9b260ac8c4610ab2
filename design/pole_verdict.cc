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

PoleVerdict JudgePoles(const std::vector<std::complex<double>>& poles, const Region& region) {
  PoleVerdict v;
  const double nan = std::numeric_limits<double>::quiet_NaN();
  v.dominant = {nan, nan};
  if (poles.empty()) {
    v.meets = true;  // a static loop: nothing to judge
    return v;
  }
  size_t dom = 0;
  for (size_t i = 1; i < poles.size(); ++i) {
    const auto& p = poles[i];
    const auto& d = poles[dom];
    if (p.real() > d.real() || (p.real() == d.real() && p.imag() > d.imag())) dom = i;
  }
  std::complex<double> s = poles[dom];
  v.dominant = {s.real(), std::abs(s.imag())};
  v.shape = ShapeOf(v.dominant);
  {
    const double tol = 1e-9 * std::max(1.0, std::abs(s));
    bool conj_seen = s.imag() == 0.0;
    double next = -std::numeric_limits<double>::infinity();
    for (size_t i = 0; i < poles.size(); ++i) {
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
  {
    size_t inside = 0, decaying = 0;
    for (const auto& q : poles) {
      PoleShape e = ShapeOf(q);
      inside += e.wn >= region.wn_min && e.sigma >= region.zeta_min * e.wn &&
                e.sigma >= region.sigma_min && e.wd >= region.wd_min;
      decaying += -q.real() >= region.decay_min;
    }
    v.uniform = inside == 0 || (inside == poles.size() && decaying == poles.size());
  }
  const PoleShape& p = v.shape;
  if (p.wn < region.wn_min)
    v.failure = Failure::kWn;
  else if (p.sigma < region.zeta_min * p.wn)
    v.failure = Failure::kZeta;
  else if (p.sigma < region.sigma_min)
    v.failure = Failure::kSigma;
  else if (p.wd < region.wd_min)
    v.failure = Failure::kWd;
  if (v.failure == Failure::kNone && region.decay_min > 0.0) {
    // Skip the dominant pole and its conjugate (one each).
    bool skipped_conj = s.imag() == 0.0;
    const double tol = 1e-9 * std::max(1.0, std::abs(s));
    for (size_t i = 0; i < poles.size(); ++i) {
      if (i == dom) continue;
      if (!skipped_conj && std::abs(poles[i] - std::conj(s)) <= tol) {
        skipped_conj = true;
        continue;
      }
      if (-poles[i].real() < region.decay_min) {
        v.failure = Failure::kDecay;
        break;
      }
    }
  }
  v.meets = v.failure == Failure::kNone;
  return v;
}

}  // namespace lw
