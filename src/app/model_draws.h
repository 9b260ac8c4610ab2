// Plausible plants for band and predict: parameter draws (identify/parameter_draws.h, the one
// way of drawing in the project) from the covariance a fitted model file carries.
#ifndef LOOPWRIGHT_APP_MODEL_DRAWS_H_
#define LOOPWRIGHT_APP_MODEL_DRAWS_H_

#include <cstdint>
#include <string>
#include <vector>

#include "app/model_source.h"
#include "lti/transfer_function.h"

namespace lw::app {

struct ModelDraws {
  std::vector<TransferFunction> plants;  // empty when there is nothing to draw from
  // One phrase for the user: why there are no draws, or how many unphysical draws were redrawn
  // ("12 of 512 draws broke the structure's physical rules and were drawn again"); may be empty.
  std::string note;
};

// `count` draws seeded with `seed` when the model came from a file with a covariance; otherwise
// no plants and a note saying why. A covariance DrawParameters refuses (UsageError) also gives
// no plants, with its sentence in the note: the nominal results stay usable.
ModelDraws DrawModelPlants(const LoadedModel& model, size_t count, uint64_t seed);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_MODEL_DRAWS_H_
