// Controllers with one tuned gain K, written as a short text every command accepts
// (`--controller`):
//   p              C(s) = K
//   pi:Z           C(s) = K (s + Z) / s
//   lead:Z:P       C(s) = K (s + Z) / (s + P)
//   pid:Z1:Z2:P    C(s) = K (s + Z1)(s + Z2) / (s (s + P))
// Z, Z1, Z2 and P are in rad/s. Zeros may be any finite real except that pi and pid refuse a
// zero at 0 (it would cancel the integrator and leave a closed-loop pole at s = 0 for every
// gain); P must be > 0.
#ifndef LOOPWRIGHT_LTI_CONTROLLER_H_
#define LOOPWRIGHT_LTI_CONTROLLER_H_

#include <string>
#include <string_view>

#include "lti/transfer_function.h"

namespace lw {

class Controller {
 public:
  enum class Kind { kProportional, kPI, kLead, kPID };

  // Proportional.
  Controller() = default;
  // Parses the syntax above. Throws UsageError naming what was expected, e.g.
  // "controller 'lead:2': expected lead:Z:P (zero and pole in rad/s)".
  static Controller Parse(std::string_view text);

  Kind kind() const { return kind_; }
  // C(s)/K: the controller's shape without the gain.
  TransferFunction Shape() const;
  // C(s) = K * Shape().
  TransferFunction WithGain(double gain) const { return Shape() * gain; }
  // Back to the text form; Parse(ToString()) round-trips.
  std::string ToString() const;

 private:
  Kind kind_ = Kind::kProportional;
  double z1_ = 0.0, z2_ = 0.0, p_ = 0.0;
};

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_CONTROLLER_H_
