#include "app/model_draws.h"

#include "identify/model_structure.h"
#include "identify/parameter_draws.h"
#include "lti/error.h"

namespace lw::app {

ModelDraws DrawModelPlants(const LoadedModel& model, size_t count, uint64_t seed) {
  ModelDraws out;
  if (!model.model) {
    out.note = "a plant formula has no covariance, so there are no parameter draws";
    return out;
  }
  const ModelDocument& doc = *model.model;
  if (doc.covariance.size() == 0) {
    out.note = "the model file has no covariance, so there are no parameter draws";
    return out;
  }
  std::vector<double> mean;
  for (const auto& p : doc.parameters) mean.push_back(p.value);
  try {
    ParameterDraws d =
        DrawParameters(ParseStructure(doc.structure), mean, doc.covariance, count, seed);
    out.plants = std::move(d.plants);
    if (d.rejected > 0) {
      out.note = std::to_string(d.rejected) + " of " + std::to_string(d.rejected + count) +
                 " draws broke the structure's physical rules and were drawn again";
    }
  } catch (const UsageError& e) {
    out.note = std::string("no parameter draws: ") + e.what();
  }
  return out;
}

}  // namespace lw::app
