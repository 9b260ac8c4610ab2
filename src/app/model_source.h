// Where a command gets its plant from: a model file written by `loopwright fit` (MODEL.json) or a
// plant formula typed on the command line (`--plant FORMULA`, syntax in lti/plant_formula.h).
// Exactly one of the two must be given.
//
//   ModelSource source;                       // a member of the command
//   source.Add(sub);                          // in Configure(): MODEL.json positional + --plant
//   LoadedModel m = source.Load();            // in Run()
//
// Load() throws UsageError when neither or both are given and FormulaError (a UsageError, exit 2)
// for a bad formula; ReadModelFile's DataError (exit 3) for a bad model file passes through.
#ifndef LOOPWRIGHT_APP_MODEL_SOURCE_H_
#define LOOPWRIGHT_APP_MODEL_SOURCE_H_

#include <optional>
#include <string>

#include <CLI/CLI.hpp>

#include "io/model_file.h"
#include "lti/transfer_function.h"

namespace lw::app {

struct LoadedModel {
  TransferFunction tf;
  // The whole document (structure, parameters, covariance, provenance) when read from a file.
  std::optional<ModelDocument> model;
  // One phrase for the user and for provenance lines, e.g. "model file 'zone3.json' (fopdt)" or
  // "plant formula '2*exp(-1*s)/(5*s+1)'".
  std::string description;
};

// Reads a model file as ModelSource::Load() does for one (for commands whose positionals hold
// more than the model file). ReadModelFile's DataError passes through.
LoadedModel LoadModelFile(const std::string& path);

class ModelSource {
 public:
  // How the model file is named on the command line.
  enum class FileSpelling {
    kPositional,  // `cmd MODEL.json ...`
    kOption,      // `cmd --model MODEL.json ...`
    kBoth,        // either spelling (not both at once)
  };

  // Adds the model-file spelling(s) and --plant to sub. Call once, in Configure().
  void Add(CLI::App& sub, FileSpelling spelling = FileSpelling::kPositional);

  bool has_file() const { return !file_.empty() || !file_option_.empty(); }
  bool has_formula() const { return !formula_.empty(); }

  // Reads the model file or parses the formula (see the file comment for the errors).
  LoadedModel Load() const;

 private:
  std::string file_;         // positional
  std::string file_option_;  // --model
  std::string formula_;      // --plant
};

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_MODEL_SOURCE_H_
