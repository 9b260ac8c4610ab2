// See model_file.h.
#include "io/model_file.h"

#include <cmath>
#include <ctime>
#include <fstream>
#include <limits>
#include <sstream>

#include "io/atomic_file.h"
#include "lti/error.h"

namespace lw {
namespace {

using nlohmann::json;

constexpr const char* kFormat = "loopwright-model";

// A double that may not be finite: NaN as null, infinities as "inf" / "-inf".
json Number(double v) {
  if (std::isnan(v)) return nullptr;
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  return v;
}

// Reads documents with messages naming `where` and the field.
class Reader {
 public:
  explicit Reader(const std::string& where) : where_(where) {}

  [[noreturn]] void Fail(const std::string& field, const std::string& rule) const {
    throw DataError(where_ + ": field '" + field + "' " + rule);
  }

  const json& Member(const json& object, const std::string& field, const char* key) const {
    const auto it = object.find(key);
    if (it == object.end()) Fail(field, "is missing");
    return *it;
  }

  std::string String(const json& object, const std::string& prefix, const char* key) const {
    const json& v = Member(object, prefix + key, key);
    if (!v.is_string()) Fail(prefix + key, "must be a string");
    return v.get<std::string>();
  }

  const json& Object(const json& object, const std::string& field, const char* key) const {
    const json& v = Member(object, field, key);
    if (!v.is_object()) Fail(field, "must be an object");
    return v;
  }

  double Finite(const json& v, const std::string& field) const {
    if (!v.is_number()) Fail(field, "must be a finite number");
    const double d = v.get<double>();
    if (!std::isfinite(d)) Fail(field, "must be a finite number");
    return d;
  }

  // A number, null (NaN) or "inf" / "-inf".
  double AnyNumber(const json& v, const std::string& field) const {
    if (v.is_number()) return v.get<double>();
    if (v.is_null()) return std::numeric_limits<double>::quiet_NaN();
    if (v.is_string() && v.get<std::string>() == "inf")
      return std::numeric_limits<double>::infinity();
    if (v.is_string() && v.get<std::string>() == "-inf")
      return -std::numeric_limits<double>::infinity();
    Fail(field, "must be a number, null, \"inf\" or \"-inf\"");
  }

  std::vector<double> FiniteArray(const json& v, const std::string& field) const {
    const std::string rule = "must be a non-empty array of finite numbers";
    if (!v.is_array() || v.empty()) Fail(field, rule);
    std::vector<double> out;
    for (const json& e : v) {
      if (!e.is_number() || !std::isfinite(e.get<double>())) Fail(field, rule);
      out.push_back(e.get<double>());
    }
    return out;
  }

