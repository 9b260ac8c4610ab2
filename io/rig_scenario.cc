#include "io/rig_scenario.h"

#include "lti/error.h"

namespace lw {
namespace {

struct Actuator {
  double lo, hi, safe;
  const char* unit;
};
struct Sensor {
  const char* unit;
  double noise_sd, quantize;
};

RigScenario Make(const char* name, const char* summary, const char* formula, double rate_hz,
                 Actuator actuator, Sensor sensor, std::int64_t watchdog_ms, const char* rig_name) {
  RigScenario s;
  s.name = name;
  s.summary = summary;
  s.plant_formula = formula;
  s.rate_hz = rate_hz;
  s.actuator_lo = actuator.lo;
  s.actuator_hi = actuator.hi;
  s.safe_value = actuator.safe;
  // Move-assigned from temporaries: assigning the const char* directly trips GCC 12's
  // -Wrestrict false positive in this constant-propagated function.
  s.actuator_unit = std::string(actuator.unit);
  s.output_unit = std::string(sensor.unit);
  s.noise_sd = sensor.noise_sd;
  s.quantize = sensor.quantize;
  s.watchdog_ms = watchdog_ms;
  s.rig_name = rig_name;
  return s;
}

}  // namespace

const std::vector<RigScenario>& RigScenarios() {
  static const std::vector<RigScenario> scenarios = {
      Make("heater-zone", "extruder barrel heater zone (slow, 1 Hz, long dead time)",
           "2.6*exp(-38*s)/((240*s+1)*(45*s+1))", 1.0, {0.0, 100.0, 0.0, "%"}, {"degC", 0.15, 0.1},
           2000, "heater-zone-3"),
      Make("conveyor-drive", "conveyor belt drive (fast, 100 Hz)", "0.021*exp(-0.12*s)/(0.85*s+1)",
           100.0, {0.0, 100.0, 0.0, "%"}, {"m/s", 0.002, 0.0}, 500, "conveyor-drive"),
      Make("tank-level", "buffer tank level (integrating, 2 Hz)", "0.05*exp(-2.5*s)/(s*(6*s+1))",
           2.0, {-50.0, 50.0, 0.0, "%"}, {"cm", 0.3, 0.0}, 1000, "buffer-tank"),
  };
  return scenarios;
}

const RigScenario& FindRigScenario(std::string_view name) {
  std::string names;
  for (const auto& s : RigScenarios()) {
    if (s.name == name) return s;
    names += (names.empty() ? "" : ", ") + s.name;
  }
  throw UsageError("--scenario '" + std::string(name) + "': no such scenario (there are " + names +
                   ")");
}

}  // namespace lw
