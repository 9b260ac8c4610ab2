// Running another loopwright command inside this one, exactly as if it had been typed:
//   int status = RunCommand(ctx, "fit", {"rec.csv", "-o", "model.json"});
// tune uses it for fit, band, predict, check and report, and verify for check, so their
// output, files, logbook entries and errors are those of the commands themselves.
#ifndef LOOPWRIGHT_APP_RUN_COMMAND_H_
#define LOOPWRIGHT_APP_RUN_COMMAND_H_

#include <string>
#include <vector>

#include "app/command.h"

namespace lw::app {

// Parses args with the named command's options and runs it with ctx; returns its exit status.
// Its lw::Error exceptions pass through. A name not in the command table or arguments its
// parser refuses throw UsageError naming the command and the arguments.
int RunCommand(Context& ctx, const std::string& name, const std::vector<std::string>& args);

// The arguments as one shell-like line, for showing what is run: "fit rec.csv -o model.json".
std::string CommandText(const std::string& name, const std::vector<std::string>& args);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_RUN_COMMAND_H_