 private:
  const std::string& where_;
};

}  // namespace

json ModelToJson(const ModelDocument& model) {
  const size_t n = model.parameters.size();
  const bool has_cov = model.covariance.size() > 0;
  if (has_cov && (static_cast<size_t>(model.covariance.rows()) != n ||
                  static_cast<size_t>(model.covariance.cols()) != n))
    throw UsageError("model covariance is " + std::to_string(model.covariance.rows()) + " x " +
                     std::to_string(model.covariance.cols()) + ": it must be empty or " +
                     std::to_string(n) + " x " + std::to_string(n) + " (one per parameter)");
  json doc = json::object();
  doc["format"] = kFormat;
  doc["version"] = kModelFileVersion;
  doc["structure"] = model.structure;
  doc["tf"] = {{"num", model.tf.num().coefficients()},
               {"den", model.tf.den().coefficients()},
               {"delay", model.tf.delay()}};
  if (model.tf.num().is_zero()) doc["tf"]["num"] = json::array({0.0});
  json params = json::array();
  for (const ModelParameter& p : model.parameters) {
    if (p.name.empty())
      throw UsageError("model parameter " + std::to_string(params.size() + 1) +
                       " has an empty name");
    params.push_back({{"name", p.name},
                      {"value", Number(p.value)},
                      {"ci95", json::array({Number(p.ci_low), Number(p.ci_high)})},
                      {"unit", p.unit}});
  }
  doc["parameters"] = std::move(params);
  if (has_cov) {
    json rows = json::array();
    for (Eigen::Index i = 0; i < model.covariance.rows(); ++i) {
      json row = json::array();
      for (Eigen::Index j = 0; j < model.covariance.cols(); ++j)
        row.push_back(Number(model.covariance(i, j)));
      rows.push_back(std::move(row));
    }
    doc["covariance"] = std::move(rows);
  } else {
    doc["covariance"] = nullptr;
  }
  const Provenance& pv = model.provenance;
  doc["provenance"] = {{"source", pv.source},
                       {"source_sha256", pv.source_sha256},
                       {"created", pv.created},
                       {"tool", pv.tool},
                       {"command_line", pv.command_line}};
  doc["details"] = model.details;
  return doc;
}

ModelDocument ModelFromJson(const json& doc, const std::string& where) {
  const Reader r(where);
  if (!doc.is_object()) throw DataError(where + ": a model file must be a JSON object");
  const auto format = doc.find("format");
  if (format == doc.end() || !format->is_string() || format->get<std::string>() != kFormat)
    throw DataError(where + ": not a loopwright model file (field 'format' must be \"" + kFormat +
                    "\")");
  const json& version = r.Member(doc, "version", "version");
  if (!version.is_number_integer() || version.get<long long>() < 1)
    r.Fail("version", "must be a positive integer");
  if (version.get<long long>() > kModelFileVersion)
    throw DataError(where + ": model file version " + std::to_string(version.get<long long>()) +
                    " is newer than this loopwright reads (" + std::to_string(kModelFileVersion) +
                    ")");

  ModelDocument m;
  m.structure = r.String(doc, "", "structure");

  const json& tf = r.Object(doc, "tf", "tf");
  std::vector<double> num = r.FiniteArray(r.Member(tf, "tf.num", "num"), "tf.num");
  std::vector<double> den = r.FiniteArray(r.Member(tf, "tf.den", "den"), "tf.den");
  const double delay = r.Finite(r.Member(tf, "tf.delay", "delay"), "tf.delay");
  if (delay < 0) r.Fail("tf.delay", "must not be negative");
  if (std::all_of(den.begin(), den.end(), [](double c) { return c == 0.0; }))
    r.Fail("tf.den", "must not be the zero polynomial");
  try {
    m.tf = TransferFunction(std::move(num), std::move(den), delay);
  } catch (const UsageError& e) {
    throw DataError(where + ": field 'tf' is not a valid transfer function (" + e.what() + ")");
  }

  const json& params = r.Member(doc, "parameters", "parameters");
  if (!params.is_array()) r.Fail("parameters", "must be an array");
  for (size_t i = 0; i < params.size(); ++i) {
    const std::string field = "parameters[" + std::to_string(i) + "].";
    const json& p = params[i];
    if (!p.is_object()) r.Fail("parameters[" + std::to_string(i) + "]", "must be an object");
    ModelParameter mp;
    mp.name = r.String(p, field, "name");
    if (mp.name.empty()) r.Fail(field + "name", "must not be empty");
    mp.value = r.AnyNumber(r.Member(p, field + "value", "value"), field + "value");
    const json& ci = r.Member(p, field + "ci95", "ci95");
    if (!ci.is_array() || ci.size() != 2) r.Fail(field + "ci95", "must be an array [low, high]");
    mp.ci_low = r.AnyNumber(ci[0], field + "ci95");
    mp.ci_high = r.AnyNumber(ci[1], field + "ci95");
    mp.unit = r.String(p, field, "unit");
    m.parameters.push_back(std::move(mp));
  }

  const json& cov = r.Member(doc, "covariance", "covariance");
  const size_t n = m.parameters.size();
  if (!cov.is_null()) {
    const std::string rule = "must be null or a " + std::to_string(n) + " x " + std::to_string(n) +
                             " array of arrays (one per parameter)";
    if (!cov.is_array() || cov.size() != n || n == 0) r.Fail("covariance", rule);
    m.covariance.resize(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n));
    for (size_t i = 0; i < n; ++i) {
      if (!cov[i].is_array() || cov[i].size() != n) r.Fail("covariance", rule);
      for (size_t j = 0; j < n; ++j)
        m.covariance(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) =
            r.AnyNumber(cov[i][j], "covariance");
    }
  }

  const json& pv = r.Object(doc, "provenance", "provenance");
  m.provenance.source = r.String(pv, "provenance.", "source");
  m.provenance.source_sha256 = r.String(pv, "provenance.", "source_sha256");
  m.provenance.created = r.String(pv, "provenance.", "created");
  m.provenance.tool = r.String(pv, "provenance.", "tool");
  m.provenance.command_line = r.String(pv, "provenance.", "command_line");
  const auto details = doc.find("details");
  if (details != doc.end()) m.details = *details;
  return m;
}

void WriteModelFile(const std::string& path, const ModelDocument& model) {
  WriteFileAtomically(path, ModelToJson(model).dump(2) + "\n");
}

ModelDocument ReadModelFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw DataError("cannot read '" + path + "': " + std::strerror(errno));
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) throw DataError("cannot read '" + path + "': read error");
  json doc;
  try {
    doc = json::parse(text.str());
  } catch (const json::parse_error& e) {
    throw DataError(path + ": not valid JSON (" + e.what() + ")");
  }
  return ModelFromJson(doc, path);
}

std::string NowUtcIso8601() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  gmtime_r(&now, &utc);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return buf;
}

}  // namespace lw
