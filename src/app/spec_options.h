// The response-spec options of `loopwright band` (and later commands that judge a loop against
// specs), their JSON form, and the region they map to (design/specs.h has the formulas):
//   --rise-max S  --overshoot-max PCT  --zeta-min Z  --settle-max S  --settle-band 1|2
//   --peak-max S  --wn-min W  --decay-min D  --pade N
#ifndef LOOPWRIGHT_APP_SPEC_OPTIONS_H_
#define LOOPWRIGHT_APP_SPEC_OPTIONS_H_

#include <optional>

#include <CLI/CLI.hpp>
#include <nlohmann/json.hpp>

#include "design/specs.h"

namespace lw::app {

class SpecOptions {
 public:
  void Add(CLI::App& sub);
  // The specs, validated (UsageError naming the option otherwise).
  Specs Get() const;
  int pade() const;  // validated 1..8

 private:
  Specs specs_;
  double settle_band_percent_ = 2.0;
  double decay_min_ = 0.0;
  int pade_ = 3;
};

nlohmann::json SpecsJson(const Specs& s);
nlohmann::json RegionJson(const Region& r);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_SPEC_OPTIONS_H_
