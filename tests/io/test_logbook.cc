// The rig logbook (io/logbook.h): what is added reads back, recordings are kept once per digest,
// NaN survives as NULL, the schema is versioned, foreign files are refused, and a reader works
// while another connection holds a write transaction. The crash test (SIGKILL of a writer) is
// tests/logbook/kill_test.py.
#include "io/logbook.h"

#include <sqlite3.h>

#include <cmath>
#include <string>

#include <doctest/doctest.h>

#include "io/sha256.h"
#include "lti/error.h"
#include "tests/io/temp_dir.h"

namespace {

using lw::Logbook;
using lw::NewResult;

NewResult FitResult(const std::string& time, double tau) {
  NewResult r;
  r.time = time;
  r.kind = "fit";
  r.outcome = "ok";
  r.command_line = "loopwright fit bench.csv";
  r.summary = {{"structure", "fopdt"},
               {"parameters",
                {{{"name", "K"}, {"value", 1.5}, {"ci95", {1.4, 1.6}}, {"unit", "degC/%"}},
                 {{"name", "tau"}, {"value", tau}, {"ci95", {tau - 1, tau + 1}}, {"unit", "s"}},
                 {{"name", "T"}, {"value", 2.0}, {"ci95", {nullptr, nullptr}}, {"unit", "s"}}}}};
  r.parameters = lw::ParametersOfFitSummary(r.summary);
  r.recordings.push_back({0, "bench.csv", lw::Sha256Hex("bench data"), 10, ""});
  return r;
}

// Runs SQL on a raw connection (the test's stand-in for another program or another writer).
void RawExec(sqlite3* db, const char* sql) {
  char* err = nullptr;
  int rc = sqlite3_exec(db, sql, nullptr, nullptr, &err);
  std::string msg = err ? err : "";
  sqlite3_free(err);
  REQUIRE_MESSAGE(rc == SQLITE_OK, msg);
}

}  // namespace

TEST_CASE("logbook: results, recordings and parameters read back") {
  lw::test::TempDir dir;
  std::string path = dir.File("logbook.sqlite");
  {
    Logbook book = Logbook::Create(path);
    CHECK(book.SchemaVersion() == lw::kLogbookSchemaVersion);
    CHECK(book.ResultCount() == 0);
    CHECK(book.AddResult(FitResult("2026-12-02T01:00:00Z", 30.0)) == 1);
    NewResult band;
    band.time = "2026-12-02T01:05:00Z";
    band.kind = "band";
    band.outcome = "infeasible";
    band.summary = {{"gain_band", nullptr}, {"note", "no gain meets \"overshoot <= 5 %\""}};
    CHECK(book.AddResult(band) == 2);
    // The same recording again is not a new recording; a changed file at the same path is.
    NewResult again = FitResult("2026-12-02T01:10:00Z", 36.0);
    again.recordings.push_back({0, "bench.csv", lw::Sha256Hex("bench data, edited"), 18, ""});
    CHECK(book.AddResult(again) == 3);
  }
  Logbook book = Logbook::Open(path);
  CHECK(book.IntegrityCheck() == "ok");
  CHECK(book.ResultCount() == 3);
  auto all = book.Results();
  REQUIRE(all.size() == 3);
  CHECK(all[0].id == 1);
  CHECK(all[0].kind == "fit");
  CHECK(all[0].time == "2026-12-02T01:00:00Z");
  CHECK(all[0].command_line == "loopwright fit bench.csv");
  CHECK(all[0].summary["structure"] == "fopdt");
  REQUIRE(all[0].parameters.size() == 3);
  CHECK(all[0].parameters[1].name == "tau");
  CHECK(all[0].parameters[1].structure == "fopdt");
  CHECK(all[0].parameters[1].unit == "s");
  CHECK(all[0].parameters[1].value == 30.0);
  CHECK(all[0].parameters[1].ci_low == 29.0);
  CHECK(all[0].parameters[1].ci_high == 31.0);
  CHECK(std::isnan(all[0].parameters[2].ci_low));
  CHECK(std::isnan(all[0].parameters[2].ci_high));
  CHECK(all[1].outcome == "infeasible");
  CHECK(all[1].summary["note"] == "no gain meets \"overshoot <= 5 %\"");
  CHECK(all[1].recordings.empty());
  REQUIRE(all[2].recordings.size() == 2);
  CHECK(all[2].recordings[0].id == all[0].recordings[0].id);
  CHECK(all[2].recordings[0].first_seen == "2026-12-02T01:00:00Z");
  CHECK(all[2].recordings[1].size == 18);
  auto recs = book.Recordings();
  REQUIRE(recs.size() == 2);
  CHECK(recs[0].sha256 == lw::Sha256Hex("bench data"));
  CHECK(recs[1].first_seen == "2026-12-02T01:10:00Z");

  auto fits = book.Results("fit");
  REQUIRE(fits.size() == 2);
  CHECK(fits[1].id == 3);
  auto last = book.Results("", 2);
  REQUIRE(last.size() == 2);
  CHECK(last[0].id == 2);
  CHECK(last[1].id == 3);
}

