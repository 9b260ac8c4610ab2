// Reading, checking and writing rig profiles (io/rig_profile.h) with toml++.
#include "io/rig_profile.h"

#include <algorithm>
#include <array>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <fstream>
#include <map>
#include <sstream>
#include <utility>
#include <vector>

#include <toml++/toml.h>

#include "lti/error.h"

namespace lw {

namespace {

constexpr std::array<int, 14> kStandardBauds = {1200,   2400,   4800,    9600,   19200,
                                                38400,  57600,  115200,  230400, 460800,
                                                500000, 921600, 1000000, 2000000};

// A number as TOML text that reads back to exactly v.
std::string TomlNumber(double v) {
  char buf[40];
  for (int digits : {15, 16, 17}) {
    std::snprintf(buf, sizeof buf, "%.*g", digits, v);
    if (std::strtod(buf, nullptr) == v) break;
  }
  // "%g" never writes a bare "5." or ".5": its output is a valid TOML integer or float.
  return buf;
}

std::string TomlString(std::string_view s) {
  std::string out = "\"";
  for (unsigned char c : s) {
    switch (c) {
      case '"':
        out += "\\\"";
        break;
      case '\\':
        out += "\\\\";
        break;
      case '\n':
        out += "\\n";
        break;
      case '\t':
        out += "\\t";
        break;
      case '\r':
        out += "\\r";
        break;
      default:
        if (c < 0x20 || c == 0x7f) {
          char buf[8];
          std::snprintf(buf, sizeof buf, "\\u%04x", c);
          out += buf;
        } else {
          out += static_cast<char>(c);
        }
    }
  }
  return out + "\"";
}

std::string Num(double v) { return TomlNumber(v); }

// The first rule the profile breaks: the field's TOML key and the sentence; nullopt when none.
std::optional<RigProfile::Problem> ProblemOf(const RigProfile& p) {
  using Problem = RigProfile::Problem;
  auto finite = [](const std::optional<double>& v) { return !v || std::isfinite(*v); };
  if (p.name.empty()) return Problem{"name", "name must not be empty"};
  const RigLinkSettings& l = p.link;
  if (l.kind == LinkKind::kSerial) {
    if (l.device.empty()) {
      return Problem{"link.device", "link.device must name the serial device for kind \"serial\""};
    }
    if (std::find(kStandardBauds.begin(), kStandardBauds.end(), l.baud) == kStandardBauds.end()) {
      return Problem{"link.baud", "link.baud = " + std::to_string(l.baud) +
                                      " is not a standard rate (1200 ... 2000000, e.g. 9600, "
                                      "115200)"};
    }
  }
  if (l.kind == LinkKind::kTcp) {
    if (l.address.empty()) {
      return Problem{"link.address", "link.address must be HOST:PORT for kind \"tcp\""};
    }
    size_t colon = l.address.rfind(':');
    std::string host = colon == std::string::npos ? "" : l.address.substr(0, colon);
    std::string port = colon == std::string::npos ? "" : l.address.substr(colon + 1);
    bool digits =
        !port.empty() && port.size() <= 5 &&
        std::all_of(port.begin(), port.end(), [](char c) { return c >= '0' && c <= '9'; });
    int n = digits ? std::atoi(port.c_str()) : 0;
    if (host.empty() || host == "[]" || n < 1 || n > 65535) {
      return Problem{"link.address", "link.address = \"" + l.address +
                                         "\" must be HOST:PORT with a port from 1 to 65535"};
    }
  }
  if (!(std::isfinite(l.timeout_s) && l.timeout_s > 0)) {
    return Problem{"link.timeout_s", "link.timeout_s = " + Num(l.timeout_s) + " must be > 0"};
  }
  if (!(std::isfinite(p.sample_period_s) && p.sample_period_s > 0)) {
    return Problem{"sampling.period_s",
                   "sampling.period_s = " + Num(p.sample_period_s) + " must be > 0"};
  }
  if (!finite(p.actuator_min)) return Problem{"actuator.min", "actuator.min must be finite"};
  if (!finite(p.actuator_max)) return Problem{"actuator.max", "actuator.max must be finite"};
  if (p.actuator_min && p.actuator_max && !(*p.actuator_min < *p.actuator_max)) {
    return Problem{"actuator.max",
                   "actuator.max = " + Num(*p.actuator_max) +
                       " must be greater than actuator.min = " + Num(*p.actuator_min)};
  }
  if (!std::isfinite(p.actuator_safe) || (p.actuator_min && p.actuator_safe < *p.actuator_min) ||
      (p.actuator_max && p.actuator_safe > *p.actuator_max)) {
    return Problem{"actuator.safe", "actuator.safe = " + Num(p.actuator_safe) +
                                        " must lie within actuator.min ... actuator.max"};
  }
  if (!finite(p.output_min)) return Problem{"trip.output_min", "trip.output_min must be finite"};
  if (!finite(p.output_max)) return Problem{"trip.output_max", "trip.output_max must be finite"};
  if (p.output_min && p.output_max && !(*p.output_min < *p.output_max)) {
    return Problem{"trip.output_max",
                   "trip.output_max = " + Num(*p.output_max) +
                       " must be greater than trip.output_min = " + Num(*p.output_min)};
  }
  if (p.max_gain && !(std::isfinite(*p.max_gain) && *p.max_gain > 0)) {
    return Problem{"controller.max_gain",
                   "controller.max_gain = " + Num(*p.max_gain) + " must be > 0"};
  }
  const RigSpecDefaults& s = p.specs;
  auto positive = [&](const std::optional<double>& v, const char* key) -> std::optional<Problem> {
    if (v && !(std::isfinite(*v) && *v > 0)) {
      return Problem{key, std::string(key) + " = " + Num(*v) + " must be > 0"};
    }
    return std::nullopt;
  };
  if (auto e = positive(s.rise_max_s, "specs.rise_max_s")) return e;
  if (s.overshoot_max_percent &&
      !(*s.overshoot_max_percent > 0 && *s.overshoot_max_percent < 100)) {
    return Problem{"specs.overshoot_max_percent",
                   "specs.overshoot_max_percent = " + Num(*s.overshoot_max_percent) +
                       " must be between 0 and 100 (exclusive)"};
  }
  if (s.zeta_min && !(*s.zeta_min >= 0 && *s.zeta_min < 1)) {
    return Problem{"specs.zeta_min",
                   "specs.zeta_min = " + Num(*s.zeta_min) + " must satisfy 0 <= zeta_min < 1"};
  }
  if (auto e = positive(s.settle_max_s, "specs.settle_max_s")) return e;
  if (s.settle_band_percent != 1.0 && s.settle_band_percent != 2.0) {
    return Problem{"specs.settle_band_percent",
                   "specs.settle_band_percent = " + Num(s.settle_band_percent) + " must be 1 or 2"};
  }
  return std::nullopt;
}

// --- parsing ---

std::string Where(const std::string& source, const toml::source_region& r) {
  return source + ":" + std::to_string(r.begin.line) + ":" + std::to_string(r.begin.column);
}

class Reader {
 public:
  Reader(const std::string& source) : source_(source) {}

