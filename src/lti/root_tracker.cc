#include "lti/root_tracker.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace lw {
namespace {

using Complex = std::complex<double>;
constexpr double kEps = std::numeric_limits<double>::epsilon();
constexpr int kSweeps = 30;

bool RootLess(const Complex& x, const Complex& y) {
  if (x.real() != y.real()) return x.real() < y.real();
  return x.imag() < y.imag();
}

// Descending coefficients of p, left-padded with zeros to length n + 1.
std::vector<double> Padded(const Polynomial& p, int n) {
  std::vector<double> c(static_cast<size_t>(n + 1), 0.0);
  const auto& pc = p.coefficients();
  std::copy(pc.begin(), pc.end(), c.end() - static_cast<std::ptrdiff_t>(pc.size()));
  return c;
}

}  // namespace

RootTracker::RootTracker(const Polynomial& a, const Polynomial& b) {
  const int n = std::max({a.degree(), b.degree(), 0});
  a_ = Padded(a, n);
  b_ = Padded(b, n);
  c_.resize(a_.size());
}

void RootTracker::Predict(double k) {
  const double dk = k - k_;
  if (dk == 0.0) return;
  const size_t nr = real_.size(), np = pair_.size();
  // Squared distance from each root to its nearest other root (its own conjugate included).
  near_.assign(nr + np, std::numeric_limits<double>::infinity());
  for (size_t i = 0; i < nr; ++i) {
    for (size_t j = i + 1; j < nr; ++j) {
      const double d = (real_[i] - real_[j]) * (real_[i] - real_[j]);
      near_[i] = std::min(near_[i], d);
      near_[j] = std::min(near_[j], d);
    }
    for (size_t j = 0; j < np; ++j) {
      const double d = std::norm(Complex(real_[i]) - pair_[j]);
      near_[i] = std::min(near_[i], d);
      near_[nr + j] = std::min(near_[nr + j], d);
    }
  }
  for (size_t i = 0; i < np; ++i) {
    near_[nr + i] = std::min(near_[nr + i], 4.0 * pair_[i].imag() * pair_[i].imag());
    for (size_t j = i + 1; j < np; ++j) {
      const double d =
          std::min(std::norm(pair_[i] - pair_[j]), std::norm(pair_[i] - std::conj(pair_[j])));
      near_[nr + i] = std::min(near_[nr + i], d);
      near_[nr + j] = std::min(near_[nr + j], d);
    }
  }
  // The first-order move of each root, dr = -dk b(r) / p'(r) at the old k, applied when it is
  // under a quarter of the distance to the nearest other root (and keeps a pair's root above
  // the real axis).
  const size_t n = a_.size();
  for (size_t i = 0; i < nr; ++i) {
    const double r = real_[i];
    double p = 0.0, dp = 0.0, br = 0.0;
    for (size_t m = 0; m < n; ++m) {
      dp = dp * r + p;
      p = p * r + (a_[m] + k_ * b_[m]);
      br = br * r + b_[m];
    }
    const double move = -dk * br / dp;
    if (std::isfinite(move) && 16.0 * move * move < near_[i]) real_[i] = r + move;
  }
  for (size_t i = 0; i < np; ++i) {
    const double zr = pair_[i].real(), zi = pair_[i].imag();
    double pr = 0.0, pi = 0.0, dr = 0.0, di = 0.0, br = 0.0, bi = 0.0;
    for (size_t m = 0; m < n; ++m) {
      const double ndr = dr * zr - di * zi + pr, ndi = dr * zi + di * zr + pi;
      dr = ndr;
      di = ndi;
      const double c = a_[m] + k_ * b_[m];
      const double npr = pr * zr - pi * zi + c, npi = pr * zi + pi * zr;
      pr = npr;
      pi = npi;
      const double nbr = br * zr - bi * zi + b_[m], nbi = br * zi + bi * zr;
      br = nbr;
      bi = nbi;
    }
    // move = -dk (br + j bi) / (dr + j di)
    const double den = dr * dr + di * di;
    const double mr = -dk * (br * dr + bi * di) / den, mi = -dk * (bi * dr - br * di) / den;
    if (std::isfinite(mr) && std::isfinite(mi) && 16.0 * (mr * mr + mi * mi) < near_[nr + i] &&
        zi + mi > 0.0) {
      pair_[i] = Complex(zr + mr, zi + mi);
    }
  }
}

