#include "io/csv_writer.h"

#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <random>
#include <string>

#include "io/csv_reader.h"
#include "lti/error.h"
#include "tests/io/temp_dir.h"

TEST_CASE("The writer's layout: provenance comment, header, shortest round-trip numbers") {
  const std::vector<double> t = {0.0, 0.1, 0.2};
  const std::vector<double> y = {1.0, -2.5e-7, 1e300};
  CHECK(lw::FormatCsv({"t", "y"}, {t, y}, "loopwright 0.1.0 simulate --plant 1/(s+1)") ==
        "# loopwright 0.1.0 simulate --plant 1/(s+1)\n"
        "t,y\n"
        "0,1\n"
        "0.1,-2.5e-07\n"
        "0.2,1e+300\n");
  CHECK(lw::FormatCsv({"a, b", "c"}, {t, y}, "") == "\"a, b\",c\n0,1\n0.1,-2.5e-07\n0.2,1e+300\n");
  CHECK(lw::FormatCsv({"t"}, {t}, "two\nlines").rfind("# two lines\nt\n", 0) == 0);
}

TEST_CASE("Written files read back bit for bit, header and provenance included") {
  lw::test::TempDir dir;
  std::mt19937_64 rng(20261201);
  std::uniform_real_distribution<double> mantissa(-1.0, 1.0);
  std::uniform_int_distribution<int> exponent(-300, 300);
  std::vector<double> t(5000), u(5000), y(5000);
  for (size_t i = 0; i < t.size(); ++i) {
    t[i] = 0.001 * static_cast<double>(i);
    u[i] = std::ldexp(mantissa(rng), exponent(rng));
    y[i] = mantissa(rng) / 3.0;
  }
  y[7] = std::numeric_limits<double>::denorm_min();
  y[8] = -0.0;
  const std::string path = dir.File("out.csv");
  lw::WriteCsv(path, {"t", "u", "say \"y\""}, {t, u, y}, "loopwright test");
  const lw::Table table = lw::ReadCsv(path);
  CHECK(table.comments == std::vector<std::string>{"loopwright test"});
  CHECK(table.names == std::vector<std::string>{"t", "u", "say \"y\""});
  REQUIRE(table.rows() == t.size());
  CHECK(table.columns[0] == t);
  CHECK(table.columns[1] == u);
  CHECK(table.columns[2] == y);
  CHECK(std::signbit(table.columns[2][8]));
  CHECK(dir.Entries() == std::vector<std::string>{"out.csv"});
}

TEST_CASE("Bad tables are refused before any file appears") {
  lw::test::TempDir dir;
  const std::string path = dir.File("bad.csv");
  const std::vector<double> a = {1, 2, 3};
  const std::vector<double> b = {1, 2};
  const std::vector<double> c = {1, std::nan(""), 3};
  CHECK_THROWS_AS(lw::WriteCsv(path, {"a", "b"}, {a, b}, ""), lw::UsageError);
  CHECK_THROWS_AS(lw::WriteCsv(path, {"a", "c"}, {a, c}, ""), lw::UsageError);
  CHECK_THROWS_AS(lw::WriteCsv(path, {"a"}, {a, a}, ""), lw::UsageError);
  CHECK_THROWS_AS(lw::WriteCsv(path, {""}, {a}, ""), lw::UsageError);
  CHECK(dir.Entries().empty());
  lw::test::WriteText(path, "old");
  CHECK_THROWS_AS(lw::WriteCsv(path, {"a", "c"}, {a, c}, ""), lw::UsageError);
  CHECK(lw::test::ReadText(path) == "old");
}