  [[noreturn]] void Fail(const toml::source_region& r, const std::string& what) const {
    throw DataError(Where(source_, r) + ": " + what);
  }

  // Every key of `table` must be in `allowed`; remembers each key's position as PREFIX.KEY.
  void CheckKeys(const toml::table& table, const std::string& prefix,
                 std::initializer_list<std::string_view> allowed) {
    for (auto&& [key, node] : table) {
      std::string full =
          prefix.empty() ? std::string(key.str()) : prefix + "." + std::string(key.str());
      if (std::find(allowed.begin(), allowed.end(), key.str()) == allowed.end()) {
        std::string list;
        for (auto a : allowed) list += (list.empty() ? "" : ", ") + std::string(a);
        Fail(key.source(), "unknown key '" + full + "' (expected one of: " + list + ")");
      }
      positions_[full] = node.source();
    }
  }

  const toml::table* Section(const toml::table& root, const char* name) {
    const toml::node* n = root.get(name);
    if (!n) return nullptr;
    if (!n->is_table())
      Fail(n->source(), std::string("'") + name + "' must be a table [" + name + "]");
    return n->as_table();
  }

  std::optional<double> Number(const toml::table* t, const std::string& full, const char* key) {
    if (!t) return std::nullopt;
    const toml::node* n = t->get(key);
    if (!n) return std::nullopt;
    if (n->is_integer()) return static_cast<double>(n->as_integer()->get());
    if (n->is_floating_point()) return n->as_floating_point()->get();
    Fail(n->source(), "'" + full + "' must be a number");
  }

  std::optional<std::string> Text(const toml::table* t, const std::string& full, const char* key) {
    if (!t) return std::nullopt;
    const toml::node* n = t->get(key);
    if (!n) return std::nullopt;
    if (!n->is_string()) Fail(n->source(), "'" + full + "' must be a string in quotes");
    return n->as_string()->get();
  }

