#include "io/recording_sink.h"

#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstring>

#include "lti/error.h"

namespace lw {
namespace {

std::string OneLine(std::string_view text) {
  std::string s(text);
  for (char& c : s) {
    if (c == '\n' || c == '\r') c = ' ';
  }
  return s;
}

void AppendNumber(std::string& out, double v) {
  char buf[32];
  auto r = std::to_chars(buf, buf + sizeof buf, v);
  out.append(buf, r.ptr);
}

template <typename Int>
void AppendInt(std::string& out, Int v) {
  char buf[24];
  auto r = std::to_chars(buf, buf + sizeof buf, v);
  out.append(buf, r.ptr);
}

}  // namespace

void RecordingSinkOptions::Validate() const {
  if (flush_interval.count() < 1 || flush_interval.count() > 100) {
    throw UsageError("recording flush_interval " + std::to_string(flush_interval.count()) +
                     " ms: it must be 1..100 ms");
  }
}

RecordingSink::RecordingSink(std::string path, RecordingSinkOptions options)
    : path_(std::move(path)), options_(std::move(options)) {
  options_.Validate();
  fd_ = ::open(path_.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC | O_APPEND, 0666);
  if (fd_ < 0) {
    if (errno == EEXIST) {
      throw UsageError("'" + path_ +
                       "' exists; a recording is never overwritten: choose another name");
    }
    throw UsageError("cannot write '" + path_ + "': " + std::strerror(errno));
  }
  if (!options_.provenance.empty()) Append("# " + OneLine(options_.provenance));
  Append("t,r,u,y,seq");
  Flush();
}

RecordingSink::~RecordingSink() {
  try {
    Close();
  } catch (...) {
  }
  if (fd_ >= 0) ::close(fd_);
}

void RecordingSink::Append(std::string_view line) {
  if (buffer_.empty()) oldest_ = Clock::now();
  buffer_.append(line);
  buffer_.push_back('\n');
}

void RecordingSink::AddSample(uint32_t seq, uint64_t t_us, double r, double u, double y) {
  if (buffer_.empty()) oldest_ = Clock::now();
  // Exact for rig times below 2^53 us (285 years).
  double t = static_cast<double>(t_us) / 1e6;
  AppendNumber(buffer_, t);
  buffer_.push_back(',');
  AppendNumber(buffer_, r);
  buffer_.push_back(',');
  AppendNumber(buffer_, u);
  buffer_.push_back(',');
  AppendNumber(buffer_, y);
  buffer_.push_back(',');
  AppendInt(buffer_, seq);
  buffer_.push_back('\n');
  ++samples_;
  FlushIfDue();
}

void RecordingSink::NoteGap(uint32_t first, uint32_t last) {
  uint64_t count = static_cast<uint32_t>(last - first) + uint64_t{1};
  std::string s = "# gap: sequence ";
  AppendInt(s, first);
  if (count > 1) {
    s += " to ";
    AppendInt(s, last);
  }
  s += " missing (";
  AppendInt(s, count);
  s += count == 1 ? " line)" : " lines)";
  Append(s);
}

void RecordingSink::NoteCorrupted(uint32_t after_seq, uint64_t count) {
  std::string s = "# corrupted: ";
  AppendInt(s, count);
  s += count == 1 ? " line failed its check" : " lines failed their check";
  s += " after sequence ";
  AppendInt(s, after_seq);
  Append(s);
}

void RecordingSink::Note(std::string_view text) { Append("# " + OneLine(text)); }

void RecordingSink::FlushIfDue() {
  if (!buffer_.empty() && Clock::now() - oldest_ >= options_.flush_interval) Flush();
}

void RecordingSink::WriteAll(const char* p, size_t n) {
  while (n > 0) {
    ssize_t w = ::write(fd_, p, n);
    if (w < 0) {
      if (errno == EINTR) continue;
      throw UsageError("cannot write '" + path_ + "': " + std::strerror(errno));
    }
    p += w;
    n -= static_cast<size_t>(w);
  }
}

void RecordingSink::Flush() {
  if (fd_ < 0 || buffer_.empty()) return;
  std::string pending;
  pending.swap(buffer_);
  WriteAll(pending.data(), pending.size());
}

void RecordingSink::Close() {
  if (fd_ < 0) return;
  Flush();
  int fd = fd_;
  fd_ = -1;
  bool synced = ::fsync(fd) == 0 || errno == EINVAL;  // EINVAL: a pipe or device, nothing to sync
  int sync_error = errno;
  ::close(fd);
  if (!synced) throw UsageError("cannot write '" + path_ + "': " + std::strerror(sync_error));
}

}  // namespace lw
