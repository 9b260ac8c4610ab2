// The column options every command that reads a recording offers, bound to io's ColumnNames:
//   --time C  --input C  --output C  --reference C   a column's header name or 1-based index
//   --time-unit s|ms|us                               unit of the time column (converted to s)
// Defaults t, u, y, r and s (io/recording.h). A command adds only the columns it reads.
#ifndef LOOPWRIGHT_APP_COLUMN_OPTIONS_H_
#define LOOPWRIGHT_APP_COLUMN_OPTIONS_H_

#include <CLI/CLI.hpp>

#include "io/recording.h"

namespace lw::app {

struct ColumnSet {
  bool input = true;
  bool output = true;
  bool reference = false;
};

class ColumnOptions {
 public:
  // Adds --time, --time-unit and the columns chosen in `which` to sub. Call once, in Configure().
  void Add(CLI::App& sub, ColumnSet which = {});
  // The names after parsing, validated (throws UsageError naming the field otherwise).
  const ColumnNames& names() const;

 private:
  ColumnNames names_;
};

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_COLUMN_OPTIONS_H_
