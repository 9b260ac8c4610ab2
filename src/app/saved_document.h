// The JSON files band and predict save for the report (--save): the same document --json
// prints, plus its format name, a version, the model it came from and the command line.
#ifndef LOOPWRIGHT_APP_SAVED_DOCUMENT_H_
#define LOOPWRIGHT_APP_SAVED_DOCUMENT_H_

#include <string>

#include <nlohmann/json.hpp>

namespace lw::app {

// Writes doc with "format", "version": 1, "model" and "command_line" added, atomically
// (io/atomic_file.h: a failure leaves no half-written file).
void SaveDocument(const std::string& path, nlohmann::json doc, const std::string& format,
                  const std::string& model_description, const std::string& command_line);

}  // namespace lw::app

#endif  // LOOPWRIGHT_APP_SAVED_DOCUMENT_H_
