// libFuzzer target for the plant formula parser (lti/plant_formula.h). Any input must either
// give a transfer function or throw an lw::Error; anything else is a bug. A parsed transfer
// function's text form must parse again (the parser reads back what ToString writes).
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

#include "lti/error.h"
#include "lti/plant_formula.h"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  if (size > 4096) return 0;  // formulas are short; keep runs fast
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  lw::TransferFunction g;
  try {
    g = lw::ParsePlantFormula(text);
  } catch (const lw::Error&) {
    return 0;
  }
  if (!(g.delay() >= 0.0) || !std::isfinite(g.delay())) std::abort();
  if (g.den().is_zero()) std::abort();
  try {
    const lw::TransferFunction again = lw::ParsePlantFormula(g.ToString());
    if (again.delay() != g.delay()) std::abort();
    if (again.den().degree() != g.den().degree()) std::abort();
  } catch (const lw::Error&) {
    std::abort();  // our own text form must read back
  }
  return 0;
}
