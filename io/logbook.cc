// The rig logbook on SQLite's C API (io/logbook.h).
#include "io/logbook.h"

#include <sqlite3.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <utility>

#include "lti/error.h"

namespace lw {

namespace {

// "LWLB" in PRAGMA application_id marks the file as a loopwright logbook.
constexpr int kApplicationId = 0x4C574C42;

constexpr const char* kSchema = R"sql(
CREATE TABLE recordings(
  id INTEGER PRIMARY KEY,
  path TEXT NOT NULL,
  sha256 TEXT NOT NULL,
  size INTEGER NOT NULL,
  first_seen TEXT NOT NULL,
  UNIQUE(path, sha256));
CREATE TABLE results(
  id INTEGER PRIMARY KEY AUTOINCREMENT,
  time TEXT NOT NULL,
  kind TEXT NOT NULL,
  outcome TEXT NOT NULL,
  command_line TEXT NOT NULL,
  summary TEXT NOT NULL);
CREATE INDEX results_by_kind ON results(kind, id);
CREATE TABLE result_recordings(
  result_id INTEGER NOT NULL REFERENCES results(id),
  recording_id INTEGER NOT NULL REFERENCES recordings(id),
  PRIMARY KEY(result_id, recording_id));
CREATE TABLE parameters(
  result_id INTEGER NOT NULL REFERENCES results(id),
  position INTEGER NOT NULL,
  structure TEXT NOT NULL,
  name TEXT NOT NULL,
  unit TEXT NOT NULL,
  value REAL,
  ci_low REAL,
  ci_high REAL,
  PRIMARY KEY(result_id, position));
)sql";

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

[[noreturn]] void Fail(sqlite3* db, const std::string& path, int rc, const std::string& doing) {
  std::string msg = db ? sqlite3_errmsg(db) : sqlite3_errstr(rc);
  int primary = rc & 0xff;
  if (primary == SQLITE_BUSY || primary == SQLITE_LOCKED) {
    throw JobFailed(path + ": logbook is busy (another loopwright kept it locked) while " + doing +
                    "; try again");
  }
  if (primary == SQLITE_NOTADB) {
    throw DataError(path + ": not a loopwright logbook (not an SQLite database)");
  }
  if (primary == SQLITE_CORRUPT) {
    throw DataError(path + ": the logbook is damaged (" + msg + ") while " + doing);
  }
  throw DataError(path + ": cannot use the logbook while " + doing + " (" + msg + ")");
}

// A prepared statement, finalised on scope exit.
class Statement {
 public:
  Statement(sqlite3* db, const std::string& path, const char* sql) : db_(db), path_(path) {
    int rc = sqlite3_prepare_v2(db, sql, -1, &stmt_, nullptr);
    if (rc != SQLITE_OK) Fail(db_, path_, rc, "preparing a query");
  }
  ~Statement() { sqlite3_finalize(stmt_); }
  Statement(const Statement&) = delete;
  Statement& operator=(const Statement&) = delete;

  Statement& Bind(int i, const std::string& s) {
    Check(sqlite3_bind_text(stmt_, i, s.data(), static_cast<int>(s.size()), SQLITE_TRANSIENT));
    return *this;
  }
  Statement& Bind(int i, int64_t v) {
    Check(sqlite3_bind_int64(stmt_, i, v));
    return *this;
  }
  Statement& Bind(int i, double v) {
    Check(std::isfinite(v) ? sqlite3_bind_double(stmt_, i, v) : sqlite3_bind_null(stmt_, i));
    return *this;
  }
  // True while there is a row.
  bool Step(const char* doing) {
    int rc = sqlite3_step(stmt_);
    if (rc == SQLITE_ROW) return true;
    if (rc == SQLITE_DONE) return false;
    Fail(db_, path_, rc, doing);
  }
  void Reset() {
    sqlite3_reset(stmt_);
    sqlite3_clear_bindings(stmt_);
  }
  std::string Text(int col) const {
    const unsigned char* p = sqlite3_column_text(stmt_, col);
    return p ? std::string(reinterpret_cast<const char*>(p),
                           static_cast<size_t>(sqlite3_column_bytes(stmt_, col)))
             : std::string();
  }
  int64_t Int(int col) const { return sqlite3_column_int64(stmt_, col); }
  double Real(int col) const {
    return sqlite3_column_type(stmt_, col) == SQLITE_NULL ? kNaN
                                                          : sqlite3_column_double(stmt_, col);
  }

