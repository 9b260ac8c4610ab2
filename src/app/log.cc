// `loopwright log [--kind KIND] [--last N] [--recordings] [--json]`
//
// The history of the rig workspace (app/workspace.h): every logged result, oldest first, with its
// time, kind, outcome, a summary (wrapped between its pieces, never cut) and the recordings it
// read; or with --recordings every recording the logbook has seen, with its SHA-256, size and
// when it was first seen. The logbook is opened read-only, so `log` works while another command
// is writing.
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/output.h"
#include "app/workspace.h"
#include "io/logbook.h"
#include "lti/error.h"

namespace lw::app {

namespace {

namespace fs = std::filesystem;
using nlohmann::json;

constexpr size_t kSummaryWidth = 60;  // characters of the summary column before it wraps

// A JSON value in a few characters: numbers with 4 significant digits, strings as they are.
std::string Short(const json& v) {
  if (v.is_number()) return FormatNumber(v.get<double>());
  if (v.is_string()) return v.get<std::string>();
  if (v.is_boolean()) return v.get<bool>() ? "yes" : "no";
  if (v.is_null()) return "n/a";
  return v.dump();
}

// The pieces of the summary of a result: a fit's structure and "name=value" for each parameter,
// otherwise its first few plain top-level fields as "key=value".
std::vector<std::string> SummaryPieces(const LoggedResult& r) {
  std::vector<std::string> pieces;
  if (!r.parameters.empty()) {
    pieces.push_back(r.parameters.front().structure);
    for (const auto& p : r.parameters) pieces.push_back(p.name + "=" + FormatNumber(p.value));
  } else if (r.summary.is_object()) {
    for (const auto& [key, value] : r.summary.items()) {
      if (value.is_structured()) continue;
      pieces.push_back(key + "=" + Short(value));
      if (pieces.size() == 3) break;
    }
  }
  return pieces;
}

// The pieces joined by two spaces into lines of at most `width` characters, broken only between
// pieces (a piece longer than that has a line of its own): nothing is cut off.
std::vector<std::string> WrapPieces(const std::vector<std::string>& pieces, size_t width) {
  std::vector<std::string> lines;
  for (const std::string& piece : pieces) {
    if (!lines.empty() && lines.back().size() + 2 + piece.size() <= width) {
      lines.back() += "  " + piece;
    } else {
      lines.push_back(piece);
    }
  }
  if (lines.empty()) lines.emplace_back();
  return lines;
}

json RecordingJson(const LoggedRecording& rec) {
  return {{"path", rec.path},
          {"sha256", rec.sha256},
          {"size", rec.size},
          {"first_seen", rec.first_seen}};
}

class LogCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.add_option("--kind", kind_, "Only results of this kind (fit, band, predict, check, ...)");
    sub.add_option("--last", last_, "Only the last N results")->check(CLI::PositiveNumber);
    sub.add_flag("--recordings", recordings_,
                 "List the recordings the logbook has seen instead of the results");
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
  }

  int Run(Context& ctx) override {
    std::string workspace;
    Logbook book = OpenWorkspaceLogbook(ctx, &workspace);
    rig_ = RequireRigProfile(ctx).name;
    if (recordings_) return ListRecordings(ctx, book, workspace);
    auto results = book.Results(kind_, last_);
    if (json_) {
      json doc = {{"workspace", workspace}, {"rig", rig_}, {"results", json::array()}};
      for (const auto& r : results) {
        json item = {{"id", r.id},
                     {"time", r.time},
                     {"kind", r.kind},
                     {"outcome", r.outcome},
                     {"command_line", r.command_line},
                     {"summary", r.summary},
                     {"recordings", json::array()}};
        for (const auto& rec : r.recordings) item["recordings"].push_back(RecordingJson(rec));
        doc["results"].push_back(std::move(item));
      }
      PrintJson(ctx, doc);
      return 0;
    }
    ctx.out << "rig " << Bold(ctx, rig_) << ", logbook " << book.path() << ": " << results.size()
            << " result" << (results.size() == 1 ? "" : "s");
    if (!kind_.empty()) ctx.out << " of kind " << kind_;
    ctx.out << "\n";
    if (results.empty()) return 0;
    TextTable table({"#", "time (UTC)", "kind", "outcome", "summary", "recordings"});
    for (const auto& r : results) {
      std::string recs;
      for (const auto& rec : r.recordings) {
        recs += (recs.empty() ? "" : ", ") + fs::path(rec.path).filename().string();
      }
      std::string outcome = r.outcome == "ok" ? Good(ctx, r.outcome) : Caution(ctx, r.outcome);
      // A long summary goes on as many lines as it needs, below in the same column.
      const std::vector<std::string> summary = WrapPieces(SummaryPieces(r), kSummaryWidth);
      table.AddRow({std::to_string(r.id), r.time, r.kind, outcome, summary.front(), recs});
      for (size_t i = 1; i < summary.size(); ++i) table.AddRow({"", "", "", "", summary[i], ""});
    }
    table.Print(ctx.out);
    return 0;
  }

 private:
  int ListRecordings(Context& ctx, const Logbook& book, const std::string& workspace) {
    auto recs = book.Recordings();
    if (json_) {
      json doc = {{"workspace", workspace}, {"rig", rig_}, {"recordings", json::array()}};
      for (const auto& rec : recs) doc["recordings"].push_back(RecordingJson(rec));
      PrintJson(ctx, doc);
      return 0;
    }
    ctx.out << "rig " << Bold(ctx, rig_) << ", logbook " << book.path() << ": " << recs.size()
            << " recording" << (recs.size() == 1 ? "" : "s") << "\n";
    if (recs.empty()) return 0;
    TextTable table({"first seen (UTC)", "sha256", "bytes", "path"});
    for (const auto& rec : recs) {
      table.AddRow({rec.first_seen, rec.sha256.substr(0, 16), std::to_string(rec.size), rec.path});
    }
    table.Print(ctx.out);
    return 0;
  }

  std::string rig_;  // the rig's name from its profile
  std::string kind_;
  int last_ = 0;
  bool recordings_ = false;
  bool json_ = false;
};

}  // namespace

std::unique_ptr<Command> MakeLogCommand() { return std::make_unique<LogCommand>(); }

}  // namespace lw::app
