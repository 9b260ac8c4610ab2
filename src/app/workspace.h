// The rig workspace as the commands see it: a folder holding the rig profile (rig.toml, see
// io/rig_profile.h) and the logbook (logbook.sqlite, see io/logbook.h), created by
// `loopwright init DIR`.
//
// Which workspace a command runs in: the global option `--rig DIR` (accepted before or after the
// command name; main.cc stores it in Context::rig_dir, so no command declares --rig itself), else
// the current folder when it holds rig.toml, else none. Outside a workspace nothing is logged and
// commands behave exactly as before.
//
// Logging: a command calls LogResult() once, AFTER its result is printed and its files are
// written. Logging never changes a command's outcome: when the logbook cannot be written the
// command still succeeds and prints one "warning: ..." line on ctx.err. Recordings are only
// read (to hash them), never modified or deleted.
//
//   // in FitCommand::Run, after printing:
//   LogResult(ctx, "fit", "ok", doc, {path_});
//
// Kinds in use: "fit", "band", "predict", "check" (and the hardware commands' own, e.g. "step",
// "apply"). Outcomes are short words: "ok", "failed", "stale", "infeasible", "stopped".
// For kind "fit" the summary should carry the fit command's JSON shape
//   {"structure": "...", "parameters": [{"name", "value", "ci95": [low, high], "unit"}, ...]}
// so `loopwright drift` can follow every parameter across fits; other keys are kept as they are.
#ifndef LOOPWRIGHT_APP_WORKSPACE_H_
#define LOOPWRIGHT_APP_WORKSPACE_H_

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "io/logbook.h"
#include "io/rig_profile.h"

namespace lw::app {

// File names inside a workspace folder.
inline constexpr std::string_view kProfileFileName = "rig.toml";
inline constexpr std::string_view kLogbookFileName = "logbook.sqlite";

// The workspace folder in use: Context::rig_dir when set (throws UsageError "--rig 'DIR' is not
// a loopwright workspace (no rig.toml); create one with `loopwright init DIR`" when that folder
// has no profile), else the current folder when it holds rig.toml, else std::nullopt.
std::optional<std::string> FindWorkspace(const Context& ctx);

// The workspace's rig profile, read and validated (io/rig_profile.h), or std::nullopt outside a
// workspace. Throws DataError naming rig.toml:LINE for a bad profile, UsageError as
// FindWorkspace. For commands that need the rig's limits (link, sample period, actuator and trip
// limits, maximum gain): use RequireRigProfile when they cannot run without one.
std::optional<RigProfile> LoadRigProfile(const Context& ctx);
// As LoadRigProfile, but throws UsageError("not inside a rig workspace: pass --rig DIR or run it
// inside a folder made by `loopwright init`") outside a workspace.
RigProfile RequireRigProfile(const Context& ctx);
// The workspace folder, or that UsageError outside one.
std::string RequireWorkspace(const Context& ctx);

// The workspace's logbook opened read-only (for `log`, `drift`), and the workspace folder in
// *workspace when not null. Throws UsageError("not inside a rig workspace: ...") outside one,
// DataError as Logbook::Open.
Logbook OpenWorkspaceLogbook(const Context& ctx, std::string* workspace = nullptr);

// Records one finished result in the workspace's logbook: the time (UTC), the kind, the outcome,
// the command line, the summary JSON and, for each path in `recordings`, its SHA-256 and size
// (first sight of a digest adds it to the recordings table). No-op outside a workspace. Never
// throws: any failure (no workspace folder, a locked or damaged logbook, an unreadable recording)
// becomes one warning line on ctx.err.
void LogResult(const Context& ctx, std::string_view kind, std::string_view outcome,
               const nlohmann::json& summary, const std::vector<std::string>& recordings);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_WORKSPACE_H_
