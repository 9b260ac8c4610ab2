#include "identify/model_structure.h"

#include <cmath>
#include <numeric>
#include <sstream>

#include "lti/error.h"

namespace lw {

const std::vector<Structure>& AllStructures() {
  static const std::vector<Structure> all = {Structure::kFopdt, Structure::kSopdt,
                                             Structure::kUnderdamped, Structure::kIntegrating,
                                             Structure::kSopdtZero};
  return all;
}

std::string_view StructureName(Structure s) {
  switch (s) {
    case Structure::kFopdt:
      return "fopdt";
    case Structure::kSopdt:
      return "sopdt";
    case Structure::kUnderdamped:
      return "underdamped";
    case Structure::kIntegrating:
      return "integrating";
    case Structure::kSopdtZero:
      return "sopdt-zero";
  }
  return "?";
}

namespace {

// "fopdt, sopdt, underdamped, integrating, sopdt-zero", from AllStructures().
std::string NameList() {
  std::string list;
  for (Structure s : AllStructures())
    list += (list.empty() ? "" : ", ") + std::string(StructureName(s));
  return list;
}

bool Known(std::string_view name, Structure* found) {
  for (Structure s : AllStructures()) {
    if (StructureName(s) != name) continue;
    if (found) *found = s;
    return true;
  }
  return false;
}

}  // namespace

Structure ParseStructure(std::string_view name) {
  Structure s{};
  if (Known(name, &s)) return s;
  throw UsageError("structure '" + std::string(name) + "': expected one of " + NameList());
}

void CheckStructureChoice(std::string_view name) {
  if (name == "auto" || Known(name, nullptr)) return;
  throw UsageError("structure '" + std::string(name) + "': expected auto or one of " + NameList());
}

std::vector<std::string> ParameterNames(Structure s) {
  switch (s) {
    case Structure::kFopdt:
      return {"gain", "time_constant", "dead_time"};
    case Structure::kSopdt:
      return {"gain", "time_constant_1", "time_constant_2", "dead_time"};
    case Structure::kUnderdamped:
      return {"gain", "damping_ratio", "natural_frequency", "dead_time"};
    case Structure::kIntegrating:
      return {"gain", "time_constant", "dead_time"};
    case Structure::kSopdtZero:
      return {"gain", "time_constant_1", "time_constant_2", "zero_time_constant", "dead_time"};
  }
  return {};
}

ParameterRange PhysicalRange(std::string_view name) {
  ParameterRange r;
  if (name == "dead_time" || name == "time_constant" || name == "time_constant_1" ||
      name == "time_constant_2" || name == "natural_frequency") {
    r.lo = 0.0;
  } else if (name == "damping_ratio") {
    r.lo = 0.0;
    r.hi = 1.0;
  }
  return r;
}

std::vector<ParameterInfo> ParameterInfos(Structure s, std::string_view input_unit,
                                          std::string_view output_unit) {
  std::string in = input_unit.empty() ? "input" : std::string(input_unit);
  std::string out = output_unit.empty() ? "output" : std::string(output_unit);
  std::vector<ParameterInfo> infos;
  for (const std::string& name : ParameterNames(s)) {
    std::string unit = "s";
    if (name == "gain") {
      unit = s == Structure::kIntegrating ? out + "/(" + in + "*s)" : out + "/" + in;
    } else if (name == "damping_ratio") {
      unit = "-";
    } else if (name == "natural_frequency") {
      unit = "rad/s";
    }
    infos.push_back({name, unit});
  }
  return infos;
}

int ParameterCount(Structure s) {
  switch (s) {
    case Structure::kFopdt:
    case Structure::kIntegrating:
      return 3;
    case Structure::kSopdt:
    case Structure::kUnderdamped:
      return 4;
    case Structure::kSopdtZero:
      return 5;
  }
  return 0;
}

int DeadTimeIndex(Structure s) { return ParameterCount(s) - 1; }

bool IsPhysical(Structure s, std::span<const double> p) {
  if (static_cast<int>(p.size()) != ParameterCount(s)) return false;
  for (double v : p) {
    if (!std::isfinite(v)) return false;
  }
  if (p.back() < 0.0) return false;  // dead time
  switch (s) {
    case Structure::kFopdt:
    case Structure::kIntegrating:
      return p[1] > 0.0;
    case Structure::kSopdt:
    case Structure::kSopdtZero:
      return p[1] > 0.0 && p[2] > 0.0;
    case Structure::kUnderdamped:
      return p[1] > 0.0 && p[1] <= 1.0 && p[2] > 0.0;
  }
  return false;
}

TransferFunction StructureTransferFunction(Structure s, std::span<const double> p) {
  if (!IsPhysical(s, p)) {
    std::ostringstream msg;
    msg << "parameters for structure " << StructureName(s) << ": expected " << ParameterCount(s)
        << " finite physical values (time constants > 0, 0 < zeta <= 1, "
        << "wn > 0, dead time >= 0), got " << p.size() << " values";
    for (size_t i = 0; i < p.size(); ++i) msg << (i ? ", " : " (") << p[i];
    if (!p.empty()) msg << ")";
    throw UsageError(msg.str());
  }
  const double k = p[0];
  const double delay = p.back();
  switch (s) {
    case Structure::kFopdt:
      return TransferFunction({k}, {p[1], 1.0}, delay);
    case Structure::kSopdt:
      return TransferFunction({k}, {p[1] * p[2], p[1] + p[2], 1.0}, delay);
    case Structure::kUnderdamped:
      return TransferFunction({k * p[2] * p[2]}, {1.0, 2.0 * p[1] * p[2], p[2] * p[2]}, delay);
    case Structure::kIntegrating:
      return TransferFunction({k}, {p[1], 1.0, 0.0}, delay);
    case Structure::kSopdtZero:
      return TransferFunction({k * p[3], k}, {p[1] * p[2], p[1] + p[2], 1.0}, delay);
  }
  return TransferFunction();
}

TransferFunction StructureTransferFunction(std::string_view structure,
                                           std::span<const double> params) {
  return StructureTransferFunction(ParseStructure(structure), params);
}

std::vector<int> Canonicalize(Structure s, std::span<double> p) {
  std::vector<int> perm(p.size());
  std::iota(perm.begin(), perm.end(), 0);
  if ((s == Structure::kSopdt || s == Structure::kSopdtZero) && p.size() >= 3 && p[1] < p[2]) {
    std::swap(p[1], p[2]);
    std::swap(perm[1], perm[2]);
  }
  return perm;
}

}  // namespace lw
