// `loopwright emulate`: a simulated rig speaking the rig protocol (io/rig_protocol.md) on a
// pseudo-terminal or on a TCP port, for trying the hardware commands without hardware and for
// testing them.
//
//   loopwright emulate (--plant FORMULA | --model FILE | --scenario NAME)
//                      (--pty | --listen tcp:127.0.0.1:PORT)
//                      [--rate HZ] [--noise SD] [--quantize Q] [--saturate LO:HI] [--safe U]
//                      [--watchdog MS] [--name NAME] [--faults LIST] [--speed X] [--seed N]
//                      [--log FILE]
//
// The first line on stdout is where a host connects (the device path, or tcp:HOST:PORT), flushed
// at once so a script can read it; everything else (banner, notes, the closing counts) goes to
// stderr. SIGINT or SIGTERM ends it cleanly (exit 0); so does the disconnect-after fault. What
// the rig does is described in io/rig_emulator.h, the link in io/rig_emulator_server.h.
#include <cmath>
#include <csignal>
#include <cstdint>
#include <iostream>
#include <optional>
#include <string>

#include "app/command.h"
#include "app/model_source.h"
#include "app/output.h"
#include "io/rig_emulator.h"
#include "io/rig_emulator_server.h"
#include "io/rig_limits.h"
#include "io/rig_scenario.h"
#include "lti/error.h"
#include "lti/plant_formula.h"

namespace lw::app {
namespace {

// "tcp:HOST:PORT" with an IP address (IPv6 in brackets) and PORT 0..65535 (0: any free port).
void ParseListen(const std::string& text, RigEmulatorServerOptions& options) {
  const std::string fail = "--listen '" + text +
                           "': expected tcp:ADDRESS:PORT, e.g. tcp:127.0.0.1:5020 (port 0 "
                           "picks a free one)";
  if (text.rfind("tcp:", 0) != 0) throw UsageError(fail);
  const std::string rest = text.substr(4);
  const std::size_t colon = rest.rfind(':');
  if (colon == std::string::npos || colon == 0 || colon + 1 == rest.size()) {
    throw UsageError(fail);
  }
  std::string host = rest.substr(0, colon);
  if (host.size() > 2 && host.front() == '[' && host.back() == ']') {
    host = host.substr(1, host.size() - 2);
  }
  const std::string port = rest.substr(colon + 1);
  if (port.size() > 5 || port.find_first_not_of("0123456789") != std::string::npos) {
    throw UsageError(fail);
  }
  const long value = std::stol(port);
  if (value > 65535) throw UsageError(fail);
  options.transport = RigEmulatorServerOptions::Transport::kTcp;
  options.host = host;
  options.port = static_cast<std::uint16_t>(value);
}

std::string Seconds(std::uint64_t us) {
  return FormatNumber(static_cast<double>(us) * 1e-6, 6) + " s";
}

class EmulateCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    std::string names;
    for (const auto& s : RigScenarios()) names += "\n  " + s.name + ": " + s.summary;
    sub.footer(
        "A simulated rig that speaks loopwright's rig protocol (io/rig_protocol.md): the plant "
        "in\nfixed steps (exact zero-order hold with its dead time), sensor noise and "
        "quantisation,\nopen and closed loop (the controller discretised by Tustin's rule), the "
        "heartbeat\nwatchdog, and injected faults. The first stdout line is where to connect.\n"
        "--faults takes drop=P,corrupt=P,disconnect-after=S,stuck-after=S (any of them; the two\n"
        "times count rig seconds from the first go). Scenarios (synthetic):" +
        names);
    source_.Add(sub, ModelSource::FileSpelling::kOption);
    sub.add_option("--scenario", scenario_, "A named synthetic rig (listed below)");
    sub.add_flag("--pty", pty_, "Serve on a new pseudo-terminal (prints its device path)");
    sub.add_option("--listen", listen_, "Serve on TCP: tcp:ADDRESS:PORT (port 0: any free)");
    sub.add_option("--rate", rate_, "Sample rate in Hz (default: the scenario's, else 100)");
    sub.add_option("--noise", noise_, "Sensor noise standard deviation (output units)");
    sub.add_option("--quantize", quantize_, "Sensor resolution: round the output to a multiple");
    sub.add_option("--saturate", saturate_,
                   "Actuator range LO:HI (default: the scenario's, else 0:100)");
    sub.add_option("--safe", safe_,
                   "Safe actuator value (default: the scenario's, else 0 when in range, else LO)");
    sub.add_option("--watchdog", watchdog_ms_,
                   "Milliseconds without a host line before the rig goes safe");
    sub.add_option("--name", name_, "Rig name reported to the host (no spaces)");
    sub.add_option("--faults", faults_, "Injected faults, e.g. drop=0.01,corrupt=0.01");
    sub.add_option("--speed", speed_, "Rig time per real time (e.g. 100 for 100x faster)")
        ->capture_default_str();
    sub.add_option("--seed", seed_, "Seed of the sensor noise and the faults")
        ->capture_default_str();
    sub.add_option("--log", log_, "Write every line sent and received to FILE");
  }

