#include "app/model_source.h"

#include "lti/error.h"
#include "lti/plant_formula.h"

namespace lw::app {

void ModelSource::Add(CLI::App& sub, FileSpelling spelling) {
  CLI::Option* positional = nullptr;
  CLI::Option* option = nullptr;
  if (spelling != FileSpelling::kOption) {
    positional = sub.add_option("MODEL.json", file_,
                                "Model file written by `loopwright fit -o` (or give --plant)");
  }
  if (spelling != FileSpelling::kPositional) {
    option = sub.add_option("--model", file_option_,
                            "Model file written by `loopwright fit -o` (or give --plant)");
  }
  CLI::Option* plant = sub.add_option(
      "--plant", formula_,
      "Plant as a formula in s, e.g. '2.5*exp(-0.3*s)/((4*s+1)*(0.6*s+1))' (or give a model "
      "file)");
  for (CLI::Option* file : {positional, option}) {
    if (file != nullptr) file->excludes(plant);
  }
  if (positional != nullptr && option != nullptr) positional->excludes(option);
}

LoadedModel ModelSource::Load() const {
  const std::string& file = file_.empty() ? file_option_ : file_;
  if (file.empty() && formula_.empty()) {
    throw UsageError("no plant given: name a model file or give --plant FORMULA");
  }
  if (!file.empty() && !formula_.empty()) {
    throw UsageError("give either a model file or --plant FORMULA, not both");
  }
  LoadedModel loaded;
  if (!formula_.empty()) {
    loaded.tf = ParsePlantFormula(formula_);
    loaded.description = "plant formula '" + formula_ + "'";
    return loaded;
  }
  return LoadModelFile(file);
}

LoadedModel LoadModelFile(const std::string& file) {
  LoadedModel loaded;
  ModelDocument doc = ReadModelFile(file);
  loaded.tf = doc.tf;
  loaded.description = "model file '" + file + "'";
  if (!doc.structure.empty()) loaded.description += " (" + doc.structure + ")";
  loaded.model = std::move(doc);
  return loaded;
}

}  // namespace lw::app