 private:
  void Check(int rc) {
    if (rc != SQLITE_OK) Fail(db_, path_, rc, "binding a value");
  }
  sqlite3* db_;
  const std::string& path_;
  sqlite3_stmt* stmt_ = nullptr;
};

void Exec(sqlite3* db, const std::string& path, const char* sql, const char* doing) {
  char* err = nullptr;
  int rc = sqlite3_exec(db, sql, nullptr, nullptr, &err);
  sqlite3_free(err);
  if (rc != SQLITE_OK) Fail(db, path, rc, doing);
}

int64_t PragmaInt(sqlite3* db, const std::string& path, const char* sql) {
  Statement s(db, path, sql);
  return s.Step("reading the schema version") ? s.Int(0) : 0;
}

// A transaction that rolls back unless committed.
class Transaction {
 public:
  Transaction(sqlite3* db, const std::string& path, bool write) : db_(db), path_(path) {
    Exec(db_, path_, write ? "BEGIN IMMEDIATE" : "BEGIN", "starting a transaction");
  }
  ~Transaction() {
    if (open_) sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
  }
  void Commit() {
    Exec(db_, path_, "COMMIT", "committing");
    open_ = false;
  }

 private:
  sqlite3* db_;
  const std::string& path_;
  bool open_ = true;
};

sqlite3* OpenHandle(const std::string& path, int flags, const Logbook::Options& options) {
  options.Validate();
  sqlite3* db = nullptr;
  int rc = sqlite3_open_v2(path.c_str(), &db, flags, nullptr);
  if (rc != SQLITE_OK) {
    std::string msg = db ? sqlite3_errmsg(db) : sqlite3_errstr(rc);
    sqlite3_close(db);
    throw DataError(path + ": cannot open the logbook (" + msg + ")");
  }
  sqlite3_extended_result_codes(db, 1);
  sqlite3_busy_timeout(db, options.busy_timeout_ms);
  return db;
}

// WAL, full sync at every commit, foreign keys checked.
void Configure(sqlite3* db, const std::string& path, bool write) {
  if (write) {
    Statement wal(db, path, "PRAGMA journal_mode=WAL");
    if (!wal.Step("switching to WAL mode") || wal.Text(0) != "wal") {
      throw DataError(path + ": the logbook cannot use write-ahead logging on this file system");
    }
  }
  Exec(db, path, "PRAGMA synchronous=FULL; PRAGMA foreign_keys=ON", "configuring");
}

bool IsHex64(const std::string& s) {
  if (s.size() != 64) return false;
  for (char c : s) {
    if (!std::isxdigit(static_cast<unsigned char>(c))) return false;
  }
  return true;
}

double JsonDouble(const nlohmann::json& v, const std::string& field) {
  if (v.is_null()) return kNaN;
  if (!v.is_number())
    throw DataError("fit summary: field '" + field + "' must be a number or null");
  return v.get<double>();
}

}  // namespace

std::vector<LoggedParameter> ParametersOfFitSummary(const nlohmann::json& summary) {
  std::vector<LoggedParameter> out;
  if (!summary.is_object() || !summary.contains("parameters")) return out;
  const nlohmann::json& list = summary["parameters"];
  if (!list.is_array()) throw DataError("fit summary: field 'parameters' must be an array");
  std::string structure;
  if (summary.contains("structure") && summary["structure"].is_string()) {
    structure = summary["structure"].get<std::string>();
  }
  for (size_t i = 0; i < list.size(); ++i) {
    const nlohmann::json& p = list[i];
    std::string at = "parameters[" + std::to_string(i) + "]";
    if (!p.is_object() || !p.contains("name") || !p["name"].is_string() ||
        p["name"].get<std::string>().empty()) {
      throw DataError("fit summary: field '" + at + ".name' must be a non-empty string");
    }
    LoggedParameter lp;
    lp.structure = structure;
    lp.name = p["name"].get<std::string>();
    if (p.contains("unit") && p["unit"].is_string()) lp.unit = p["unit"].get<std::string>();
    lp.value = JsonDouble(p.value("value", nlohmann::json()), at + ".value");
    if (p.contains("ci95")) {
      const nlohmann::json& ci = p["ci95"];
      if (!ci.is_array() || ci.size() != 2) {
        throw DataError("fit summary: field '" + at + ".ci95' must be [low, high]");
      }
      lp.ci_low = JsonDouble(ci[0], at + ".ci95[0]");
      lp.ci_high = JsonDouble(ci[1], at + ".ci95[1]");
    }
    out.push_back(std::move(lp));
  }
  return out;
}