  std::optional<int64_t> Integer(const toml::table* t, const std::string& full, const char* key) {
    if (!t) return std::nullopt;
    const toml::node* n = t->get(key);
    if (!n) return std::nullopt;
    if (!n->is_integer()) Fail(n->source(), "'" + full + "' must be a whole number");
    return n->as_integer()->get();
  }

  std::optional<toml::source_region> PositionOf(const std::string& full) const {
    auto it = positions_.find(full);
    if (it == positions_.end()) return std::nullopt;
    return it->second;
  }

 private:
  std::string source_;
  std::map<std::string, toml::source_region> positions_;
};

}  // namespace

std::string_view LinkKindName(LinkKind kind) {
  switch (kind) {
    case LinkKind::kSerial:
      return "serial";
    case LinkKind::kTcp:
      return "tcp";
    case LinkKind::kNone:
      break;
  }
  return "none";
}

std::string RigLinkSettings::Host() const {
  std::string host = address.substr(0, address.rfind(':'));
  if (host.size() >= 2 && host.front() == '[' && host.back() == ']') {
    host = host.substr(1, host.size() - 2);
  }
  return host;
}

int RigLinkSettings::Port() const { return std::atoi(address.substr(address.rfind(':') + 1).c_str()); }

std::optional<RigProfile::Problem> RigProfile::FirstProblem() const { return ProblemOf(*this); }

void RigProfile::Validate() const {
  if (auto problem = ProblemOf(*this)) throw UsageError(problem->sentence);
}

double RigProfile::ClipActuator(double v) const {
  if (actuator_min && v < *actuator_min) v = *actuator_min;
  if (actuator_max && v > *actuator_max) v = *actuator_max;
  return v;
}

bool RigProfile::OutputInsideTrip(double y) const {
  if (output_min && !(y >= *output_min)) return false;
  if (output_max && !(y <= *output_max)) return false;
  return true;
}

RigProfile ParseRigProfile(std::string_view toml_text, const std::string& source) {
  toml::table root;
  try {
    root = toml::parse(toml_text, source);
  } catch (const toml::parse_error& e) {
    throw DataError(Where(source, e.source()) +
                    ": not valid TOML: " + std::string(e.description()));
  }
  Reader r(source);
  r.CheckKeys(root, "", {"name", "link", "sampling", "actuator", "trip", "controller", "specs"});
  const toml::table* link = r.Section(root, "link");
  const toml::table* sampling = r.Section(root, "sampling");
  const toml::table* actuator = r.Section(root, "actuator");
  const toml::table* trip = r.Section(root, "trip");
  const toml::table* controller = r.Section(root, "controller");
  const toml::table* specs = r.Section(root, "specs");
  if (link) r.CheckKeys(*link, "link", {"kind", "device", "baud", "address", "timeout_s"});
  if (sampling) r.CheckKeys(*sampling, "sampling", {"period_s"});
  if (actuator) r.CheckKeys(*actuator, "actuator", {"min", "max", "safe", "unit"});
  if (trip) r.CheckKeys(*trip, "trip", {"output_min", "output_max", "unit"});
  if (controller) r.CheckKeys(*controller, "controller", {"max_gain"});
  if (specs) {
    r.CheckKeys(
        *specs, "specs",
        {"rise_max_s", "overshoot_max_percent", "zeta_min", "settle_max_s", "settle_band_percent"});
  }

  RigProfile p;
  const toml::node* name = root.get("name");
  if (!name) {
    throw DataError(source + ":1:1: the profile needs a rig name: name = \"...\"");
  }
  p.name = *r.Text(&root, "name", "name");
  if (auto kind = r.Text(link, "link.kind", "kind")) {
    if (*kind == "serial") {
      p.link.kind = LinkKind::kSerial;
    } else if (*kind == "tcp") {
      p.link.kind = LinkKind::kTcp;
    } else if (*kind == "none") {
      p.link.kind = LinkKind::kNone;
    } else {
      r.Fail(*r.PositionOf("link.kind"),
             "link.kind = \"" + *kind + "\" must be \"serial\", \"tcp\" or \"none\"");
    }
  }
  p.link.device = r.Text(link, "link.device", "device").value_or("");
  if (auto baud = r.Integer(link, "link.baud", "baud")) {
    if (*baud < 1 || *baud > 100000000) {
      r.Fail(*r.PositionOf("link.baud"), "link.baud = " + std::to_string(*baud) +
                                             " is not a standard rate (e.g. 9600, 115200)");
    }
    p.link.baud = static_cast<int>(*baud);
  }
  p.link.address = r.Text(link, "link.address", "address").value_or("");
  p.link.timeout_s = r.Number(link, "link.timeout_s", "timeout_s").value_or(p.link.timeout_s);
  p.sample_period_s =
      r.Number(sampling, "sampling.period_s", "period_s").value_or(p.sample_period_s);
  p.actuator_min = r.Number(actuator, "actuator.min", "min");
  p.actuator_max = r.Number(actuator, "actuator.max", "max");
  // Without an explicit safe value the rig rests at 0 clipped into the actuator range.
  p.actuator_safe = r.Number(actuator, "actuator.safe", "safe").value_or(p.ClipActuator(0.0));
  p.actuator_unit = r.Text(actuator, "actuator.unit", "unit").value_or("");
  p.output_min = r.Number(trip, "trip.output_min", "output_min");
  p.output_max = r.Number(trip, "trip.output_max", "output_max");
  p.output_unit = r.Text(trip, "trip.unit", "unit").value_or("");
  p.max_gain = r.Number(controller, "controller.max_gain", "max_gain");
  p.specs.rise_max_s = r.Number(specs, "specs.rise_max_s", "rise_max_s");
  p.specs.overshoot_max_percent =
      r.Number(specs, "specs.overshoot_max_percent", "overshoot_max_percent");
  p.specs.zeta_min = r.Number(specs, "specs.zeta_min", "zeta_min");
  p.specs.settle_max_s = r.Number(specs, "specs.settle_max_s", "settle_max_s");
  p.specs.settle_band_percent = r.Number(specs, "specs.settle_band_percent", "settle_band_percent")
                                    .value_or(p.specs.settle_band_percent);

  if (auto problem = ProblemOf(p)) {
    auto pos = r.PositionOf(problem->key);
    // A rule broken by a missing key (a serial link without a device) points at its table.
    if (!pos) pos = r.PositionOf(problem->key.substr(0, problem->key.find('.')));
    std::string where = pos ? Where(source, *pos) : source + ":1:1";
    throw DataError(where + ": " + problem->sentence);
  }
  return p;
}

RigProfile ReadRigProfile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw DataError("cannot read '" + path + "': " + std::strerror(errno));
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) throw DataError("cannot read '" + path + "': read failed");
  return ParseRigProfile(text.str(), path);
}

