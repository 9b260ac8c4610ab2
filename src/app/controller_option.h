// The controller options shared by every command that closes a loop:
//   --controller C   p | pi:Z | lead:Z:P | pid:Z1:Z2:P   (syntax in lti/controller.h; default p)
//   --gain K         the one tuned gain, K > 0
//
//   ControllerOption controller;          // a member of the command
//   controller.Add(sub, /*gain_required=*/true);
//   Controller c = controller.Parse();    // in Run(); UsageError for a bad text
#ifndef LOOPWRIGHT_APP_CONTROLLER_OPTION_H_
#define LOOPWRIGHT_APP_CONTROLLER_OPTION_H_

#include <cmath>
#include <optional>
#include <string>

#include <CLI/CLI.hpp>

#include "app/output.h"
#include "lti/controller.h"
#include "lti/error.h"

namespace lw::app {

class ControllerOption {
 public:
  // Adds --controller and, unless with_gain is false, --gain (required when gain_required).
  void Add(CLI::App& sub, bool gain_required, bool with_gain = true) {
    sub.add_option("--controller", text_,
                   "Controller with one gain K: p, pi:Z, lead:Z:P or pid:Z1:Z2:P (rad/s)")
        ->capture_default_str();
    if (!with_gain) return;
    CLI::Option* gain = sub.add_option("--gain", gain_, "Controller gain K (> 0)");
    if (gain_required) gain->required();
  }

  const std::string& text() const { return text_; }
  Controller Parse() const { return Controller::Parse(text_); }

  bool has_gain() const { return gain_.has_value(); }
  // The gain; throws UsageError when it was not given or is not a finite positive number.
  double gain() const {
    if (!gain_) throw UsageError("--gain K is needed here");
    if (!std::isfinite(*gain_) || *gain_ <= 0.0) {
      throw UsageError("--gain " + FormatNumber(*gain_, 6) + ": the gain must be a number > 0");
    }
    return *gain_;
  }

 private:
  std::string text_ = "p";
  std::optional<double> gain_;
};

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_CONTROLLER_OPTION_H_
