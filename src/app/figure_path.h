// Figure file names on the command line (`--plot FILE`): checked before any work is done, so a
// bad extension leaves nothing behind, and sibling names for commands that draw two figures.
#ifndef LOOPWRIGHT_APP_FIGURE_PATH_H_
#define LOOPWRIGHT_APP_FIGURE_PATH_H_

#include <string>

namespace lw::app {

// Throws UsageError naming the option when `path` does not end in .svg, .png or .pdf
// (case-insensitive, io/figure.h FigureFormatOf).
void CheckFigurePath(const std::string& option, const std::string& path);

// `path` with `-suffix` before its extension: ("dir/zone.svg", "metrics") ->
// "dir/zone-metrics.svg".
std::string SiblingFigurePath(const std::string& path, const std::string& suffix);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_FIGURE_PATH_H_