void LogbookOptions::Validate() const {
  if (busy_timeout_ms < 0) {
    throw UsageError("logbook option busy_timeout_ms = " + std::to_string(busy_timeout_ms) +
                     " must be >= 0");
  }
}

Logbook Logbook::Create(const std::string& path, const Options& options) {
  std::error_code ec;
  if (std::filesystem::exists(path, ec)) {
    throw UsageError("cannot create '" + path + "': it already exists");
  }
  sqlite3* db = nullptr;
  try {
    db = OpenHandle(path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE, options);
  } catch (const DataError& e) {
    throw UsageError("cannot create '" + path + "': " + e.what());
  }
  Logbook book(path, db);
  Configure(db, path, /*write=*/true);
  Transaction tx(db, path, /*write=*/true);
  Exec(db, path, kSchema, "creating the tables");
  std::string pragmas = "PRAGMA application_id=" + std::to_string(kApplicationId) +
                        "; PRAGMA user_version=" + std::to_string(kLogbookSchemaVersion);
  Exec(db, path, pragmas.c_str(), "stamping the schema version");
  tx.Commit();
  return book;
}

Logbook Logbook::Open(const std::string& path, const Options& options) {
  std::error_code ec;
  if (!std::filesystem::is_regular_file(path, ec)) {
    throw DataError(path + ": no logbook there (create a workspace with `loopwright init`)");
  }
  int flags = options.read_only ? SQLITE_OPEN_READONLY : SQLITE_OPEN_READWRITE;
  Logbook book(path, OpenHandle(path, flags, options));
  Configure(book.db_, path, !options.read_only);
  int64_t app = PragmaInt(book.db_, path, "PRAGMA application_id");
  int64_t version = PragmaInt(book.db_, path, "PRAGMA user_version");
  if (app != kApplicationId) {
    throw DataError(path + ": not a loopwright logbook (an SQLite file of another program)");
  }
  if (version > kLogbookSchemaVersion) {
    throw DataError(path + ": the logbook has schema version " + std::to_string(version) +
                    ", newer than this loopwright reads (" + std::to_string(kLogbookSchemaVersion) +
                    "); use a newer loopwright");
  }
  if (version < 1) throw DataError(path + ": the logbook has no schema version (damaged)");
  return book;
}

Logbook::Logbook(Logbook&& other) noexcept
    : path_(std::move(other.path_)), db_(std::exchange(other.db_, nullptr)) {}

Logbook& Logbook::operator=(Logbook&& other) noexcept {
  if (this != &other) {
    sqlite3_close(db_);
    path_ = std::move(other.path_);
    db_ = std::exchange(other.db_, nullptr);
  }
  return *this;
}

Logbook::~Logbook() { sqlite3_close(db_); }

int64_t Logbook::AddResult(const NewResult& r) {
  if (r.kind.empty()) throw UsageError("logbook result: kind must not be empty");
  if (r.outcome.empty()) throw UsageError("logbook result: outcome must not be empty");
  for (const auto& rec : r.recordings) {
    if (!IsHex64(rec.sha256)) {
      throw UsageError("logbook result: recording '" + rec.path + "' has sha256 '" + rec.sha256 +
                       "', expected 64 hexadecimal digits");
    }
  }
  Transaction tx(db_, path_, /*write=*/true);
  Statement add_result(db_, path_,
                       "INSERT INTO results(time, kind, outcome, command_line, summary) "
                       "VALUES(?, ?, ?, ?, ?)");
  add_result.Bind(1, r.time).Bind(2, r.kind).Bind(3, r.outcome).Bind(4, r.command_line);
  add_result.Bind(5, r.summary.dump());
  add_result.Step("adding a result");
  int64_t id = sqlite3_last_insert_rowid(db_);

  Statement add_rec(db_, path_,
                    "INSERT OR IGNORE INTO recordings(path, sha256, size, first_seen) "
                    "VALUES(?, ?, ?, ?)");
  Statement find_rec(db_, path_, "SELECT id FROM recordings WHERE path = ? AND sha256 = ?");
  Statement link(db_, path_,
                 "INSERT OR IGNORE INTO result_recordings(result_id, recording_id) VALUES(?, ?)");
  for (const auto& rec : r.recordings) {
    add_rec.Bind(1, rec.path).Bind(2, rec.sha256).Bind(3, rec.size).Bind(4, r.time);
    add_rec.Step("adding a recording");
    add_rec.Reset();
    find_rec.Bind(1, rec.path).Bind(2, rec.sha256);
    if (!find_rec.Step("finding a recording")) {
      throw DataError(path_ + ": the logbook lost a recording it just added (damaged)");
    }
    int64_t rec_id = find_rec.Int(0);
    find_rec.Reset();
    link.Bind(1, id).Bind(2, rec_id);
    link.Step("linking a recording");
    link.Reset();
  }
  Statement add_param(db_, path_,
                      "INSERT INTO parameters(result_id, position, structure, name, unit, value, "
                      "ci_low, ci_high) VALUES(?, ?, ?, ?, ?, ?, ?, ?)");
  for (size_t i = 0; i < r.parameters.size(); ++i) {
    const LoggedParameter& p = r.parameters[i];
    add_param.Bind(1, id).Bind(2, static_cast<int64_t>(i)).Bind(3, p.structure).Bind(4, p.name);
    add_param.Bind(5, p.unit).Bind(6, p.value).Bind(7, p.ci_low).Bind(8, p.ci_high);
    add_param.Step("adding a parameter");
    add_param.Reset();
  }
  tx.Commit();
  return id;
}

