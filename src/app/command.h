// One loopwright command: it declares its options on a CLI11 subcommand, then runs.
// Each command lives in its own file (simulate.cc, fit.cc, ...) and is listed once in
// commands.cc. Commands talk to the user; the libraries below them never print.
#ifndef LOOPWRIGHT_APP_COMMAND_H_
#define LOOPWRIGHT_APP_COMMAND_H_

#include <iosfwd>
#include <memory>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

namespace lw::app {

// What a running command may use to talk to the user.
struct Context {
  std::ostream& out;         // results: human text or one JSON document
  std::ostream& err;         // warnings and progress
  bool out_is_terminal;      // stdout is a terminal (colour allowed when NO_COLOR is unset too)
  bool color;                // colour may be used on out
  std::string command_line;  // the whole command line, for provenance lines in output files
  std::string rig_dir = {};  // the global --rig DIR (empty: none given; see app/workspace.h)
};

class Command {
 public:
  virtual ~Command() = default;
  // Adds this command's options and positionals to its subcommand.
  virtual void Configure(CLI::App& sub) = 0;
  // Runs after a successful parse. Returns the exit status (0 done, 1 job not done); errors are
  // thrown as lw::Error subclasses and mapped to their status by main().
  virtual int Run(Context& ctx) = 0;
};

struct CommandEntry {
  const char* name;
  const char* summary;  // one line for `loopwright --help`
  std::unique_ptr<Command> (*make)();
};

// The table of every command, in the order `--help` lists them (commands.cc).
const std::vector<CommandEntry>& CommandTable();

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_COMMAND_H_
