// loopwright's entry point: builds the subcommands from the command table, parses, runs, and
// turns every error into one sentence on stderr and its documented exit status.
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <cstdlib>
#include <iostream>
#include <memory>
#include <string>
#include <vector>

#include <glog/logging.h>
#include <CLI/CLI.hpp>

#include "app/command.h"
#include "lti/error.h"

namespace {

std::string JoinCommandLine(int argc, char** argv) {
  std::string line;
  for (int i = 0; i < argc; ++i) {
    if (i) line += ' ';
    std::string a = argv[i];
    bool plain = !a.empty() && a.find_first_of(" \t\"'\\$*?()[]{}|;&<>") == std::string::npos;
    line += plain ? a : "'" + a + "'";
  }
  return line;
}

// Edit distance between two option names (insertions, deletions, substitutions).
size_t EditDistance(const std::string& a, const std::string& b) {
  std::vector<size_t> row(b.size() + 1);
  for (size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (size_t i = 1; i <= a.size(); ++i) {
    size_t diag = row[0];
    row[0] = i;
    for (size_t j = 1; j <= b.size(); ++j) {
      size_t up = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diag + (a[i - 1] == b[j - 1] ? 0 : 1)});
      diag = up;
    }
  }
  return row[b.size()];
}

// The first argument after the command's name that looks like an option but is none of the
// command's (CLI11 can report a later consequence first, e.g. the value of a mistyped option
// taken as a positional), with the closest option name when one is near.
std::string UnknownOption(const CLI::App& sub, int argc, char** argv) {
  bool after_name = false;
  for (int i = 1; i < argc; ++i) {
    std::string arg = argv[i];
    if (!after_name) {
      after_name = arg == sub.get_name();
      continue;
    }
    if (arg == "--") break;
    if (arg.size() < 2 || arg[0] != '-') continue;
    if (arg[1] != '-' && (std::isdigit(static_cast<unsigned char>(arg[1])) || arg[1] == '.'))
      continue;  // a negative number
    std::string name = arg.substr(0, arg.find('='));
    if (arg[1] != '-') name = name.substr(0, 2);  // -oFILE
    if (sub.get_option_no_throw(name) != nullptr) continue;
    std::string what = "'" + name + "' is not an option of " + sub.get_name();
    std::string best;
    size_t best_d = 3;
    for (const CLI::Option* opt : sub.get_options()) {
      for (const std::string& long_name : opt->get_lnames()) {
        size_t d = EditDistance(name, "--" + long_name);
        bool prefix = name.size() > 3 && ("--" + long_name).rfind(name, 0) == 0;
        if (prefix) d = std::min<size_t>(d, 1);
        if (d < best_d) best_d = d, best = "--" + long_name;
      }
    }
    if (!best.empty()) what += "; did you mean " + best + "?";
    return what;
  }
  return "";
}

}  // namespace

int main(int argc, char** argv) {
  using lw::app::CommandTable;
  // Ceres reports through glog (e.g. "Covariance matrix is near rank deficient" on stderr); the
  // identify library turns every such case into its own result (ceres_solve.h), and only this
  // program talks to the user, so glog stays silent short of a fatal error.
  FLAGS_minloglevel = google::GLOG_FATAL;
  CLI::App app{
      "loopwright: identify a rig's plant from a step test, choose a controller gain band from\n"
      "the root locus, predict the closed loop and check it against fresh measurements."};
  app.set_version_flag("--version", std::string("loopwright ") + LOOPWRIGHT_VERSION);
  app.require_subcommand(1);
  app.fallthrough(false);

  std::vector<std::unique_ptr<lw::app::Command>> commands;
  std::vector<CLI::App*> subs;
  for (const auto& entry : CommandTable()) {
    commands.push_back(entry.make());
    CLI::App* sub = app.add_subcommand(entry.name, entry.summary);
    commands.back()->Configure(*sub);
    subs.push_back(sub);
  }
  // The rig workspace (app/workspace.h): global, accepted before or after the command name.
  std::string rig_dir;
  const char* rig_help =
      "Rig workspace folder (made by `loopwright init`); default: the current "
      "folder when it holds rig.toml";
  app.add_option("--rig", rig_dir, rig_help)->type_name("DIR");
  for (CLI::App* sub : subs) {
    if (sub->get_option_no_throw("--rig") == nullptr) {
      sub->add_option("--rig", rig_dir, rig_help)->type_name("DIR");
    }
  }

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    // Point at the help of the command the mistake was made in, when one was named.
    std::string help = "loopwright --help";
    std::string what = e.what();
    for (CLI::App* sub : subs) {
      if (!sub->parsed()) continue;
      help = "loopwright " + sub->get_name() + " --help";
      std::string unknown = UnknownOption(*sub, argc, argv);
      if (!unknown.empty()) what = unknown;
    }
    if (help == "loopwright --help") {
      // A mistyped command name reaches CLI11 as a stray argument: name it and the commands.
      for (int i = 1; i < argc; ++i) {
        const std::string arg = argv[i];
        if (arg == "--rig") {
          ++i;
          continue;
        }
        if (arg.empty() || arg[0] == '-') continue;
        std::string names;
        for (CLI::App* sub : subs) names += (names.empty() ? "" : ", ") + sub->get_name();
        what = "'" + arg + "' is not a loopwright command; the commands are " + names;
        break;
      }
    }
    std::cerr << "loopwright: " << what << " (see " << help << ")\n";
    return static_cast<int>(lw::ExitStatus::kUsage);
  }

  bool terminal = isatty(STDOUT_FILENO) == 1;
  const char* no_color = std::getenv("NO_COLOR");
  lw::app::Context ctx{std::cout,
                       std::cerr,
                       terminal,
                       terminal && (no_color == nullptr || *no_color == '\0'),
                       JoinCommandLine(argc, argv),
                       rig_dir};
  for (size_t i = 0; i < subs.size(); ++i) {
    if (!subs[i]->parsed()) continue;
    try {
      int status = commands[i]->Run(ctx);
      std::cout.flush();
      return status;
    } catch (const lw::Error& e) {
      std::cout.flush();
      std::cerr << "loopwright " << subs[i]->get_name() << ": " << e.what() << "\n";
      return static_cast<int>(e.status());
    } catch (const std::exception& e) {
      std::cout.flush();
      std::cerr << "loopwright " << subs[i]->get_name() << ": internal error: " << e.what() << "\n";
      return static_cast<int>(lw::ExitStatus::kJobFailed);
    }
  }
  return static_cast<int>(lw::ExitStatus::kUsage);
}