  int Run(Context& ctx) override {
    std::signal(SIGPIPE, SIG_IGN);
    RigEmulatorOptions rig = RigOptions();
    RigEmulatorServerOptions server_options;
    if (pty_ == !listen_.empty()) {
      throw UsageError("give exactly one of --pty and --listen tcp:ADDRESS:PORT");
    }
    if (!listen_.empty()) ParseListen(listen_, server_options);
    server_options.speed = speed_;
    server_options.log_path = log_;
    server_options.stop_signals = {SIGINT, SIGTERM, SIGHUP};
    if (!std::isfinite(speed_) || speed_ < 1e-3 || speed_ > 1e6) {
      throw UsageError("--speed " + FormatNumber(speed_, 6) +
                       ": expected a factor from 0.001 to 1000000");
    }

    RigEmulator emulator(rig);
    RigEmulatorServer server(emulator, server_options);
    const std::string where = server.Open();
    ctx.out << where << std::endl;  // the first line, flushed: scripts wait for it

    ctx.err << "loopwright emulate: rig '" << rig.name << "' (" << description_ << ") on " << where
            << "\n  " << FormatNumber(1e6 / static_cast<double>(rig.period_us), 6)
            << " Hz, actuator " << FormatNumber(rig.actuator_lo) << " to "
            << FormatNumber(rig.actuator_hi) << " (safe " << FormatNumber(rig.safe_value)
            << "), watchdog " << rig.watchdog_ms << " ms, speed " << FormatNumber(speed_, 6) << "x";
    if (rig.noise_sd > 0.0 || rig.quantize > 0.0) {
      ctx.err << ", noise sd " << FormatNumber(rig.noise_sd) << ", quantize "
              << FormatNumber(rig.quantize);
    }
    if (rig.faults.any()) ctx.err << ", faults " << faults_;
    ctx.err << "\n  synthetic: no real machine is behind this link" << std::endl;

    const auto ending = server.Run([&ctx](const RigEmulatorNote& note) {
      ctx.err << "[rig " << Seconds(note.rig_us) << "] " << note.text << std::endl;
    });
    const RigEmulatorCounts& c = emulator.counts();
    ctx.err << "loopwright emulate: "
            << (ending == RigEmulatorServer::Ending::kDisconnect ? "link dropped by the fault"
                                                                 : "stopped")
            << " at rig time " << Seconds(emulator.next_tick_us()) << "; lines sent "
            << c.lines_sent << ", samples " << c.samples_sent << " intact, "
            << c.dropped_seqs.size() << " dropped, " << c.corrupted_seqs.size()
            << " corrupted; host lines " << c.host_lines << " valid, " << c.host_rejected
            << " rejected, " << c.host_refused << " refused; watchdog trips " << c.watchdog_trips
            << std::endl;
    return 0;
  }

 private:
  RigEmulatorOptions RigOptions() {
    const int sources = (source_.has_file() ? 1 : 0) + (source_.has_formula() ? 1 : 0) +
                        (scenario_.empty() ? 0 : 1);
    if (sources != 1) {
      throw UsageError("give exactly one plant: --plant FORMULA, --model FILE or --scenario NAME");
    }
    RigEmulatorOptions o;
    double rate = 100.0;
    std::pair<double, double> range{0.0, 100.0};
    std::optional<double> safe;
    if (!scenario_.empty()) {
      const RigScenario& s = FindRigScenario(scenario_);
      o.plant = ParsePlantFormula(s.plant_formula);
      rate = s.rate_hz;
      range = {s.actuator_lo, s.actuator_hi};
      safe = s.safe_value;
      o.noise_sd = s.noise_sd;
      o.quantize = s.quantize;
      o.watchdog_ms = s.watchdog_ms;
      o.name = s.rig_name;
      description_ = "scenario " + s.name + ", " + s.plant_formula;
    } else {
      LoadedModel model = source_.Load();
      o.plant = model.tf;
      description_ = model.description;
    }
    if (rate_) rate = *rate_;
    if (!std::isfinite(rate) || rate <= 0.0 || rate > 100000.0) {
      throw UsageError("--rate " + FormatNumber(rate, 6) +
                       ": expected a rate > 0 and at most "
                       "100000 Hz");
    }
    o.period_us = static_cast<std::int64_t>(std::llround(1e6 / rate));
    if (!saturate_.empty()) range = ParseRange(saturate_, "--saturate");
    o.actuator_lo = range.first;
    o.actuator_hi = range.second;
    if (safe_) {
      safe = *safe_;
    } else if (!safe || *safe < range.first || *safe > range.second) {
      safe = range.first <= 0.0 && range.second >= 0.0 ? 0.0 : range.first;
    }
    o.safe_value = *safe;
    if (!(o.safe_value >= o.actuator_lo && o.safe_value <= o.actuator_hi)) {
      throw UsageError("--safe " + FormatNumber(o.safe_value, 6) +
                       ": the safe value must lie in the actuator range " +
                       FormatNumber(o.actuator_lo) + " to " + FormatNumber(o.actuator_hi));
    }
    if (noise_) o.noise_sd = *noise_;
    if (quantize_) o.quantize = *quantize_;
    if (watchdog_ms_) o.watchdog_ms = *watchdog_ms_;
    if (!name_.empty()) o.name = name_;
    o.faults = RigFaults::Parse(faults_);
    o.seed = seed_;
    if (!std::isfinite(o.noise_sd) || o.noise_sd < 0.0) {
      throw UsageError("--noise " + FormatNumber(o.noise_sd, 6) + ": the noise must be >= 0");
    }
    if (!std::isfinite(o.quantize) || o.quantize < 0.0) {
      throw UsageError("--quantize " + FormatNumber(o.quantize, 6) + ": the step must be >= 0");
    }
    if (o.watchdog_ms <= 0) {
      throw UsageError("--watchdog " + std::to_string(o.watchdog_ms) + ": expected > 0 ms");
    }
    o.Validate();
    return o;
  }

  ModelSource source_;
  std::string scenario_, listen_, saturate_, name_, faults_, log_, description_;
  bool pty_ = false;
  std::optional<double> rate_, noise_, quantize_, safe_;
  std::optional<std::int64_t> watchdog_ms_;
  double speed_ = 1.0;
  std::uint64_t seed_ = 1;
};

}  // namespace

std::unique_ptr<Command> MakeEmulateCommand() { return std::make_unique<EmulateCommand>(); }

}  // namespace lw::app
