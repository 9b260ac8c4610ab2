// Resolving the rig workspace and logging results into its logbook (app/workspace.h).
#include "app/workspace.h"

#include <filesystem>

#include "lti/error.h"

namespace lw::app {

namespace fs = std::filesystem;

std::optional<std::string> FindWorkspace(const Context& ctx) {
  if (!ctx.rig_dir.empty()) {
    std::error_code ec;
    if (!fs::is_regular_file(fs::path(ctx.rig_dir) / kProfileFileName, ec)) {
      throw UsageError("--rig '" + ctx.rig_dir + "' is not a loopwright workspace (no " +
                       std::string(kProfileFileName) + "); create one with `loopwright init " +
                       ctx.rig_dir + "`");
    }
    return ctx.rig_dir;
  }
  std::error_code ec;
  if (fs::is_regular_file(fs::path(".") / kProfileFileName, ec)) return std::string(".");
  return std::nullopt;
}

void LogResult(const Context&, std::string_view, std::string_view, const nlohmann::json&,
               const std::vector<std::string>&) {
  // The logbook lands in the next commit (io/logbook.h).
}

}  // namespace lw::app
