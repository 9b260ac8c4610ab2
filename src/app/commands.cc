// The one table of loopwright's commands. To add a command: write NAME.cc with a class derived
// from Command and a factory `std::unique_ptr<Command> MakeNameCommand()`, declare the factory
// below and add one row.
#include "app/command.h"

namespace lw::app {

std::unique_ptr<Command> MakeSimulateCommand();
std::unique_ptr<Command> MakeFitCommand();
std::unique_ptr<Command> MakeBandCommand();
std::unique_ptr<Command> MakePredictCommand();
std::unique_ptr<Command> MakeCheckCommand();
std::unique_ptr<Command> MakeReportCommand();
std::unique_ptr<Command> MakeEmulateCommand();
std::unique_ptr<Command> MakeRecordCommand();
std::unique_ptr<Command> MakeStepTestCommand();
std::unique_ptr<Command> MakeApplyCommand();
std::unique_ptr<Command> MakeVerifyCommand();
std::unique_ptr<Command> MakeTuneCommand();
std::unique_ptr<Command> MakeInitCommand();
std::unique_ptr<Command> MakeLogCommand();
std::unique_ptr<Command> MakeDriftCommand();

const std::vector<CommandEntry>& CommandTable() {
  static const std::vector<CommandEntry> table = {
      {"simulate", "Simulate a model's response to an input (open or closed loop) into a CSV",
       MakeSimulateCommand},
      {"fit", "Identify a low-order plant model with dead time from a step-test recording",
       MakeFitCommand},
      {"band", "Find every controller gain that meets response specs (locus, response, robust)",
       MakeBandCommand},
      {"predict", "Predict the closed loop at one gain: poles, margins, step response, effort",
       MakePredictCommand},
      {"check", "Check a model against a fresh closed-loop recording: confirmed, stale, saturated",
       MakeCheckCommand},
      {"report", "Assemble one self-contained HTML page from saved results and figures",
       MakeReportCommand},
      {"emulate", "Run a simulated rig speaking the rig protocol on a pseudo-terminal or TCP port",
       MakeEmulateCommand},
      {"record", "Record a rig's samples passively into a CSV (every valid sample, as it arrives)",
       MakeRecordCommand},
      {"step-test", "Run an open-loop step test on a rig and record it (hold, step, settle, return)",
       MakeStepTestCommand},
      {"apply", "Close a rig's loop at one gain and hold it, with the safety limits enforced",
       MakeApplyCommand},
      {"verify", "Run a closed-loop reference step on a rig, then check the model against it",
       MakeVerifyCommand},
      {"tune", "The whole job on a rig: step test, fit, band, proposed gain, verify, report",
       MakeTuneCommand},
      {"init", "Create a rig workspace: a rig profile (TOML) and an empty logbook (SQLite)",
       MakeInitCommand},
      {"log", "List the workspace's logbook: every result with its time, outcome, recordings",
       MakeLogCommand},
      {"drift", "Follow each fitted parameter across the logged fits; flag significant changes",
       MakeDriftCommand},
  };
  return table;
}

}  // namespace lw::app
