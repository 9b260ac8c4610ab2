// Output helpers: number formatting, JSON numbers, table alignment.
#include <cmath>
#include <limits>
#include <sstream>

#include <doctest/doctest.h>

#include "app/output.h"

namespace lw::app {
namespace {

TEST_CASE("FormatNumber keeps the asked significant digits without trailing zeros") {
  CHECK(FormatNumber(0.1234567) == "0.1235");
  CHECK(FormatNumber(2.0) == "2");
  CHECK(FormatNumber(-0.0) == "0");
  CHECK(FormatNumber(12.5) == "12.5");
  CHECK(FormatNumber(123456.0) == "123456");
  CHECK(FormatNumber(1234567.0) == "1.235e+06");
  CHECK(FormatNumber(1.5e6) == "1.5e+06");
  CHECK(FormatNumber(3.2e-5) == "3.2e-05");
  CHECK(FormatNumber(0.00012345, 3) == "0.000123");
  CHECK(FormatNumber(1.0 / 3.0, 17) == "0.33333333333333331");
  CHECK(FormatNumber(std::nan("")) == "n/a");
  CHECK(FormatNumber(std::numeric_limits<double>::infinity()) == "inf");
  CHECK(FormatNumber(-std::numeric_limits<double>::infinity()) == "-inf");
  CHECK(FormatQuantity(3.25, "s", 2) == "3.2 s");  // round half to even of the binary value
  CHECK(FormatQuantity(7.0, "") == "7");
}

TEST_CASE("FormatEstimate adds digits until an interval has width") {
  // 4 digits suffice: nothing changes.
  EstimateText a = FormatEstimate(2.599, 2.597, 2.602);
  CHECK(a.value == "2.599");
  CHECK(a.low == "2.597");
  CHECK(a.high == "2.602");
  CHECK(a.interval == "2.597 .. 2.602");
  // A large offset with a narrow interval: 4 digits would print 143 three times.
  EstimateText b = FormatEstimate(143.0012, 142.98, 143.0224);
  CHECK(b.value == "143");
  CHECK(b.low == "142.98");
  CHECK(b.high == "143.02");
  EstimateText c = FormatEstimate(101325.03, 101324.96, 101325.1);
  // 7 digits still read 101325 twice (101324.96 rounds to 101325.0): 8 are needed.
  CHECK(c.value == "101325.03");
  CHECK(c.low == "101324.96");
  CHECK(c.high == "101325.1");
  // Equal bounds stay equal (a held parameter), and NaN bounds do not add digits.
  EstimateText d = FormatEstimate(1.0 / 3.0, 1.0 / 3.0, 1.0 / 3.0);
  CHECK(d.value == "0.3333");
  EstimateText e = FormatEstimate(1.0 / 3.0, std::nan(""), std::nan(""));
  CHECK(e.value == "0.3333");
  CHECK(e.low == "n/a");
  CHECK(e.interval == "undetermined");
  // At most 10 digits, whatever the bounds.
  EstimateText f = FormatEstimate(1.0, std::nextafter(1.0, 0.0), std::nextafter(1.0, 2.0));
  CHECK(f.value == "1");
}

TEST_CASE("FormatParameter cuts an interval at the parameter's physical range") {
  // A dead time cannot be negative: the symmetric interval 0.0065 +- 0.058 is shown from 0.
  ParameterText a = FormatParameter("dead_time", 0.006474, -0.05167, 0.06462);
  CHECK(a.interval == "0 .. 0.06462 †");
  CHECK(a.low == "0");
  CHECK(a.note ==
        "the symmetric 95 % interval reaches -0.05167, past the physical bound 0: the data do "
        "not rule out 0");
  // A damping ratio lies in [0, 1]: cut above.
  ParameterText b = FormatParameter("damping_ratio", 0.95, 0.88, 1.02);
  CHECK(b.interval == "0.88 .. 1 †");
  CHECK(b.note.find("reaches 1.02, past the physical bound 1") != std::string::npos);
  // Inside the range, or a parameter without one (a gain may be negative): FormatEstimate's text.
  ParameterText c = FormatParameter("time_constant", 2.929, 2.857, 3.001);
  CHECK(c.interval == "2.857 .. 3.001");
  CHECK(c.note.empty());
  ParameterText d = FormatParameter("gain", -0.5, -1.2, 0.2);
  CHECK(d.interval == "-1.2 .. 0.2");
  CHECK(d.note.empty());
  // No interval, nothing to cut.
  ParameterText e = FormatParameter("dead_time", 0.1, std::nan(""), std::nan(""));
  CHECK(e.interval == "undetermined");
  CHECK(e.note.empty());
}

TEST_CASE("JsonNumber turns non-finite values into null") {
  CHECK(JsonNumber(1.5).get<double>() == 1.5);
  CHECK(JsonNumber(std::nan("")).is_null());
  CHECK(JsonNumber(std::numeric_limits<double>::infinity()).is_null());
  nlohmann::json a = JsonNumbers({1.0, std::nan(""), 3.0});
  REQUIRE(a.size() == 3);
  CHECK(a[1].is_null());
  CHECK(a[2].get<double>() == 3.0);
}

TEST_CASE("TextTable right-aligns numeric columns and left-aligns text") {
  TextTable table({"parameter", "value", "unit"});
  table.AddRow({"gain", "2.6", "degC/%"});
  table.AddRow({"time constant", "240", "s"});
  table.AddRow({"dead time", "38.5"});  // short row: padded
  std::ostringstream out;
  table.Print(out, 0);
  CHECK(out.str() ==
        "parameter      value  unit\n"
        "-------------  -----  ------\n"
        "gain             2.6  degC/%\n"
        "time constant    240  s\n"
        "dead time       38.5\n");
}

TEST_CASE("TextTable counts UTF-8 code points for alignment") {
  TextTable table({"unit", "x"});
  table.AddRow({"\u00b0C", "1"});  // degree sign: 2 bytes, 1 column
  std::ostringstream out;
  table.Print(out, 2);
  CHECK(out.str() ==
        "  unit  x\n"
        "  ----  -\n"
        "  \u00b0C    1\n");
}

TEST_CASE("KeyValueList pads keys to one width") {
  KeyValueList kv;
  kv.Add("samples", "1801");
  kv.Add("file", "a.csv");
  std::ostringstream out;
  kv.Print(out, 1);
  CHECK(out.str() == " samples: 1801\n file:    a.csv\n");
}

TEST_CASE("colour helpers only colour when the context allows it") {
  std::ostringstream out, err;
  Context plain{out, err, false, false, ""};
  Context coloured{out, err, true, true, ""};
  CHECK(Bold(plain, "x") == "x");
  CHECK(Bad(coloured, "x") == "\033[31mx\033[0m");
  CHECK(Good(coloured, "ok") == "\033[32mok\033[0m");
  Warn(plain, "record ends before settling");
  CHECK(err.str() == "warning: record ends before settling\n");
}

}  // namespace
}  // namespace lw::app
