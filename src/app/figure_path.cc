#include "app/figure_path.h"

#include "io/figure.h"
#include "lti/error.h"

namespace lw::app {

void CheckFigurePath(const std::string& option, const std::string& path) {
  try {
    FigureFormatOf(path);
  } catch (const UsageError&) {
    throw UsageError(option + " '" + path +
                     "': a figure file must end in .svg, .png or .pdf; nothing was written");
  }
}

std::string SiblingFigurePath(const std::string& path, const std::string& suffix) {
  size_t slash = path.find_last_of('/');
  size_t dot = path.find_last_of('.');
  if (dot == std::string::npos || (slash != std::string::npos && dot < slash)) {
    return path + "-" + suffix;
  }
  return path.substr(0, dot) + "-" + suffix + path.substr(dot);
}

}  // namespace lw::app
