// Named rigs for `loopwright emulate --scenario NAME`: synthetic plants with the actuator, safe
// value, sample rate and sensor that go with them, so the no-hardware demo and the tests need no
// formula on the command line. Every scenario is invented for loopwright (the same plants as the
// synthetic recordings in recordings/README.md); none describes a measured machine.
//
//   heater-zone     extruder barrel heater zone 3: 2.6*exp(-38*s)/((240*s+1)*(45*s+1)),
//                   heater power 0..100 %, safe 0 %, zone temperature above ambient (degC),
//                   1 Hz, sensor noise sd 0.15 degC quantised to 0.1 degC. Slow: run it with
//                   --speed (the demo uses a few hundred times real time).
//   conveyor-drive  packaging-line belt on a variable-speed drive: 0.021*exp(-0.12*s)/(0.85*s+1),
//                   drive command 0..100 %, safe 0 %, belt speed (m/s), 100 Hz, noise sd
//                   0.002 m/s. Settles in seconds: the quick one for tests.
//   tank-level      buffer tank level, integrating: 0.05*exp(-2.5*s)/(s*(6*s+1)), inflow valve
//                   -50..50 % about its balance point, safe 0 % (balance: the level holds),
//                   level change (cm), 2 Hz, noise sd 0.3 cm.
#ifndef LOOPWRIGHT_IO_RIG_SCENARIO_H_
#define LOOPWRIGHT_IO_RIG_SCENARIO_H_

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace lw {

struct RigScenario {
  std::string name;           // what --scenario takes
  std::string summary;        // one line for --help and the emulator's banner
  std::string plant_formula;  // lti/plant_formula.h syntax
  double rate_hz = 1.0;
  double actuator_lo = 0.0, actuator_hi = 100.0, safe_value = 0.0;
  std::string actuator_unit, output_unit;
  double noise_sd = 0.0, quantize = 0.0;
  std::int64_t watchdog_ms = 1000;
  std::string rig_name;  // the caps NAME
};

// Every scenario, in the order above.
const std::vector<RigScenario>& RigScenarios();

// The scenario called name; throws UsageError listing the names when there is none.
const RigScenario& FindRigScenario(std::string_view name);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_SCENARIO_H_
