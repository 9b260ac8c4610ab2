#include "app/saved_document.h"

#include "io/atomic_file.h"

namespace lw::app {

void SaveDocument(const std::string& path, nlohmann::json doc, const std::string& format,
                  const std::string& model_description, const std::string& command_line) {
  doc["format"] = format;
  doc["version"] = 1;
  doc["model"] = model_description;
  doc["command_line"] = command_line;
  WriteFileAtomically(path, doc.dump(2) + "\n");
}

}  // namespace lw::app
