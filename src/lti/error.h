// Errors every loopwright library throws. Libraries never print or exit: they throw one of these,
// and the executable's main() prints what() as one sentence and exits with status().
//
// Exit statuses (documented in README.md):
//   0 done; 1 the job could not be done (a fit failed, no gain meets the specs, a check found the
//   model stale); 2 usage error (bad option value, bad formula); 3 bad input data; 4 rig link
//   failure; 5 safety stop.
#ifndef LOOPWRIGHT_LTI_ERROR_H_
#define LOOPWRIGHT_LTI_ERROR_H_

#include <stdexcept>
#include <string>

namespace lw {

enum class ExitStatus : int {
  kDone = 0,
  kJobFailed = 1,
  kUsage = 2,
  kBadData = 3,
  kLinkFailure = 4,
  kSafetyStop = 5,
};

// Base of every loopwright error; what() is one complete sentence without a trailing newline.
class Error : public std::runtime_error {
 public:
  Error(ExitStatus status, const std::string& message)
      : std::runtime_error(message), status_(status) {}
  ExitStatus status() const { return status_; }

 private:
  ExitStatus status_;
};

// A caller's argument broke a documented precondition: an option value, a formula, a spec.
class UsageError : public Error {
 public:
  explicit UsageError(const std::string& message) : Error(ExitStatus::kUsage, message) {}
};

// Input data cannot be used: the message names the file, line and column where known.
class DataError : public Error {
 public:
  explicit DataError(const std::string& message) : Error(ExitStatus::kBadData, message) {}
};

// The inputs were fine but the job has no answer: a fit that failed, specs no gain meets.
class JobFailed : public Error {
 public:
  explicit JobFailed(const std::string& message) : Error(ExitStatus::kJobFailed, message) {}
};

// The link to a rig failed: cannot open, disconnected, timed out.
class LinkError : public Error {
 public:
  explicit LinkError(const std::string& message) : Error(ExitStatus::kLinkFailure, message) {}
};

// A safety limit stopped the job: the rig was sent to its safe value.
class SafetyStop : public Error {
 public:
  explicit SafetyStop(const std::string& message) : Error(ExitStatus::kSafetyStop, message) {}
};

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_ERROR_H_
