// See atomic_file.h. POSIX only: mkstemp, fsync, rename.
#include "io/atomic_file.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <vector>

#include "lti/error.h"

namespace lw {
namespace {

constexpr size_t kBufferSize = 1 << 16;

std::string FolderOf(const std::string& path) {
  const size_t slash = path.find_last_of('/');
  if (slash == std::string::npos) return ".";
  if (slash == 0) return "/";
  return path.substr(0, slash);
}

std::string BaseOf(const std::string& path) {
  const size_t slash = path.find_last_of('/');
  return slash == std::string::npos ? path : path.substr(slash + 1);
}

mode_t CurrentUmask() {
  const mode_t mask = umask(0);
  umask(mask);
  return mask;
}

}  // namespace

AtomicFile::AtomicFile(std::string path) : path_(std::move(path)), target_(path_) {
  if (path_.empty() || path_.back() == '/') Fail(EISDIR);
  struct stat st;
  if (stat(path_.c_str(), &st) == 0) {
    if (S_ISDIR(st.st_mode)) Fail(EISDIR);
    if (!S_ISREG(st.st_mode)) {  // a device, FIFO or socket: written on Commit(), never replaced
      stream_ = true;
      return;
    }
    // A symbolic link to a regular file: the file it names is replaced, the link stays.
    struct stat link;
    if (lstat(path_.c_str(), &link) == 0 && S_ISLNK(link.st_mode)) {
      char* resolved = realpath(path_.c_str(), nullptr);
      if (resolved == nullptr) Fail(errno);
      target_.assign(resolved);
      std::free(resolved);
    }
  }
  // ".<name>.tmp-XXXXXX" in the target's folder.
  const size_t slash = target_.find_last_of('/');
  std::string pattern = slash == std::string::npos ? std::string() : target_.substr(0, slash + 1);
  pattern.push_back('.');
  pattern.append(BaseOf(target_));
  pattern.append(".tmp-XXXXXX");
  std::vector<char> name(pattern.begin(), pattern.end());
  name.push_back('\0');
  fd_ = mkstemp(name.data());
  if (fd_ < 0) Fail(errno);
  temp_path_.assign(name.data());
  if (fchmod(fd_, 0666 & ~CurrentUmask()) != 0) Fail(errno);
  buffer_.reserve(kBufferSize);
}

AtomicFile::~AtomicFile() {
  if (!committed_) Discard();
}

void AtomicFile::Discard() noexcept {
  if (fd_ >= 0) {
    close(fd_);
    fd_ = -1;
  }
  if (!temp_path_.empty()) {
    unlink(temp_path_.c_str());
    temp_path_.clear();
  }
}

void AtomicFile::Fail(int error_number) {
  Discard();
  throw UsageError("cannot write '" + path_ + "': " + std::strerror(error_number));
}

void AtomicFile::WriteAll(const char* p, size_t left) {
  while (left > 0) {
    const ssize_t n = ::write(fd_, p, left);
    if (n < 0) {
      if (errno == EINTR) continue;
      Fail(errno);
    }
    p += n;
    left -= static_cast<size_t>(n);
  }
}

void AtomicFile::Flush() {
  WriteAll(buffer_.data(), buffer_.size());
  buffer_.clear();
}

void AtomicFile::Write(std::string_view bytes) {
  if (committed_ || (fd_ < 0 && !stream_)) Fail(EBADF);
  if (stream_) {  // held until Commit(), so a failed command writes nothing
    buffer_.append(bytes);
    return;
  }
  if (buffer_.size() + bytes.size() > kBufferSize) {
    Flush();
    if (bytes.size() >= kBufferSize) {
      WriteAll(bytes.data(), bytes.size());
      return;
    }
  }
  buffer_.append(bytes);
}

void AtomicFile::Commit() {
  if (committed_ || (fd_ < 0 && !stream_)) Fail(EBADF);
  if (stream_) {
    fd_ = open(path_.c_str(), O_WRONLY | O_CLOEXEC);
    if (fd_ < 0) Fail(errno);
    Flush();
    const int fd = fd_;
    fd_ = -1;
    if (close(fd) != 0) Fail(errno);
    committed_ = true;
    return;
  }
  Flush();
  if (fsync(fd_) != 0) Fail(errno);
  const int fd = fd_;
  fd_ = -1;
  if (close(fd) != 0) Fail(errno);
  if (std::rename(temp_path_.c_str(), target_.c_str()) != 0) Fail(errno);
  committed_ = true;
  temp_path_.clear();
  // Make the rename itself durable; a failure here cannot undo the rename, so it is ignored.
  const int dir = open(FolderOf(target_).c_str(), O_RDONLY | O_DIRECTORY);
  if (dir >= 0) {
    fsync(dir);
    close(dir);
  }
}

void WriteFileAtomically(const std::string& path, std::string_view content) {
  AtomicFile file(path);
  file.Write(content);
  file.Commit();
}

}  // namespace lw
