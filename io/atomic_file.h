// Atomic output files: a command either leaves the complete new file or nothing new at all.
//
// AtomicFile writes into a temporary file in the same folder as the target (so the final rename
// stays on one file system), flushes it to disk with fsync and renames it over the target on
// Commit(). Until Commit() succeeds the target is untouched: an existing file keeps its old
// contents, a missing one stays missing. When the AtomicFile is destroyed without a successful
// Commit() (an exception unwound the command, a write failed), the temporary file is removed.
//
// Errors: any failure to create, write, sync or rename throws
//   UsageError("cannot write 'PATH': <strerror text>")
// (exit status 2): output paths are given by the user, so a folder that does not exist or is not
// writable is a usage error rather than bad input data.
//
// The new file gets mode 0666 minus the process umask, like a file created by open(2).
//
// Targets that are not regular files are never replaced: a symbolic link to a regular file
// keeps the link and replaces the file it names; a device, FIFO or socket (`-o /dev/null`,
// `-o /dev/stdout`) is opened and written only on Commit(), from memory, so a command that
// fails before Commit() writes nothing there either (no fsync, no rename). A folder is refused.
#ifndef LOOPWRIGHT_IO_ATOMIC_FILE_H_
#define LOOPWRIGHT_IO_ATOMIC_FILE_H_

#include <string>
#include <string_view>

namespace lw {

class AtomicFile {
 public:
  // Creates the temporary file next to `path`; throws UsageError when that is impossible.
  explicit AtomicFile(std::string path);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  // Appends bytes to the temporary file (buffered; large writes go straight through).
  void Write(std::string_view bytes);
  // Flushes, fsyncs, closes and renames the temporary file onto the target, then fsyncs the
  // folder. After it returns, the target holds exactly the bytes written. Calling Write() or
  // Commit() again afterwards throws UsageError.
  void Commit();

  const std::string& path() const { return path_; }
  // The temporary file's path (empty once committed or discarded).
  const std::string& temporary_path() const { return temp_path_; }

 private:
  void Flush();
  void WriteAll(const char* p, size_t size);
  [[noreturn]] void Fail(int error_number);
  void Discard() noexcept;

  std::string path_;    // as given (messages)
  std::string target_;  // the regular file renamed onto: path_, or what its symlink names
  std::string temp_path_;
  std::string buffer_;
  int fd_ = -1;
  bool stream_ = false;  // the target is a device, FIFO or socket
  bool committed_ = false;
};

// Writes `content` to `path` atomically (an AtomicFile written once and committed).
void WriteFileAtomically(const std::string& path, std::string_view content);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_ATOMIC_FILE_H_
