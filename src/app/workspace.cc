// Resolving the rig workspace and logging results into its logbook (app/workspace.h).
#include "app/workspace.h"

#include <filesystem>

#include "io/logbook.h"
#include "io/model_file.h"
#include "io/sha256.h"
#include "lti/error.h"

namespace lw::app {

namespace fs = std::filesystem;

namespace {

bool HoldsProfile(const std::string& dir) {
  std::error_code ec;
  return fs::is_regular_file(fs::path(dir) / kProfileFileName, ec);
}

}  // namespace

// The workspace folder; UsageError outside one (for commands that cannot run without it).
std::string RequireWorkspace(const Context& ctx) {
  std::optional<std::string> dir = FindWorkspace(ctx);
  if (!dir) {
    throw UsageError(
        "not inside a rig workspace: pass --rig DIR or run it inside a folder made by "
        "`loopwright init`");
  }
  return *dir;
}

std::optional<std::string> FindWorkspace(const Context& ctx) {
  if (!ctx.rig_dir.empty()) {
    if (!HoldsProfile(ctx.rig_dir)) {
      throw UsageError("--rig '" + ctx.rig_dir + "' is not a loopwright workspace (no " +
                       std::string(kProfileFileName) + "); create one with `loopwright init " +
                       ctx.rig_dir + "`");
    }
    return ctx.rig_dir;
  }
  if (HoldsProfile(".")) return std::string(".");
  return std::nullopt;
}

std::optional<RigProfile> LoadRigProfile(const Context& ctx) {
  std::optional<std::string> dir = FindWorkspace(ctx);
  if (!dir) return std::nullopt;
  return ReadRigProfile((fs::path(*dir) / kProfileFileName).string());
}

RigProfile RequireRigProfile(const Context& ctx) {
  return ReadRigProfile((fs::path(RequireWorkspace(ctx)) / kProfileFileName).string());
}

Logbook OpenWorkspaceLogbook(const Context& ctx, std::string* workspace) {
  const std::string dir = RequireWorkspace(ctx);
  if (workspace) *workspace = dir;
  LogbookOptions options;
  options.read_only = true;
  return Logbook::Open((fs::path(dir) / kLogbookFileName).string(), options);
}

void LogResult(const Context& ctx, std::string_view kind, std::string_view outcome,
               const nlohmann::json& summary, const std::vector<std::string>& recordings) {
  // The same "warning: " line as Warn() (output.h), which takes a mutable Context.
  auto warn = [&](const std::string& why) {
    ctx.err << "warning: the result was not logged: " << why << "\n";
  };
  try {
    std::optional<std::string> dir = FindWorkspace(ctx);
    if (!dir) return;
    NewResult r;
    r.time = NowUtcIso8601();
    r.kind = std::string(kind);
    r.outcome = std::string(outcome);
    r.command_line = ctx.command_line;
    r.summary = summary;
    for (const std::string& path : recordings) {
      LoggedRecording rec;
      rec.path = fs::absolute(path).lexically_normal().string();
      rec.sha256 = Sha256OfFile(path);
      std::error_code ec;
      auto size = fs::file_size(path, ec);
      rec.size = ec ? -1 : static_cast<int64_t>(size);
      r.recordings.push_back(std::move(rec));
    }
    if (kind == "fit") r.parameters = ParametersOfFitSummary(summary);
    Logbook book = Logbook::Open((fs::path(*dir) / kLogbookFileName).string());
    book.AddResult(r);
  } catch (const std::exception& e) {
    warn(e.what());
  }
}

}  // namespace lw::app