bool RootTracker::Iterate() {
  const double* c = c_.data() + lo_;
  const int m = degree_;  // working coefficients c[0..m], c[0] != 0, c[m] != 0
  const double tiny2 = (8.0 * kEps) * (8.0 * kEps), step2 = (2.0 * kEps) * (2.0 * kEps);
  const size_t nr = real_.size(), np = pair_.size();
  for (int sweep = 0; sweep < kSweeps; ++sweep) {
    bool done = true;
    for (size_t i = 0; i < nr; ++i) {
      const double x = real_[i];
      double p = 0.0, dp = 0.0, scale = 0.0;
      const double ax = std::abs(x);
      for (int k = 0; k <= m; ++k) {
        dp = dp * x + p;
        p = p * x + c[k];
        scale = scale * ax + std::abs(c[k]);
      }
      if (p * p <= tiny2 * scale * scale) continue;
      double s = 0.0;
      for (size_t j = 0; j < nr; ++j) {
        if (j != i) s += 1.0 / (x - real_[j]);
      }
      for (size_t j = 0; j < np; ++j) {
        const double dr = x - pair_[j].real(), zi = pair_[j].imag();
        s += 2.0 * dr / (dr * dr + zi * zi);
      }
      const double step = p / (dp - p * s);
      if (!std::isfinite(step)) return false;
      real_[i] = x - step;
      if (step * step > step2 * real_[i] * real_[i]) done = false;
    }
    for (size_t i = 0; i < np; ++i) {
      const double zr = pair_[i].real(), zi = pair_[i].imag();
      double pr = 0.0, pi = 0.0, dr = 0.0, di = 0.0, scale = 0.0;
      const double az = std::sqrt(zr * zr + zi * zi);
      for (int k = 0; k <= m; ++k) {
        const double ndr = dr * zr - di * zi + pr, ndi = dr * zi + di * zr + pi;
        dr = ndr;
        di = ndi;
        const double npr = pr * zr - pi * zi + c[k], npi = pr * zi + pi * zr;
        pr = npr;
        pi = npi;
        scale = scale * az + std::abs(c[k]);
      }
      if (pr * pr + pi * pi <= tiny2 * scale * scale) continue;
      // s = sum over the other roots of 1 / (z - r): the conjugate of z, the real roots, and
      // the other pairs with their conjugates.
      double sr = 0.0, si = -0.5 / zi;  // 1 / (z - conj z) = 1 / (2 j zi)
      for (size_t j = 0; j < nr; ++j) {
        const double ur = zr - real_[j], d = ur * ur + zi * zi;
        sr += ur / d;
        si -= zi / d;
      }
      for (size_t j = 0; j < np; ++j) {
        if (j == i) continue;
        const double ur = zr - pair_[j].real();
        const double u1 = zi - pair_[j].imag(), u2 = zi + pair_[j].imag();
        const double d1 = ur * ur + u1 * u1, d2 = ur * ur + u2 * u2;
        sr += ur / d1 + ur / d2;
        si -= u1 / d1 + u2 / d2;
      }
      // step = p / (dp - p s)
      const double qr = dr - (pr * sr - pi * si), qi = di - (pr * si + pi * sr);
      const double qd = qr * qr + qi * qi;
      const double tr = (pr * qr + pi * qi) / qd, ti = (pi * qr - pr * qi) / qd;
      if (!std::isfinite(tr) || !std::isfinite(ti)) return false;
      const double nzr = zr - tr, nzi = zi - ti;
      if (!(nzi > 0.0)) return false;  // the pair wants to split into two real roots
      pair_[i] = Complex(nzr, nzi);
      if (tr * tr + ti * ti > step2 * (nzr * nzr + nzi * nzi)) done = false;
    }
    if (!done) continue;
    // Accept only distinct roots whose sum is the coefficients' (Vieta: -c[1]/c[0]).
    const double sep2 = 1e-12;  // (1e-6)^2, relative
    double sum = 0.0, size = 0.0;
    for (size_t i = 0; i < nr; ++i) {
      const double x = real_[i];
      sum += x;
      size += std::abs(x);
      for (size_t j = i + 1; j < nr; ++j) {
        const double d = x - real_[j];
        if (d * d <= sep2 * std::max(x * x, real_[j] * real_[j])) return false;
      }
      for (size_t j = 0; j < np; ++j) {
        if (std::norm(Complex(x) - pair_[j]) <= sep2 * std::max(x * x, std::norm(pair_[j]))) {
          return false;
        }
      }
    }
    for (size_t i = 0; i < np; ++i) {
      const Complex z = pair_[i];
      const double z2 = std::norm(z);
      sum += 2.0 * z.real();
      size += 2.0 * std::sqrt(z2);
      if (4.0 * z.imag() * z.imag() <= sep2 * z2) return false;
      for (size_t j = i + 1; j < np; ++j) {
        if (std::norm(z - pair_[j]) <= sep2 * std::max(z2, std::norm(pair_[j]))) return false;
      }
    }
    const double vieta = -c[1] / c[0];
    return std::abs(sum - vieta) <= 1e-9 * std::max(size, std::abs(vieta));
  }
  return false;
}

