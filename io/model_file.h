// Model files: a fitted plant and how it was obtained, as a JSON document of loopwright's own.
//
//   {
//     "format": "loopwright-model",          always this string
//     "version": 1,                          the format version; newer versions are refused
//     "structure": "first order + dead time", free text naming the fitted structure
//     "tf": {"num": [...], "den": [...], "delay": T},
//                                            G(s) = num(s)/den(s) exp(-T s), descending powers of
//                                            s (den monic as TransferFunction keeps it), T in s
//     "parameters": [{"name": "K", "value": 2.1, "ci95": [1.9, 2.3], "unit": ""}, ...],
//     "covariance": [[...], ...] or null,    parameters.size() square, same order as parameters
//     "provenance": {"source": "run.csv", "source_sha256": "<64 hex>",
//                    "created": "2026-12-01T22:40:00Z", "tool": "loopwright 0.1.0",
//                    "command_line": "..."},
//     "details": {...}                       fit statistics etc., stored verbatim
//   }
// Numbers round-trip exactly: nlohmann-json prints doubles in the shortest form that reads back
// to the same value. A value that is not finite (an unknown confidence bound, say) is written as
// null for NaN and as the strings "inf" / "-inf" for infinities, and read back the same way. The
// transfer function's coefficients and delay must be finite.
#ifndef LOOPWRIGHT_IO_MODEL_FILE_H_
#define LOOPWRIGHT_IO_MODEL_FILE_H_

#include <string>
#include <vector>

#include <Eigen/Core>
#include <nlohmann/json.hpp>

#include "lti/transfer_function.h"

namespace lw {

inline constexpr int kModelFileVersion = 1;

struct ModelParameter {
  std::string name;
  double value = 0.0;
  double ci_low = 0.0;  // 95 % confidence interval, in the parameter's unit
  double ci_high = 0.0;
  std::string unit;  // e.g. "s", "" for a dimensionless or plant-unit gain
};

struct Provenance {
  std::string source;         // the recording the model came from, as given
  std::string source_sha256;  // its SHA-256 (sha256.h), empty when there is no file
  std::string created;        // ISO-8601 UTC, e.g. 2026-12-01T22:40:00Z (NowUtcIso8601)
  std::string tool;           // e.g. "loopwright 0.1.0"
  std::string command_line;
};

struct ModelDocument {
  std::string structure;
  TransferFunction tf;
  std::vector<ModelParameter> parameters;
  Eigen::MatrixXd covariance;  // parameters.size() square, or empty (0 x 0)
  Provenance provenance;
  nlohmann::json details;  // stored verbatim
};

// The document above. Throws UsageError when covariance is neither empty nor
// parameters.size() square, or a parameter has an empty name.
nlohmann::json ModelToJson(const ModelDocument& model);

// Reads a document; `where` (usually the file path) starts every message. Throws DataError naming
// the field, e.g. "fit.json: field 'tf.den' must be a non-empty array of finite numbers".
ModelDocument ModelFromJson(const nlohmann::json& doc, const std::string& where);

// Writes ModelToJson(model) with two-space indentation, atomically (atomic_file.h).
void WriteModelFile(const std::string& path, const ModelDocument& model);

// Reads and checks a model file. DataError when it cannot be read, is not JSON, or a field is
// wrong (messages as ModelFromJson, plus "fit.json: not valid JSON (<parser message>)").
ModelDocument ReadModelFile(const std::string& path);

// The current time as ISO-8601 UTC with seconds, e.g. "2026-12-01T22:40:00Z".
std::string NowUtcIso8601();

}  // namespace lw

#endif  // LOOPWRIGHT_IO_MODEL_FILE_H_
