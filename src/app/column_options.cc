#include "app/column_options.h"

namespace lw::app {

void ColumnOptions::Add(CLI::App& sub, ColumnSet which) {
  const char* group = "Columns (a header name or a 1-based index)";
  sub.add_option("--time", names_.time, "Time column")->capture_default_str()->group(group);
  if (which.input) {
    sub.add_option("--input", names_.input, "Input (actuator) column")
        ->capture_default_str()
        ->group(group);
  }
  if (which.output) {
    sub.add_option("--output", names_.output, "Output (measurement) column")
        ->capture_default_str()
        ->group(group);
  }
  if (which.reference) {
    sub.add_option("--reference", names_.reference, "Reference (set-point) column")
        ->capture_default_str()
        ->group(group);
  }
  sub.add_option("--time-unit", names_.time_unit, "Unit of the time column")
      ->capture_default_str()
      ->check(CLI::IsMember({"s", "ms", "us"}))
      ->group(group);
}

const ColumnNames& ColumnOptions::names() const {
  names_.Validate();
  return names_;
}

}  // namespace lw::app
