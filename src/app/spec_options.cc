#include "app/spec_options.h"

#include <string>

#include "app/output.h"
#include "lti/error.h"

namespace lw::app {

void SpecOptions::Add(CLI::App& sub) {
  sub.add_option("--rise-max", specs_.rise_max, "Largest 10-90 % rise time, s");
  sub.add_option("--overshoot-max", specs_.overshoot_max, "Largest overshoot, percent");
  sub.add_option("--zeta-min", specs_.zeta_min, "Smallest damping ratio of the dominant pair");
  sub.add_option("--settle-max", specs_.settle_max, "Largest settling time, s");
  sub.add_option("--settle-band", settle_band_percent_, "Settling band in percent: 1 or 2")
      ->capture_default_str();
  sub.add_option("--peak-max", specs_.peak_max, "Largest peak time, s");
  sub.add_option("--wn-min", specs_.wn_min,
                 "Smallest natural frequency of the dominant pair, rad/s");
  sub.add_option("--decay-min", decay_min_,
                 "Smallest decay rate of every other closed-loop pole, 1/s (0 = any stable)")
      ->capture_default_str();
  sub.add_option("--pade", pade_, "Padé order for the dead time in the locus (1..8)")
      ->capture_default_str();
}

Specs SpecOptions::Get() const {
  if (settle_band_percent_ != 1.0 && settle_band_percent_ != 2.0) {
    throw UsageError("--settle-band " + FormatNumber(settle_band_percent_) +
                     ": the settling band must be 1 or 2 (percent)");
  }
  Specs s = specs_;
  s.settle_band = settle_band_percent_ / 100.0;
  s.decay_min = decay_min_;
  s.Validate();
  return s;
}

int SpecOptions::pade() const {
  if (pade_ < 1 || pade_ > 8) {
    throw UsageError("--pade " + std::to_string(pade_) + ": the Padé order must be 1 to 8");
  }
  return pade_;
}

nlohmann::json SpecsJson(const Specs& s) {
  auto opt = [](const std::optional<double>& v) {
    return v ? nlohmann::json(*v) : nlohmann::json(nullptr);
  };
  return {{"rise_max", opt(s.rise_max)},  {"overshoot_max", opt(s.overshoot_max)},
          {"zeta_min", opt(s.zeta_min)},  {"settle_max", opt(s.settle_max)},
          {"settle_band", s.settle_band}, {"peak_max", opt(s.peak_max)},
          {"wn_min", opt(s.wn_min)},      {"decay_min", s.decay_min}};
}

nlohmann::json RegionJson(const Region& r) {
  return {{"wn_min", r.wn_min},
          {"zeta_min", r.zeta_min},
          {"sigma_min", r.sigma_min},
          {"wd_min", r.wd_min},
          {"decay_min", r.decay_min},
          {"dominant", "the closed-loop pole with the largest real part, and its conjugate"}};
}

}  // namespace lw::app