std::string RigProfileToml(const RigProfile& p) {
  std::ostringstream o;
  auto opt = [&](const char* key, const std::optional<double>& v, const char* note) {
    if (v) {
      o << key << " = " << TomlNumber(*v) << "  # " << note << "\n";
    } else {
      o << "# " << key << " = ...  # " << note << " (not set)\n";
    }
  };
  o << "# loopwright rig profile (keys and rules: README.md, \"Rig workspace\").\n";
  o << "name = " << TomlString(p.name) << "\n\n";
  o << "[link]\n";
  o << "kind = " << TomlString(LinkKindName(p.link.kind))
    << "  # \"serial\", \"tcp\" or \"none\"\n";
  o << "device = " << TomlString(p.link.device) << "  # serial device path\n";
  o << "baud = " << p.link.baud << "  # serial bits per second\n";
  o << "address = " << TomlString(p.link.address) << "  # tcp HOST:PORT\n";
  o << "timeout_s = " << TomlNumber(p.link.timeout_s) << "  # seconds without an answer, > 0\n\n";
  o << "[sampling]\n";
  o << "period_s = " << TomlNumber(p.sample_period_s) << "  # sample period in seconds, > 0\n\n";
  o << "[actuator]\n";
  opt("min", p.actuator_min, "lowest command");
  opt("max", p.actuator_max, "highest command, > min");
  o << "safe = " << TomlNumber(p.actuator_safe) << "  # sent on any stop, within min ... max\n";
  o << "unit = " << TomlString(p.actuator_unit) << "\n\n";
  o << "[trip]\n";
  opt("output_min", p.output_min, "a run stops below this output");
  opt("output_max", p.output_max, "a run stops above this output, > output_min");
  o << "unit = " << TomlString(p.output_unit) << "\n\n";
  o << "[controller]\n";
  opt("max_gain", p.max_gain, "largest gain ever applied, > 0");
  o << "\n[specs]\n";
  opt("rise_max_s", p.specs.rise_max_s, "10-90 % rise time in s, > 0");
  opt("overshoot_max_percent", p.specs.overshoot_max_percent, "0 < P < 100");
  opt("zeta_min", p.specs.zeta_min, "0 <= Z < 1");
  opt("settle_max_s", p.specs.settle_max_s, "settling time in s, > 0");
  o << "settle_band_percent = " << TomlNumber(p.specs.settle_band_percent) << "  # 1 or 2\n";
  return o.str();
}

}  // namespace lw
