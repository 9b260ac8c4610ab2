// The rig logbook: one SQLite file (logbook.sqlite in a rig workspace) holding every recording a
// command read and every result it produced, so the history of a rig can be listed and the
// drift of its fitted parameters followed.
//
// Durability: the file is in WAL mode with synchronous=FULL, and every write is one transaction
// (BEGIN IMMEDIATE ... COMMIT): after AddResult() returns, the row survives a crash or a SIGKILL
// of the writer, and a writer killed half-way leaves no trace of the unfinished row. Readers work
// while a writer writes (WAL lets them see the last committed state); writers wait for each
// other up to `busy_timeout_ms` before failing.
//
// Schema (versioned with PRAGMA user_version = kLogbookSchemaVersion):
//   recordings(id, path, sha256, size, first_seen)      one row per (path, digest) first seen
//   results(id, time, kind, outcome, command_line, summary)   summary is a JSON text
//   result_recordings(result_id, recording_id)           which recordings a result read
//   parameters(result_id, position, structure, name, unit, value, ci_low, ci_high)
//                                                         a fit's parameters; NULL for NaN
// Times are ISO-8601 UTC strings as given by the caller (e.g. NowUtcIso8601()).
//
// Errors: DataError("PATH: <what>") when the file is not a logbook, has a newer schema or is
// damaged; JobFailed("PATH: logbook is busy ...") when another writer held it past the timeout;
// UsageError("cannot create 'PATH': ...") when the folder cannot be written.
#ifndef LOOPWRIGHT_IO_LOGBOOK_H_
#define LOOPWRIGHT_IO_LOGBOOK_H_

#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

struct sqlite3;

namespace lw {

inline constexpr int kLogbookSchemaVersion = 1;

// One recording a result read: its path as given and what it held then.
struct LoggedRecording {
  int64_t id = 0;
  std::string path;
  std::string sha256;  // 64 lowercase hex digits (sha256.h)
  int64_t size = 0;    // bytes
  std::string first_seen;
};

// One fitted parameter as logged with its result.
struct LoggedParameter {
  std::string structure;  // e.g. "fopdt"
  std::string name, unit;
  double value = std::numeric_limits<double>::quiet_NaN();
  double ci_low = std::numeric_limits<double>::quiet_NaN();  // 95 % interval, NaN when not given
  double ci_high = std::numeric_limits<double>::quiet_NaN();
};

// What a command hands to AddResult().
struct NewResult {
  std::string time;     // ISO-8601 UTC
  std::string kind;     // "fit", "band", "predict", "check", ...; non-empty
  std::string outcome;  // "ok", "failed", ...; non-empty
  std::string command_line;
  nlohmann::json summary = nlohmann::json::object();
  std::vector<LoggedRecording> recordings;  // path, sha256, size (id and first_seen are filled in)
  std::vector<LoggedParameter> parameters;
};

// One logged result, read back.
struct LoggedResult {
  int64_t id = 0;
  std::string time, kind, outcome, command_line;
  nlohmann::json summary;
  std::vector<LoggedRecording> recordings;
  std::vector<LoggedParameter> parameters;
};

// The parameters of a fit summary in the fit command's JSON shape
//   {"structure": S, "parameters": [{"name", "value", "ci95": [low, high], "unit"}, ...]}
// (null numbers become NaN); empty when the summary has no such list. Throws DataError naming the
// field when the list is there but malformed.
std::vector<LoggedParameter> ParametersOfFitSummary(const nlohmann::json& summary);

struct LogbookOptions {
  int busy_timeout_ms = 5000;  // how long a write waits for another writer, >= 0
  bool read_only = false;      // open without write access (Open only)
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

class Logbook {
 public:
  using Options = LogbookOptions;

  // Creates a new, empty logbook; throws UsageError when `path` already exists or cannot be
  // created.
  static Logbook Create(const std::string& path, const Options& options = {});
  // Opens an existing logbook; throws DataError when it does not exist, is not a logbook or its
  // schema is newer than this program's.
  static Logbook Open(const std::string& path, const Options& options = {});

  Logbook(Logbook&& other) noexcept;
  Logbook& operator=(Logbook&& other) noexcept;
  Logbook(const Logbook&) = delete;
  Logbook& operator=(const Logbook&) = delete;
  ~Logbook();

  // Adds one result with its recordings and parameters in a single transaction; returns the
  // result's id (ids increase with every result). Throws UsageError when kind or outcome is
  // empty or a recording's sha256 is not 64 hex digits.
  int64_t AddResult(const NewResult& result);

  // Results in the order they were added (oldest first); `kind` empty means every kind;
  // `last` > 0 keeps only the last that many.
  std::vector<LoggedResult> Results(const std::string& kind = "", int last = 0) const;
  // Every recording, in the order first seen.
  std::vector<LoggedRecording> Recordings() const;
  // Number of results.
  int64_t ResultCount() const;

  // PRAGMA user_version of the open file.
  int SchemaVersion() const;
  // "ok" when PRAGMA integrity_check finds nothing wrong, else its first message.
  std::string IntegrityCheck() const;

  const std::string& path() const { return path_; }

 private:
  Logbook(std::string path, sqlite3* db) : path_(std::move(path)), db_(db) {}
  std::string path_;
  sqlite3* db_ = nullptr;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_LOGBOOK_H_