void RootTracker::Publish() {
  roots_.clear();
  roots_.insert(roots_.end(), static_cast<size_t>(zeros_), Complex(0.0, 0.0));
  for (double x : real_) roots_.emplace_back(x, 0.0);
  for (const Complex& z : pair_) {
    roots_.push_back(z);
    roots_.push_back(std::conj(z));
  }
  std::sort(roots_.begin(), roots_.end(), RootLess);
}

void RootTracker::Cold() {
  std::vector<double> c(c_.begin() + lo_, c_.end());
  roots_ = Polynomial(std::move(c)).roots();
  real_.clear();
  pair_.clear();
  int zeros = 0, lower = 0;
  for (const Complex& r : roots_) {
    if (r == Complex(0.0, 0.0) && zeros < zeros_) {
      ++zeros;
    } else if (r.imag() == 0.0) {
      real_.push_back(r.real());
    } else if (r.imag() > 0.0) {
      pair_.push_back(r);
    } else {
      ++lower;
    }
  }
  // Warm starts need the exact real / pair pattern; roots() gives it but in its rare fallback.
  have_ = zeros == zeros_ && lower == static_cast<int>(pair_.size());
}

const std::vector<std::complex<double>>& RootTracker::RootsAt(double k) {
  const size_t n = a_.size();
  for (size_t i = 0; i < n; ++i) c_[i] = a_[i] + k * b_[i];
  size_t lo = 0, hi = n;  // nonzero leading coefficient at lo; c_[hi - 1] != 0
  while (lo < n && c_[lo] == 0.0) ++lo;
  while (hi > lo && c_[hi - 1] == 0.0) --hi;
  const int zeros = static_cast<int>(n - hi);
  const int degree = hi > lo ? static_cast<int>(hi - lo) - 1 : -1;
  if (degree <= 0) {  // constant (or zero) polynomial: only the roots at the origin
    roots_.assign(hi > lo ? static_cast<size_t>(zeros) : 0, Complex(0.0, 0.0));
    have_ = false;
    ++cold_;
    return roots_;
  }
  const bool warm = have_ && degree == degree_ && zeros == zeros_;
  lo_ = lo;
  if (warm) {
    Predict(k);
    if (Iterate()) {
      k_ = k;
      Publish();
      ++warm_;
      return roots_;
    }
  }
  degree_ = degree;
  zeros_ = zeros;
  k_ = k;
  // Cold works on c_[lo_ ..] with the trailing zeros; roots() splits them off exactly.
  Cold();
  ++cold_;
  return roots_;
}

}  // namespace lw
