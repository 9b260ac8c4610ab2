// Rig profiles: reading the TOML keys of io/rig_profile.h, positions in error messages, the
// rules of Validate(), and writing a profile that reads back unchanged. The TOML syntax itself is
// toml++'s; tests/app/cli_workspace_test.py also parses the written file with Python's tomllib.
#include "io/rig_profile.h"

#include <cmath>
#include <string>

#include <doctest/doctest.h>

#include "lti/error.h"
#include "tests/io/temp_dir.h"

namespace {

using lw::DataError;
using lw::LinkKind;
using lw::ParseRigProfile;
using lw::RigProfile;
using lw::UsageError;

const char* kFull = R"(# an oven rig of our own
name = "oven bench B"

[link]
kind = "serial"
device = "/dev/ttyACM3"
baud = 57600
timeout_s = 0.75

[sampling]
period_s = 0.05

[actuator]
min = -20
max = 80.5
safe = 5
unit = "%"

[trip]
output_min = -5.0
output_max = 240
unit = "degC"

[controller]
max_gain = 3.25

[specs]
rise_max_s = 42
overshoot_max_percent = 8.5
zeta_min = 0.45
settle_max_s = 300
settle_band_percent = 1
)";

// The DataError message of parsing `text` as "rig.toml", or "" when it parses.
std::string ParseError(const std::string& text) {
  try {
    ParseRigProfile(text, "rig.toml");
  } catch (const DataError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("rig profile: every key is read") {
  RigProfile p = ParseRigProfile(kFull, "rig.toml");
  CHECK(p.name == "oven bench B");
  CHECK(p.link.kind == LinkKind::kSerial);
  CHECK(p.link.device == "/dev/ttyACM3");
  CHECK(p.link.baud == 57600);
  CHECK(p.link.timeout_s == 0.75);
  CHECK(p.sample_period_s == 0.05);
  REQUIRE(p.actuator_min);
  CHECK(*p.actuator_min == -20.0);
  CHECK(*p.actuator_max == 80.5);
  CHECK(p.actuator_safe == 5.0);
  CHECK(p.actuator_unit == "%");
  CHECK(*p.output_min == -5.0);
  CHECK(*p.output_max == 240.0);
  CHECK(p.output_unit == "degC");
  CHECK(*p.max_gain == 3.25);
  CHECK(*p.specs.rise_max_s == 42.0);
  CHECK(*p.specs.overshoot_max_percent == 8.5);
  CHECK(*p.specs.zeta_min == 0.45);
  CHECK(*p.specs.settle_max_s == 300.0);
  CHECK(p.specs.settle_band_percent == 1.0);
  CHECK(p.ClipActuator(100.0) == 80.5);
  CHECK(p.ClipActuator(-30.0) == -20.0);
  CHECK(p.ClipActuator(12.0) == 12.0);
  CHECK(p.OutputInsideTrip(240.0));
  CHECK_FALSE(p.OutputInsideTrip(240.01));
  CHECK_FALSE(p.OutputInsideTrip(std::nan("")));
}

TEST_CASE("rig profile: only a name is required; the rest has documented defaults") {
  RigProfile p = ParseRigProfile("name = \"bare\"\n", "rig.toml");
  CHECK(p.link.kind == LinkKind::kNone);
  CHECK(p.sample_period_s == 0.1);
  CHECK_FALSE(p.actuator_min);
  CHECK_FALSE(p.output_max);
  CHECK_FALSE(p.max_gain);
  CHECK(p.actuator_safe == 0.0);
  CHECK(p.specs.settle_band_percent == 2.0);
  CHECK(p.OutputInsideTrip(1e300));
  // Without an explicit safe value the rig rests at 0 clipped into its range.
  RigProfile q = ParseRigProfile("name = \"x\"\n[actuator]\nmin = 10\nmax = 20\n", "rig.toml");
  CHECK(q.actuator_safe == 10.0);
}

TEST_CASE("rig profile: a tcp link gives host and port") {
  RigProfile p = ParseRigProfile(
      "name = \"net rig\"\n[link]\nkind = \"tcp\"\naddress = \"10.1.2.3:5020\"\n", "rig.toml");
  CHECK(p.link.kind == LinkKind::kTcp);
  CHECK(p.link.Host() == "10.1.2.3");
  CHECK(p.link.Port() == 5020);
  RigProfile v6 = ParseRigProfile(
      "name = \"v6\"\n[link]\nkind = \"tcp\"\naddress = \"[::1]:40001\"\n", "rig.toml");
  CHECK(v6.link.Host() == "::1");
  CHECK(v6.link.Port() == 40001);
}

TEST_CASE("rig profile: TOML syntax errors name file, line and column") {
  std::string e = ParseError("name = \"ok\"\n[link]\nbaud = = 9600\n");
  CHECK(e.rfind("rig.toml:3:", 0) == 0);
  e = ParseError("name = \"unterminated\n");
  CHECK(e.rfind("rig.toml:1:", 0) == 0);
}

TEST_CASE("rig profile: unknown keys, wrong types and broken rules point at the value") {
  std::string e = ParseError("name = \"a\"\n\n[actuator]\nmaximum = 5\n");
  CHECK(e.rfind("rig.toml:4:1: unknown key 'actuator.maximum'", 0) == 0);
  CHECK(e.find("min, max, safe, unit") != std::string::npos);

  e = ParseError("name = \"a\"\n[sampling]\nperiod_s = \"fast\"\n");
  CHECK(e.rfind("rig.toml:3:", 0) == 0);
  CHECK(e.find("'sampling.period_s' must be a number") != std::string::npos);

  e = ParseError("name = \"a\"\n[actuator]\nmin = 50\nmax = 10\n");
  CHECK(e.rfind("rig.toml:4:", 0) == 0);
  CHECK(e.find("actuator.max = 10 must be greater than actuator.min = 50") != std::string::npos);

  e = ParseError(
      "name = \"a\"\n[link]\nkind = \"serial\"\ndevice = \"/dev/ttyS0\"\nbaud = 12345\n");
  CHECK(e.rfind("rig.toml:5:", 0) == 0);
  CHECK(e.find("link.baud = 12345 is not a standard rate") != std::string::npos);

  // A rule broken by a missing key points at its table.
  e = ParseError("name = \"a\"\n\n[link]\nkind = \"serial\"\n");
  CHECK(e.rfind("rig.toml:3:", 0) == 0);
  CHECK(e.find("link.device must name the serial device") != std::string::npos);

  e = ParseError("[link]\nkind = \"none\"\n");
  CHECK(e.find("needs a rig name") != std::string::npos);
  e = ParseError("name = \"a\"\n[link]\nkind = \"usb\"\n");
  CHECK(e.find("link.kind = \"usb\" must be \"serial\", \"tcp\" or \"none\"") != std::string::npos);
  e = ParseError("name = \"a\"\n[link]\nkind = \"tcp\"\naddress = \"host:99999\"\n");
  CHECK(e.find("port from 1 to 65535") != std::string::npos);
  e = ParseError("name = \"a\"\nlink = 3\n");
  CHECK(e.find("'link' must be a table") != std::string::npos);
}

TEST_CASE("rig profile: Validate names the field, its value and the rule") {
  RigProfile p = ParseRigProfile(kFull, "rig.toml");
  auto message = [](const RigProfile& q) -> std::string {
    try {
      q.Validate();
    } catch (const UsageError& e) {
      return e.what();
    }
    return "";
  };
  CHECK(message(p) == "");
  RigProfile q = p;
  q.sample_period_s = 0;
  CHECK(message(q) == "sampling.period_s = 0 must be > 0");
  q = p;
  q.actuator_safe = 90;
  CHECK(message(q) == "actuator.safe = 90 must lie within actuator.min ... actuator.max");
  q = p;
  q.specs.overshoot_max_percent = 100;
  CHECK(message(q) == "specs.overshoot_max_percent = 100 must be between 0 and 100 (exclusive)");
  q = p;
  q.specs.zeta_min = 1;
  CHECK(message(q) == "specs.zeta_min = 1 must satisfy 0 <= zeta_min < 1");
  q = p;
  q.specs.settle_band_percent = 5;
  CHECK(message(q) == "specs.settle_band_percent = 5 must be 1 or 2");
  q = p;
  q.max_gain = -1;
  CHECK(message(q) == "controller.max_gain = -1 must be > 0");
  q = p;
  q.output_max = -10;
  CHECK(message(q) == "trip.output_max = -10 must be greater than trip.output_min = -5");
  q = p;
  q.name.clear();
  CHECK(message(q) == "name must not be empty");
}

TEST_CASE("rig profile: the written TOML reads back to the same profile") {
  RigProfile p = ParseRigProfile(kFull, "rig.toml");
  p.name = "quote \" and backslash \\ and tab\t";
  p.sample_period_s = 0.1 + 0.2;  // needs 17 digits to read back exactly
  p.max_gain = 1.0 / 3.0;
  std::string text = lw::RigProfileToml(p);
  RigProfile q = ParseRigProfile(text, "written.toml");
  CHECK(q.name == p.name);
  CHECK(q.link.kind == p.link.kind);
  CHECK(q.link.device == p.link.device);
  CHECK(q.link.baud == p.link.baud);
  CHECK(q.link.timeout_s == p.link.timeout_s);
  CHECK(q.sample_period_s == p.sample_period_s);
  CHECK(*q.actuator_min == *p.actuator_min);
  CHECK(*q.actuator_max == *p.actuator_max);
  CHECK(q.actuator_safe == p.actuator_safe);
  CHECK(q.actuator_unit == p.actuator_unit);
  CHECK(*q.output_min == *p.output_min);
  CHECK(*q.output_max == *p.output_max);
  CHECK(q.output_unit == p.output_unit);
  CHECK(*q.max_gain == *p.max_gain);
  CHECK(*q.specs.rise_max_s == *p.specs.rise_max_s);
  CHECK(*q.specs.overshoot_max_percent == *p.specs.overshoot_max_percent);
  CHECK(*q.specs.zeta_min == *p.specs.zeta_min);
  CHECK(*q.specs.settle_max_s == *p.specs.settle_max_s);
  CHECK(q.specs.settle_band_percent == p.specs.settle_band_percent);

  // Unset limits stay unset.
  RigProfile bare;
  bare.name = "bare";
  RigProfile r = ParseRigProfile(lw::RigProfileToml(bare), "bare.toml");
  CHECK_FALSE(r.actuator_min);
  CHECK_FALSE(r.output_max);
  CHECK_FALSE(r.max_gain);
  CHECK_FALSE(r.specs.rise_max_s);
}

TEST_CASE("rig profile: reading a file") {
  lw::test::TempDir dir;
  CHECK_THROWS_WITH_AS(lw::ReadRigProfile(dir.File("missing.toml")),
                       doctest::Contains("cannot read '"), DataError);
  lw::test::WriteText(dir.File("rig.toml"), "name = \"on disk\"\n[trip]\noutput_max = [1]\n");
  CHECK_THROWS_WITH_AS(lw::ReadRigProfile(dir.File("rig.toml")),
                       doctest::Contains((dir.File("rig.toml") + ":3:").c_str()), DataError);
}
