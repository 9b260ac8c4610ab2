#include "io/csv_reader.h"

#include <doctest/doctest.h>

#include <string>

#include "io/recording.h"
#include "lti/error.h"
#include "tests/io/temp_dir.h"

namespace {

// The DataError message ParseCsv gives for `text` (empty when it parses).
std::string ParseError(const std::string& text, const lw::CsvReadOptions& options = {}) {
  try {
    lw::ParseCsv(text, "run.csv", options);
  } catch (const lw::DataError& e) {
    return e.what();
  }
  return "";
}

std::string SelectError(const std::string& text, const lw::ColumnNames& names, bool need_u,
                        bool need_y, bool need_r, size_t min_samples = 3) {
  try {
    lw::SelectColumns(lw::ParseCsv(text, "run.csv"), names, need_u, need_y, need_r, min_samples);
  } catch (const lw::DataError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("A plain comma file with comments, blank lines and CRLF") {
  const lw::Table t = lw::ParseCsv(
      "\xEF\xBB\xBF# rig 4, first run\r\n"
      "t,u,y\r\n"
      "0,0,0.5\r\n"
      "\r\n"
      "0.25, 1 ,  -2.5e-3\r\n"
      "   # operator note\r\n"
      "0.5,+1,.75\r\n",
      "run.csv");
  CHECK(t.names == std::vector<std::string>{"t", "u", "y"});
  CHECK(t.delimiter == ',');
  REQUIRE(t.rows() == 3);
  CHECK(t.columns[0] == std::vector<double>{0.0, 0.25, 0.5});
  CHECK(t.columns[1] == std::vector<double>{0.0, 1.0, 1.0});
  CHECK(t.columns[2] == std::vector<double>{0.5, -2.5e-3, 0.75});
  CHECK(t.comments == std::vector<std::string>{"rig 4, first run", "operator note"});
  CHECK(t.LineOfRow(0) == 3);
  CHECK(t.LineOfRow(1) == 5);
  CHECK(t.LineOfRow(2) == 7);
  CHECK(t.LineOfRow(3) == 0);
}

TEST_CASE("Delimiter detection: semicolon, tab, single column; given delimiter") {
  const lw::Table semi = lw::ParseCsv("time;volts;temp\n1;2;3\n", "a.csv");
  CHECK(semi.delimiter == ';');
  CHECK(semi.columns[2] == std::vector<double>{3.0});
  const lw::Table tab = lw::ParseCsv("t\tu\ty\n1\t2\t3\n4\t5\t6\n", "a.tsv");
  CHECK(tab.delimiter == '\t');
  CHECK(tab.columns[1] == std::vector<double>{2.0, 5.0});
  const lw::Table one = lw::ParseCsv("y\n1\n2\n", "a.csv");
  CHECK(one.names == std::vector<std::string>{"y"});
  CHECK(one.columns[0] == std::vector<double>{1.0, 2.0});
  lw::CsvReadOptions pipe;
  pipe.delimiter = '|';
  const lw::Table p = lw::ParseCsv("a|b\n1|2\n", "a.txt", pipe);
  CHECK(p.columns[1] == std::vector<double>{2.0});
  lw::CsvReadOptions bad;
  bad.delimiter = 'x';
  CHECK_THROWS_AS(bad.Validate(), lw::UsageError);
}

TEST_CASE("Quoted header names and cells, one trailing delimiter") {
  const lw::Table t =
      lw::ParseCsv("\"time, s\",\"say \"\"hi\"\"\",y,\n\"1.5\",2,3,\n4, \"5\" ,6\n", "q.csv");
  CHECK(t.names == std::vector<std::string>{"time, s", "say \"hi\"", "y"});
  CHECK(t.columns[0] == std::vector<double>{1.5, 4.0});
  CHECK(t.columns[1] == std::vector<double>{2.0, 5.0});
  CHECK(t.ColumnIndex("time, s") == 0);
}

TEST_CASE("Numbers read back exactly") {
  const lw::Table t =
      lw::ParseCsv("a\n0.1\n1e-300\n4.9406564584124654e-324\n1.7976931348623157e308\n", "n.csv");
  CHECK(t.columns[0][0] == 0.1);
  CHECK(t.columns[0][1] == 1e-300);
  CHECK(t.columns[0][2] == 4.9406564584124654e-324);
  CHECK(t.columns[0][3] == 1.7976931348623157e308);
}

TEST_CASE("Error messages name file, line and column") {
  CHECK(ParseError("t,u,y\n0,1,2\n0.1,abc,3\n") ==
        "run.csv, line 3, column 2: 'abc' is not a number");
  CHECK(ParseError("t,u,y\n0,1,2\n0.1,2\n") ==
        "run.csv, line 3, column 3: expected 3 cells, found 2");
  CHECK(ParseError("t,u,y\n0,1,2,3,4\n") == "run.csv, line 2, column 4: expected 3 cells, found 5");
  CHECK(ParseError("t,u,y\n0,,2\n") == "run.csv, line 2, column 2: empty cell, expected a number");
  CHECK(ParseError("t,u,y\n# c\n\n0,1,nan\n") ==
        "run.csv, line 4, column 3: NaN or infinity is not allowed ('nan')");
  CHECK(ParseError("t,u,y\n0,-inf,1\n") ==
        "run.csv, line 2, column 2: NaN or infinity is not allowed ('-inf')");
  CHECK(ParseError("t,u,y\n0,1e999,1\n") ==
        "run.csv, line 2, column 2: NaN or infinity is not allowed ('1e999')");
  CHECK(ParseError("t,u,y\n0,1.5x,1\n") == "run.csv, line 2, column 2: '1.5x' is not a number");
  CHECK(ParseError("t;u;y\n0;0,5;1\n") ==
        "run.csv, line 2, column 2: '0,5' is not a number (a decimal comma? write decimals with a "
        "point)");
  CHECK(ParseError("t\tu\ty\n0\t1\t-2,5e3\n") ==
        "run.csv, line 2, column 3: '-2,5e3' is not a number (a decimal comma? write decimals "
        "with a point)");
  CHECK(ParseError("t;u;y\n0;0,5x;1\n") == "run.csv, line 2, column 2: '0,5x' is not a number");
  CHECK(ParseError("") == "run.csv: no header row (the file is empty)");
  CHECK(ParseError("# only a note\n\n") ==
        "run.csv: no header row (the file is only blank or comment lines)");
  CHECK(ParseError("1,2,3\n4,5,6\n") ==
        "run.csv, line 1: expected a header row naming the columns, found only numbers");
  CHECK(ParseError("t,,y\n") == "run.csv, line 1, column 2: empty column name in the header row");
  CHECK(ParseError("t,y,t\n") ==
        "run.csv, line 1, column 3: column name 't' is also the name of column 1");
  CHECK(ParseError("t,a\rb\n") ==
        "run.csv, line 1, column 2: column name 'a?b' contains a control character");
  CHECK(ParseError("\"t,y\n") == "run.csv, line 1, column 1: unterminated quote in the header row");
  CHECK(ParseError("t,y\n\"1,2\n") == "run.csv, line 2, column 1: unterminated quote");
}

TEST_CASE("Column selection by name and 1-based position, and its errors") {
  const lw::Table t = lw::ParseCsv("t,x,y\n0,1,2\n1,3,4\n2,5,6\n", "run.csv");
  CHECK(t.ColumnIndex("x") == 1);
  CHECK(t.ColumnIndex("3") == 2);
  try {
    t.ColumnIndex("u");
    FAIL("expected DataError");
  } catch (const lw::DataError& e) {
    CHECK(std::string(e.what()) == "run.csv: no column 'u'; columns are t, x, y");
  }
  try {
    t.ColumnIndex("4");
    FAIL("expected DataError");
  } catch (const lw::DataError& e) {
    CHECK(std::string(e.what()) == "run.csv: no column 4; the file has 3 columns (t, x, y)");
  }
  CHECK_THROWS_AS(t.ColumnIndex("0"), lw::DataError);

  lw::ColumnNames names;
  CHECK(SelectError("t,x,y\n0,1,2\n1,3,4\n2,5,6\n", names, true, true, false) ==
        "run.csv: no column 'u'; columns are t, x, y");
  const lw::Recording r = lw::SelectColumns(t, names, false, true, false);
  CHECK_FALSE(r.has_u);
  CHECK(r.u.empty());
  CHECK(r.has_y);
  CHECK_FALSE(r.has_r);
  CHECK(r.y == std::vector<double>{2, 4, 6});
  names.input.assign(1, '2');
  const lw::Recording r2 = lw::SelectColumns(t, names, true, true, false);
  CHECK(r2.u == std::vector<double>{1, 3, 5});
  names.reference.assign(1, '7');  // a position that does not exist: an error even when optional
  CHECK_THROWS_AS(lw::SelectColumns(t, names, true, true, false), lw::DataError);
}

TEST_CASE("Recording checks: time increasing, sample count, time unit") {
  lw::ColumnNames names;
  CHECK(SelectError("t,u,y\n0,0,0\n0.6,1,1\n\n0.5,1,1\n", names, true, true, false) ==
        "run.csv, line 5, column 1: time not increasing (t = 0.5 after t = 0.6)");
  CHECK(SelectError("u,t,y\n0,0,0\n0,1,0\n0,1,1\n", names, true, true, false) ==
        "run.csv, line 4, column 2: time not increasing (t = 1 after t = 1)");
  CHECK(SelectError("t,u,y\n0,0,0\n1,1,1\n", names, true, true, false) ==
        "run.csv: needs at least 3 samples, found 2");
  CHECK(SelectError("t,u,y\n", names, true, true, false) ==
        "run.csv: needs at least 3 samples, found 0");
  names.time_unit = "ms";
  const lw::Recording r = lw::SelectColumns(
      lw::ParseCsv("t,u,y\n0,0,0\n1,1,1\n250,1,1\n", "run.csv"), names, true, true, false);
  CHECK(r.t == std::vector<double>{0.0, 0.001, 0.25});
  CHECK(r.time_unit == "ms");
  names.time_unit = "us";
  const lw::Recording us = lw::SelectColumns(
      lw::ParseCsv("t,u,y\n0,0,0\n1,1,1\n3,1,1\n", "run.csv"), names, true, true, false);
  CHECK(us.t[2] == 3e-6);
  CHECK_THROWS_AS(lw::ColumnNames{.time_unit = "min"}.Validate(), lw::UsageError);
  CHECK_THROWS_AS(lw::ColumnNames{.output = {}}.Validate(), lw::UsageError);
}

TEST_CASE("ReadCsv reads a file and names it in errors; a missing file is a data error") {
  lw::test::TempDir dir;
  const std::string path = dir.File("step.csv");
  lw::test::WriteText(path, "t,u,y\n0,0,0\n0.1,1,0.2\n0.2,1,x\n");
  CHECK_THROWS_WITH_AS(lw::ReadCsv(path),
                       (path + ", line 4, column 3: 'x' is not a number").c_str(), lw::DataError);
  lw::test::WriteText(path, "t,u,y\n0,0,0\n0.1,1,0.2\n");
  const lw::Table t = lw::ReadCsv(path);
  CHECK(t.path == path);
  CHECK(t.rows() == 2);
  CHECK_THROWS_WITH_AS(
      lw::ReadCsv(dir.File("nope.csv")),
      ("cannot read '" + dir.File("nope.csv") + "': No such file or directory").c_str(),
      lw::DataError);
  lw::test::WriteText(path, "");
  CHECK_THROWS_WITH_AS(lw::ReadCsv(path), (path + ": no header row (the file is empty)").c_str(),
                       lw::DataError);
}
