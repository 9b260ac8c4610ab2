// Safety limits (io/rig_limits.h): each limit refuses exactly past its bound, merging keeps the
// tightest bound, and refusals say which limit and by how much. The bounds are plain
// inequalities; the numbers are our own.
#include "io/rig_limits.h"
#include "io/rig_profile.h"  // LimitsFromProfile takes the full profile

#include <cmath>

#include <doctest/doctest.h>

#include "lti/error.h"

namespace lw {
namespace {

RigLimits Heater() {
  return RigLimits{.actuator_lo = 0,
                   .actuator_hi = 100,
                   .output_lo = -5,
                   .output_hi = 200,
                   .max_gain = 4,
                   .max_step = 15,
                   .max_slew = 2,  // % per second
                   .actuator_unit = "%",
                   .output_unit = "degC"};
}

TEST_CASE("rig limits: actuator range, step and slew") {
  RigLimits l = Heater();
  l.Validate();
  CHECK(l.CheckActuatorMove(50, 60, 60).empty());
  CHECK(l.CheckActuatorMove(50, 65, 60).empty());  // exactly the maximum step is allowed
  CHECK(l.CheckActuatorMove(50, 100, 1e9) ==
        "the actuator step from 50 % to 100 % is 50 %, more than the maximum step 15 %");
  CHECK(l.CheckActuatorMove(90, 101, 1e9) ==
        "actuator 101 % is above the actuator range's top 100 %");
  CHECK(l.CheckActuatorMove(5, -0.5, 1e9) ==
        "actuator -0.5 % is below the actuator range's bottom 0 %");
  // 10 % in 4 s is 2.5 %/s > 2 %/s; in 5 s it is exactly 2 %/s.
  CHECK(!l.CheckActuatorMove(50, 60, 4).empty());
  CHECK(l.CheckActuatorMove(50, 60, 5).empty());
  CHECK(l.CheckActuatorMove(50, 50, 0).empty());  // no change, no slew
  CHECK(!l.CheckActuatorMove(50, 51, 0).empty());
  CHECK(!l.CheckActuatorValue(std::nan("")).empty());
  CHECK_THROWS_AS(l.RequireActuatorMove(50, 100, 100), UsageError);
  CHECK_NOTHROW(l.RequireActuatorMove(50, 55, 100));
}

TEST_CASE("rig limits: gain and output trip") {
  RigLimits l = Heater();
  CHECK(l.CheckGain(4).empty());
  CHECK(l.CheckGain(4.01) == "gain 4.01 is above the maximum gain 4");
  CHECK(!l.CheckGain(0).empty());
  CHECK(!l.CheckGain(-1).empty());
  CHECK_THROWS_AS(l.RequireGain(5), UsageError);
  CHECK(l.CheckOutput(200).empty());
  CHECK(l.CheckOutput(-5).empty());
  CHECK(l.CheckOutput(212) == "output 212 degC is above the trip limit 200 degC");
  CHECK(l.CheckOutput(-5.5) == "output -5.5 degC is below the trip limit -5 degC");
  CHECK(!l.CheckOutput(std::nan("")).empty());
}

TEST_CASE("rig limits: unbounded by default, tightest bound wins on merge") {
  RigLimits none;
  none.Validate();
  CHECK(none.CheckActuatorMove(0, 1e12, 0).empty());
  CHECK(none.CheckGain(1e9).empty());
  CHECK(none.CheckOutput(-1e300).empty());
  RigLimits caps;
  caps.actuator_lo = -10;
  caps.actuator_hi = 80;
  RigLimits m = Heater().Merge(caps);
  CHECK(m.actuator_lo == 0);
  CHECK(m.actuator_hi == 80);
  CHECK(m.max_gain == 4);
  CHECK(m.actuator_unit == "%");
  CHECK(caps.Merge(Heater()).actuator_hi == 80);
}

TEST_CASE("rig limits: validation names the limit; profile limits carry over") {
  RigLimits l;
  l.actuator_lo = 5;
  l.actuator_hi = 5;
  CHECK_THROWS_WITH_AS(l.Validate(),
                       "limit actuator range 5 to 5: the low end must be below the high end",
                       UsageError);
  l = RigLimits{};
  l.max_step = 0;
  CHECK_THROWS_AS(l.Validate(), UsageError);
  RigProfile p;
  p.name = "bench";
  p.actuator_min = 0;
  p.actuator_max = 100;
  p.output_max = 90;
  p.max_gain = 8;
  RigLimits from = LimitsFromProfile(p);
  CHECK(from.actuator_hi == 100);
  CHECK(from.output_hi == 90);
  CHECK(from.output_lo == -RigLimits::kInf);
  CHECK(from.max_gain == 8);
  CHECK(ParseRange("0:100", "--actuator") == std::pair<double, double>{0, 100});
  CHECK_THROWS_AS(ParseRange("100:0", "--actuator"), UsageError);
  CHECK_THROWS_AS(ParseRange("1", "--actuator"), UsageError);
}

}  // namespace
}  // namespace lw