std::vector<LoggedResult> Logbook::Results(const std::string& kind, int last) const {
  // One read transaction: a consistent snapshot even while a writer commits.
  Transaction tx(db_, path_, /*write=*/false);
  std::string sql = "SELECT id, time, kind, outcome, command_line, summary FROM results";
  if (!kind.empty()) sql += " WHERE kind = ?1";
  sql += " ORDER BY id DESC";
  if (last > 0) sql += " LIMIT ?2";
  std::vector<LoggedResult> out;
  {
    Statement q(db_, path_, sql.c_str());
    if (!kind.empty()) q.Bind(1, kind);
    if (last > 0) q.Bind(2, static_cast<int64_t>(last));
    while (q.Step("listing results")) {
      LoggedResult r;
      r.id = q.Int(0);
      r.time = q.Text(1);
      r.kind = q.Text(2);
      r.outcome = q.Text(3);
      r.command_line = q.Text(4);
      try {
        r.summary = nlohmann::json::parse(q.Text(5));
      } catch (const nlohmann::json::exception&) {
        throw DataError(path_ + ": result " + std::to_string(r.id) +
                        " has a summary that is not JSON (damaged)");
      }
      out.push_back(std::move(r));
    }
  }
  std::reverse(out.begin(), out.end());
  Statement recs(db_, path_,
                 "SELECT r.id, r.path, r.sha256, r.size, r.first_seen FROM result_recordings l "
                 "JOIN recordings r ON r.id = l.recording_id WHERE l.result_id = ? ORDER BY r.id");
  Statement params(db_, path_,
                   "SELECT structure, name, unit, value, ci_low, ci_high FROM parameters "
                   "WHERE result_id = ? ORDER BY position");
  for (auto& r : out) {
    recs.Bind(1, r.id);
    while (recs.Step("listing recordings")) {
      r.recordings.push_back({recs.Int(0), recs.Text(1), recs.Text(2), recs.Int(3), recs.Text(4)});
    }
    recs.Reset();
    params.Bind(1, r.id);
    while (params.Step("listing parameters")) {
      r.parameters.push_back({params.Text(0), params.Text(1), params.Text(2), params.Real(3),
                              params.Real(4), params.Real(5)});
    }
    params.Reset();
  }
  tx.Commit();
  return out;
}

std::vector<LoggedRecording> Logbook::Recordings() const {
  Statement q(db_, path_, "SELECT id, path, sha256, size, first_seen FROM recordings ORDER BY id");
  std::vector<LoggedRecording> out;
  while (q.Step("listing recordings")) {
    out.push_back({q.Int(0), q.Text(1), q.Text(2), q.Int(3), q.Text(4)});
  }
  return out;
}

int64_t Logbook::ResultCount() const {
  Statement q(db_, path_, "SELECT count(*) FROM results");
  return q.Step("counting results") ? q.Int(0) : 0;
}

int Logbook::SchemaVersion() const {
  return static_cast<int>(PragmaInt(db_, path_, "PRAGMA user_version"));
}

std::string Logbook::IntegrityCheck() const {
  Statement q(db_, path_, "PRAGMA integrity_check");
  return q.Step("checking integrity") ? q.Text(0) : std::string("no answer");
}

}  // namespace lw
