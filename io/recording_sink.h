// A recording written while it is being measured: every valid sample from a rig goes to the file
// as it arrives, so a crash, a kill or an unplugged cable keeps everything received.
//
// Layout (csv_reader.h reads it back; comments may sit anywhere):
//   # <provenance>                       one line: tool, command line, rig
//   t,r,u,y,seq                          the header
//   1.042,150,55.2,148.31,42             one row per valid sample: rig time in seconds (the rig's
//                                        microseconds / 1e6), reference, actuator, output, and the
//                                        sample line's sequence number
//   # gap: sequence 43 to 45 missing (3 lines)
//   # corrupted: 1 line failed its check after sequence 47
//   # <any note>                         e.g. "safe stop sent: output 212 above trip limit 200"
// Values are written in the shortest form that reads back to the same double (std::to_chars).
//
// Durability: rows are buffered in memory and handed to the kernel with write(2) when the buffer
// is older than flush_interval (at most 100 ms), on Flush(), on Close() and in the destructor, so
// whatever the process did not lose to a power cut is in the file even after SIGKILL. Close()
// also fsyncs. Rows still in the buffer when the process dies are lost (at most 100 ms of
// them). Lines are appended whole, in one write(2) per flush; only a kill landing inside that
// call (or a failing disk) could cut the last line short.
//
// The sink never truncates or replaces a file: opening a path that already exists throws
// UsageError ("'REC.csv' exists; a recording is never overwritten: choose another name"), and
// a recording is never deleted, even when the command that writes it fails (what was received
// is evidence). Write failures throw UsageError("cannot write 'PATH': <reason>").
#ifndef LOOPWRIGHT_IO_RECORDING_SINK_H_
#define LOOPWRIGHT_IO_RECORDING_SINK_H_

#include <chrono>
#include <cstdint>
#include <string>
#include <string_view>

namespace lw {

struct RecordingSinkOptions {
  // The first line's text (without the '#'); omitted when empty. Line breaks become spaces.
  std::string provenance;
  // Longest time a row may wait in memory before write(2); 1..100 ms.
  std::chrono::milliseconds flush_interval{100};
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

class RecordingSink {
 public:
  using Clock = std::chrono::steady_clock;

  // Creates `path` (it must not exist) and writes the provenance and header lines at once.
  RecordingSink(std::string path, RecordingSinkOptions options);
  // Flushes and closes without throwing (errors are lost here; call Close() to see them).
  ~RecordingSink();
  RecordingSink(const RecordingSink&) = delete;
  RecordingSink& operator=(const RecordingSink&) = delete;

  // One valid sample: rig time t_us (microseconds), reference r, actuator u, output y, the
  // sample line's sequence number. Flushes when the oldest buffered row is flush_interval old.
  void AddSample(uint32_t seq, uint64_t t_us, double r, double u, double y);
  // Sequence numbers first..last (inclusive, counted modulo 2^32) never arrived.
  void NoteGap(uint32_t first, uint32_t last);
  // `count` lines failed their CRC or did not parse, after sequence `after_seq` (the last good
  // line's sequence number).
  void NoteCorrupted(uint32_t after_seq, uint64_t count);
  // A free-text comment line; line breaks become spaces.
  void Note(std::string_view text);

  // Writes the buffer when it is due (call it from an idle loop so a quiet rig still flushes).
  void FlushIfDue();
  // Writes the buffer now.
  void Flush();
  // Flushes, fsyncs and closes. Later calls do nothing.
  void Close();

  const std::string& path() const { return path_; }
  uint64_t samples() const { return samples_; }

 private:
  void Append(std::string_view line);
  void WriteAll(const char* p, size_t n);

  std::string path_;
  RecordingSinkOptions options_;
  int fd_ = -1;
  std::string buffer_;
  Clock::time_point oldest_{};  // when the first still-buffered line was appended
  uint64_t samples_ = 0;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RECORDING_SINK_H_
