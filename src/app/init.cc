// `loopwright init DIR [--name NAME] [--serial DEVICE [--baud N] | --tcp HOST:PORT]
//                      [--period S] [--actuator LO:HI] [--safe U] [--actuator-unit U]
//                      [--trip LO:HI] [--output-unit U] [--max-gain K] [--json]`
//
// Creates a rig workspace (app/workspace.h): DIR (made when missing) gets the rig profile
// rig.toml (io/rig_profile.h; every key can be edited later) and an empty logbook
// logbook.sqlite (io/logbook.h). Refuses (exit 2) when DIR already holds either file, so an
// existing workspace and its history are never overwritten. The profile is checked by the same
// rules as when it is read, before anything is written.
#include <filesystem>
#include <memory>
#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "app/command.h"
#include "app/output.h"
#include "app/workspace.h"
#include "io/atomic_file.h"
#include "io/logbook.h"
#include "io/rig_limits.h"
#include "io/rig_profile.h"
#include "lti/error.h"

namespace lw::app {
namespace {

namespace fs = std::filesystem;

class InitCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.add_option("dir", dir_, "Folder of the new workspace (created when missing)")
        ->required()
        ->type_name("DIR");
    sub.add_option("--name", name_, "Rig name (default: the folder's name)");
    auto* serial =
        sub.add_option("--serial", device_, "Link over a serial device, e.g. /dev/ttyUSB0")
            ->type_name("DEVICE");
    sub.add_option("--baud", baud_, "Serial bits per second (default 115200)")->needs(serial);
    sub.add_option("--tcp", address_, "Link over TCP to HOST:PORT")
        ->type_name("HOST:PORT")
        ->excludes(serial);
    sub.add_option("--period", period_, "Sample period in seconds (default 0.1)")->type_name("S");
    sub.add_option("--actuator", actuator_, "Actuator range LO:HI (actuator units)")
        ->type_name("LO:HI");
    sub.add_option("--safe", safe_,
                   "Actuator value sent on any stop (default 0 clipped to the range)")
        ->type_name("U");
    sub.add_option("--actuator-unit", actuator_unit_, "Actuator unit, e.g. %");
    sub.add_option("--trip", trip_, "Output trip limits LO:HI: a run outside them stops")
        ->type_name("LO:HI");
    sub.add_option("--output-unit", output_unit_, "Output unit, e.g. degC");
    sub.add_option("--max-gain", max_gain_, "Largest controller gain ever applied")->type_name("K");
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
  }

  int Run(Context& ctx) override {
    RigProfile p = Profile();
    if (auto problem = p.FirstProblem()) {
      throw UsageError(OptionOf(problem->key) + ": " + problem->sentence);
    }
    const fs::path dir(dir_);
    const std::string profile_path = (dir / kProfileFileName).string();
    const std::string logbook_path = (dir / kLogbookFileName).string();
    std::error_code ec;
    for (const std::string& existing : {profile_path, logbook_path}) {
      if (fs::exists(existing, ec)) {
        throw UsageError("'" + dir_ + "' is already a workspace ('" + existing +
                         "' exists); nothing was changed");
      }
    }
    if (fs::exists(dir, ec) && !fs::is_directory(dir, ec)) {
      throw UsageError("cannot make a workspace in '" + dir_ + "': it is not a folder");
    }
    fs::create_directories(dir, ec);
    if (ec) throw UsageError("cannot create the folder '" + dir_ + "': " + ec.message());

    // The logbook first: the profile is what marks the folder as a workspace, so it comes last.
    Logbook::Create(logbook_path);
    try {
      AtomicFile file(profile_path);
      file.Write(RigProfileToml(p));
      file.Commit();
    } catch (...) {
      fs::remove(logbook_path, ec);
      throw;
    }

    nlohmann::json doc = {{"workspace", dir_},
                          {"profile", profile_path},
                          {"logbook", logbook_path},
                          {"name", p.name},
                          {"link", std::string(LinkKindName(p.link.kind))}};
    if (json_) {
      PrintJson(ctx, doc);
    } else {
      ctx.out << "rig workspace " << Bold(ctx, p.name) << " created in " << dir_ << "\n";
      KeyValueList kv;
      kv.Add("profile", profile_path + " (edit it to set limits and default specs)");
      kv.Add("logbook", logbook_path);
      kv.Add("link", LinkText(p.link));
      kv.Print(ctx.out);
      ctx.out << "run commands inside " << dir_ << " or pass --rig " << dir_
              << " to log their results\n";
    }
    Context inside = ctx;
    inside.rig_dir = dir_;
    LogResult(inside, "init", "ok", doc, {});
    return 0;
  }

 private:
  RigProfile Profile() const {
    RigProfile p;
    p.name = name_;
    if (p.name.empty()) {
      fs::path dir = fs::absolute(fs::path(dir_)).lexically_normal();
      p.name =
          dir.filename().empty() ? dir.parent_path().filename().string() : dir.filename().string();
    }
    if (!device_.empty()) {
      p.link.kind = LinkKind::kSerial;
      p.link.device = device_;
      p.link.baud = baud_;
    } else if (!address_.empty()) {
      p.link.kind = LinkKind::kTcp;
      p.link.address = address_;
    }
    if (period_) p.sample_period_s = *period_;
    if (!actuator_.empty()) {
      auto [lo, hi] = ParseRange(actuator_, "--actuator");
      p.actuator_min = lo;
      p.actuator_max = hi;
    }
    p.actuator_safe = safe_ ? *safe_ : p.ClipActuator(0.0);
    p.actuator_unit = actuator_unit_;
    if (!trip_.empty()) {
      auto [lo, hi] = ParseRange(trip_, "--trip");
      p.output_min = lo;
      p.output_max = hi;
    }
    p.output_unit = output_unit_;
    p.max_gain = max_gain_;
    return p;
  }

  // The option that sets a profile key.
  static std::string OptionOf(const std::string& key) {
    static const std::pair<const char*, const char*> kOptions[] = {
        {"name", "--name"},
        {"link.device", "--serial"},
        {"link.baud", "--baud"},
        {"link.address", "--tcp"},
        {"sampling.period_s", "--period"},
        {"actuator.safe", "--safe"},
        {"actuator.max", "--actuator"},
        {"trip.output_max", "--trip"},
        {"controller.max_gain", "--max-gain"}};
    for (const auto& [k, option] : kOptions) {
      if (key == k) return option;
    }
    return key;
  }

  static std::string LinkText(const RigLinkSettings& link) {
    switch (link.kind) {
      case LinkKind::kSerial:
        return "serial " + link.device + " at " + std::to_string(link.baud);
      case LinkKind::kTcp:
        return "tcp " + link.address;
      case LinkKind::kNone:
        break;
    }
    return "none (offline; set [link] in the profile to reach the rig)";
  }

  std::string dir_, name_, device_, address_, actuator_, trip_, actuator_unit_, output_unit_;
  int baud_ = 115200;
  std::optional<double> period_, safe_, max_gain_;
  bool json_ = false;
};

}  // namespace

std::unique_ptr<Command> MakeInitCommand() { return std::make_unique<InitCommand>(); }

}  // namespace lw::app
