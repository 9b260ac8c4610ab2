// The one table of loopwright's commands. To add a command: write NAME.cc with a class derived
// from Command and a factory `std::unique_ptr<Command> MakeNameCommand()`, declare the factory
// below and add one row.
#include "app/command.h"

namespace lw::app {

std::unique_ptr<Command> MakeSimulateCommand();

const std::vector<CommandEntry>& CommandTable() {
  static const std::vector<CommandEntry> table = {
      {"simulate", "Simulate a model's response to an input (open or closed loop) into a CSV",
       MakeSimulateCommand},
  };
  return table;
}

}  // namespace lw::app
