#include "app/run_command.h"

#include <memory>

#include <CLI/CLI.hpp>

#include "lti/error.h"

namespace lw::app {

std::string CommandText(const std::string& name, const std::vector<std::string>& args) {
  std::string line = name;
  for (const auto& a : args) {
    bool plain = !a.empty() && a.find_first_of(" \t\"'\\$*?()[]{}|;&<>") == std::string::npos;
    line += " " + (plain ? a : "'" + a + "'");
  }
  return line;
}

int RunCommand(Context& ctx, const std::string& name, const std::vector<std::string>& args) {
  for (const auto& entry : CommandTable()) {
    if (name != entry.name) continue;
    std::unique_ptr<Command> command = entry.make();
    CLI::App app{"loopwright"};
    CLI::App* sub = app.add_subcommand(entry.name, entry.summary);
    command->Configure(*sub);
    std::vector<std::string> reversed(args.rbegin(), args.rend());
    reversed.push_back(name);
    try {
      app.parse(reversed);
    } catch (const CLI::ParseError& e) {
      throw UsageError("cannot run '" + CommandText(name, args) + "': " + e.what());
    }
    return command->Run(ctx);
  }
  throw UsageError("no command '" + name + "'");
}

}  // namespace lw::app