TEST_CASE("logbook: bad results are refused before anything is written") {
  lw::test::TempDir dir;
  Logbook book = Logbook::Create(dir.File("logbook.sqlite"));
  NewResult r = FitResult("t", 1.0);
  r.kind = "";
  CHECK_THROWS_AS(book.AddResult(r), lw::UsageError);
  r = FitResult("t", 1.0);
  r.recordings[0].sha256 = "abc";
  CHECK_THROWS_WITH_AS(book.AddResult(r), doctest::Contains("expected 64 hexadecimal digits"),
                       lw::UsageError);
  CHECK(book.ResultCount() == 0);
  lw::LogbookOptions bad;
  bad.busy_timeout_ms = -1;
  CHECK_THROWS_WITH_AS(Logbook::Open(dir.File("logbook.sqlite"), bad),
                       "logbook option busy_timeout_ms = -1 must be >= 0", lw::UsageError);
}

TEST_CASE("logbook: fit summaries in the fit command's shape give the parameters") {
  auto params = lw::ParametersOfFitSummary(FitResult("t", 12.5).summary);
  REQUIRE(params.size() == 3);
  CHECK(params[0].name == "K");
  CHECK(params[0].unit == "degC/%");
  CHECK(params[0].ci_low == 1.4);
  CHECK(params[1].value == 12.5);
  CHECK(lw::ParametersOfFitSummary({{"gain", 3}}).empty());
  CHECK_THROWS_WITH_AS(lw::ParametersOfFitSummary({{"parameters", {{{"value", 1}}}}}),
                       "fit summary: field 'parameters[0].name' must be a non-empty string",
                       lw::DataError);
  CHECK_THROWS_AS(lw::ParametersOfFitSummary({{"parameters", {{{"name", "K"}, {"value", "big"}}}}}),
                  lw::DataError);
}

TEST_CASE("logbook: existing files, foreign files and newer schemas are refused") {
  lw::test::TempDir dir;
  std::string path = dir.File("logbook.sqlite");
  Logbook::Create(path);
  CHECK_THROWS_WITH_AS(Logbook::Create(path), doctest::Contains("already exists"), lw::UsageError);
  CHECK_THROWS_WITH_AS(Logbook::Open(dir.File("none.sqlite")), doctest::Contains("no logbook"),
                       lw::DataError);

  lw::test::WriteText(dir.File("text.sqlite"), "time,y\n0,1\n1,2\n and more text to fill a page");
  CHECK_THROWS_WITH_AS(Logbook::Open(dir.File("text.sqlite")),
                       doctest::Contains("not a loopwright logbook"), lw::DataError);

  sqlite3* raw = nullptr;
  REQUIRE(sqlite3_open(dir.File("other.sqlite").c_str(), &raw) == SQLITE_OK);
  RawExec(raw, "CREATE TABLE t(x); INSERT INTO t VALUES(1);");
  sqlite3_close(raw);
  CHECK_THROWS_WITH_AS(Logbook::Open(dir.File("other.sqlite")),
                       doctest::Contains("another program"), lw::DataError);

  REQUIRE(sqlite3_open(path.c_str(), &raw) == SQLITE_OK);
  RawExec(raw, "PRAGMA user_version = 99");
  sqlite3_close(raw);
  CHECK_THROWS_WITH_AS(Logbook::Open(path), doctest::Contains("schema version 99, newer"),
                       lw::DataError);
}

TEST_CASE("logbook: a reader works while another connection writes; writers wait then fail") {
  lw::test::TempDir dir;
  std::string path = dir.File("logbook.sqlite");
  Logbook book = Logbook::Create(path);
  book.AddResult(FitResult("2026-12-02T02:00:00Z", 10.0));

  // Another writer in the middle of a transaction, with one row not yet committed.
  sqlite3* raw = nullptr;
  REQUIRE(sqlite3_open(path.c_str(), &raw) == SQLITE_OK);
  RawExec(raw,
          "BEGIN IMMEDIATE; INSERT INTO results(time, kind, outcome, command_line, summary) "
          "VALUES('later', 'band', 'ok', '', '{}');");

  lw::LogbookOptions reading;
  reading.read_only = true;
  Logbook reader = Logbook::Open(path, reading);
  auto seen = reader.Results();
  REQUIRE(seen.size() == 1);  // the committed state, not the open transaction
  CHECK(seen[0].time == "2026-12-02T02:00:00Z");

  lw::LogbookOptions impatient;
  impatient.busy_timeout_ms = 50;
  Logbook second = Logbook::Open(path, impatient);
  CHECK_THROWS_WITH_AS(second.AddResult(FitResult("t", 2.0)), doctest::Contains("busy"),
                       lw::JobFailed);

  RawExec(raw, "COMMIT");
  sqlite3_close(raw);
  CHECK(reader.Results().size() == 2);
  CHECK(second.AddResult(FitResult("t", 2.0)) == 3);
  CHECK(reader.IntegrityCheck() == "ok");
}
