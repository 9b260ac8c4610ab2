#include "design/specs.h"

#include <cmath>
#include <cstdio>
#include <numbers>
#include <vector>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

std::string Num(double v) { return SignificantText(v, 4); }

void RequirePositive(const std::optional<double>& v, const char* field, const char* unit) {
  if (!v) return;
  if (!std::isfinite(*v) || *v <= 0.0) {
    throw UsageError(std::string("spec ") + field + " = " + Num(*v) +
                     ": it must be a number > 0 (" + unit + ")");
  }
}

std::string Join(const std::vector<std::string>& parts) {
  std::string s;
  for (size_t i = 0; i < parts.size(); ++i) s += (i ? ", " : "") + parts[i];
  return s;
}

}  // namespace

PoleShape ShapeOf(std::complex<double> s) {
  PoleShape p;
  p.wn = std::abs(s);
  p.sigma = -s.real();
  p.wd = std::abs(s.imag());
  p.zeta = p.wn > 0.0 ? p.sigma / p.wn : 1.0;
  return p;
}

bool Region::ContainsDominant(std::complex<double> s, double tol) const {
  double scale = tol * std::abs(s);
  PoleShape p = ShapeOf(s);
  if (p.wn < wn_min - scale) return false;
  if (p.sigma < zeta_min * p.wn - scale) return false;
  if (p.sigma < sigma_min - scale) return false;
  if (p.wd < wd_min - scale) return false;
  return true;
}

std::string Region::ToString() const {
  std::vector<std::string> parts;
  if (wn_min > 0) parts.push_back("wn >= " + Num(wn_min) + " rad/s");
  if (zeta_min > 0) parts.push_back("zeta >= " + Num(zeta_min));
  if (sigma_min > 0) parts.push_back("sigma >= " + Num(sigma_min) + " 1/s");
  if (wd_min > 0) parts.push_back("wd >= " + Num(wd_min) + " rad/s");
  if (decay_min > 0) parts.push_back("other poles decay >= " + Num(decay_min) + " 1/s");
  return parts.empty() ? "stability only" : Join(parts);
}

double ZetaForOvershoot(double percent) {
  double l = std::log(percent / 100.0);
  return -l / std::sqrt(std::numbers::pi * std::numbers::pi + l * l);
}

double OvershootForZeta(double zeta) {
  if (zeta >= 1.0) return 0.0;
  return 100.0 * std::exp(-std::numbers::pi * zeta / std::sqrt(1.0 - zeta * zeta));
}

double SettleConstant(double band) { return band <= 0.015 ? 4.6 : 4.0; }

void Specs::Validate() const {
  RequirePositive(rise_max, "rise_max", "seconds");
  RequirePositive(settle_max, "settle_max", "seconds");
  RequirePositive(peak_max, "peak_max", "seconds");
  RequirePositive(wn_min, "wn_min", "rad/s");
  if (overshoot_max && !(*overshoot_max > 0.0 && *overshoot_max < 100.0)) {
    throw UsageError("spec overshoot_max = " + Num(*overshoot_max) +
                     ": it must lie strictly between 0 and 100 (percent)");
  }
  if (zeta_min && !(*zeta_min >= 0.0 && *zeta_min < 1.0)) {
    throw UsageError("spec zeta_min = " + Num(*zeta_min) + ": it must satisfy 0 <= zeta_min < 1");
  }
  if (settle_band != 0.01 && settle_band != 0.02) {
    throw UsageError("spec settle_band = " + Num(settle_band) +
                     ": it must be 0.01 (1 % band) or 0.02 (2 % band)");
  }
  if (!(std::isfinite(decay_min) && decay_min >= 0.0)) {
    throw UsageError("spec decay_min = " + Num(decay_min) + ": it must be a number >= 0 (1/s)");
  }
}

Region Specs::ToRegion() const {
  Region r;
  if (rise_max) r.wn_min = std::max(r.wn_min, kRiseConstant / *rise_max);
  if (wn_min) r.wn_min = std::max(r.wn_min, *wn_min);
  if (overshoot_max) r.zeta_min = std::max(r.zeta_min, ZetaForOvershoot(*overshoot_max));
  if (zeta_min) r.zeta_min = std::max(r.zeta_min, *zeta_min);
  if (settle_max) r.sigma_min = SettleConstant(settle_band) / *settle_max;
  if (peak_max) r.wd_min = std::numbers::pi / *peak_max;
  r.decay_min = decay_min;
  return r;
}

std::string Specs::ToString() const {
  std::vector<std::string> parts;
  if (rise_max) parts.push_back("rise (10-90 %) <= " + Num(*rise_max) + " s");
  if (overshoot_max) parts.push_back("overshoot <= " + Num(*overshoot_max) + " %");
  if (zeta_min) parts.push_back("zeta >= " + Num(*zeta_min));
  if (settle_max) {
    parts.push_back("settling (" + Num(settle_band * 100) + " %) <= " + Num(*settle_max) + " s");
  }
  if (peak_max) parts.push_back("peak time <= " + Num(*peak_max) + " s");
  if (wn_min) parts.push_back("wn >= " + Num(*wn_min) + " rad/s");
  if (decay_min > 0) parts.push_back("other poles decay >= " + Num(decay_min) + " 1/s");
  return parts.empty() ? "a stable loop" : Join(parts);
}

}  // namespace lw
