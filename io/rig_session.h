// One host session with a rig over a RigLink (io/rig_link.h), speaking the rig protocol
// (io/rig_protocol.h) with the safety limits of io/rig_limits.h applied to everything it sends
// and to everything it receives.
//
//   RigSession s(OpenRigLink(port, {}), limits, {});
//   RigCaps caps = s.Connect();        // hello -> caps; limits narrowed to the rig's range
//   s.AttachRecording(&sink);          // every valid sample goes to the file as it arrives
//   s.SetStreaming(true);              // go
//   s.SetActuator(55);                 // u 55, after the range / step / slew checks
//   s.WaitUntil([&] { return ...; });  // heartbeat, trips, stop requests, silence watched
//   s.SafeStop("done");                // safe
//
// Threads. The link's reader thread handles every incoming line at once: a sample outside the
// trip limits sends `safe` from that thread before anything else happens (so the stop leaves
// within one sample period of the line's arrival, whatever the caller is doing), then the sample
// is appended to the recording and to the in-memory list. A second, small thread keeps the
// heartbeat (`beat` whenever no other line went out for the heartbeat interval), flushes the
// recording when due, and sends `safe` as soon as a stop is requested (Ctrl-C, SIGTERM: see
// RigSessionOptions::stop_request) while the session drives the actuator. The caller's thread
// runs the requests below; they wait for the rig's `ok`.
//
// Errors (lw::Error subclasses, lti/error.h):
//   LinkError  (exit 4) the link closed or failed, no caps / no reply within reply_timeout, no
//              sample for silence_timeout while streaming, a protocol version other than 1;
//   SafetyStop (exit 5) an output trip (safe already sent), a stop request (safe already sent
//              when driving), the rig going safe on its own while driven (its watchdog);
//   UsageError (exit 2) a value the limits forbid (nothing was sent);
//   JobFailed  (exit 1) the rig refused a line with `err` (its code and text are quoted).
// The messages name the port. After any of them the recording (if attached) holds every valid
// sample received, with a `#` note saying what happened.
//
// Dry run: constructed with a line printer instead of a link, the session opens nothing and
// hands every line it would send (with its SEQ and CRC) to the printer; Connect() returns the
// caps the limits imply, requests return at once and WaitUntil() returns without waiting.
#ifndef LOOPWRIGHT_IO_RIG_SESSION_H_
#define LOOPWRIGHT_IO_RIG_SESSION_H_

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include "io/recording_sink.h"
#include "io/rig_limits.h"
#include "io/rig_link.h"
#include "io/rig_protocol.h"

namespace lw {

struct RigSessionOptions {
  // Interval between heartbeats; zero picks a quarter of the rig's watchdog time (>= 10 ms).
  std::chrono::milliseconds heartbeat{0};
  // How long to wait for caps and for each `ok`, > 0.
  std::chrono::milliseconds reply_timeout{3000};
  // While streaming: the longest quiet spell (host time) before the link counts as failed, > 0.
  std::chrono::milliseconds silence_timeout{3000};
  // When not null and it turns nonzero (a signal handler stores the signal number), the session
  // sends `safe` (if it drives the actuator) and WaitUntil throws SafetyStop.
  const std::atomic<int>* stop_request = nullptr;
  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

// A snapshot of the session's counts.
struct RigSessionStats {
  std::uint64_t samples = 0;    // valid sample lines
  std::uint64_t lost = 0;       // lines that never arrived (gaps not explained by bad lines)
  std::uint64_t corrupted = 0;  // lines that failed their CRC
  std::uint64_t rejected = 0;   // every line that was not valid (corrupted included)
  std::optional<RigSample> last;
  double first_t_s = 0.0;  // rig time of the first sample, seconds
  double last_t_s = 0.0;   // rig time of the last sample, seconds
};

class RigSession {
 public:
  using Clock = std::chrono::steady_clock;
  using LinePrinter = std::function<void(const std::string& line)>;

  // A live session on an open link (the session starts its reader).
  RigSession(std::unique_ptr<RigLink> link, RigLimits limits, RigSessionOptions options);
  // A dry run (see the file comment); `print` receives each line without its "\n".
  RigSession(LinePrinter print, RigLimits limits, RigSessionOptions options);
  // When the session drove the actuator and no safe stop was sent, sends `safe` (best effort);
  // then stops the heartbeat and closes the link.
  ~RigSession();
  RigSession(const RigSession&) = delete;
  RigSession& operator=(const RigSession&) = delete;

  // hello -> caps. The limits' actuator range is narrowed to the rig's; a safe value outside the
  // host's limits is refused (UsageError). Starts the heartbeat. Call once, first.
  RigCaps Connect();
  // go / halt.
  void SetStreaming(bool on);
  // u VALUE: open loop at `value` after CheckActuatorMove from the actuator's present value (the
  // last sample's, else the rig's safe value) and the time since the session last changed it.
  void SetActuator(double value);
  // loop CONTROLLER GAIN REFERENCE after CheckGain.
  void CloseLoop(const std::string& controller, double gain, double reference);
  // ref VALUE (closed loop).
  void SetReference(double value);
  // safe, noted in the recording with `why`; waits briefly for the rig's ok (not an error when
  // none comes: the rig may be gone). Idempotent.
  void SafeStop(const std::string& why);

  // Leaves the actuator where the last request put it: the destructor will not send `safe`
  // (the rig's watchdog takes over once the heartbeat stops).
  void Release() { driving_ = false; }

  // Where samples, gaps and corrupted lines are written from now on (nullptr: nowhere). The
  // sink must outlive its attachment.
  void AttachRecording(RecordingSink* sink);
  // Adds a `#` note to the attached recording (if any).
  void Note(const std::string& text);

  // Waits until done() returns true (checked after new samples arrive and at least every
  // 20 ms), calling on_tick about every 100 ms (progress display). Throws as the file comment
  // says. A dry run returns at once.
  void WaitUntil(const std::function<bool()>& done, const std::function<void()>& on_tick = {});
  // Waits `seconds` of rig time (measured by sample times while streaming).
  void WaitRigSeconds(double seconds, const std::function<void()>& on_tick = {});

  // Every valid sample so far, in arrival order (updated by WaitUntil on the caller's thread).
  const std::vector<RigSample>& samples() const { return samples_; }
  RigSessionStats stats() const;
  const RigCaps& caps() const { return caps_; }
  const RigLimits& limits() const { return limits_; }
  bool dry_run() const { return !link_; }
  bool driving() const { return driving_; }
  const std::string& port() const { return port_; }
  // The heartbeat interval Connect() chose (RigSessionOptions::heartbeat, else a quarter of the
  // rig's watchdog time, at least 10 ms); 250 ms before Connect().
  std::chrono::milliseconds heartbeat_interval() const { return heartbeat_; }

 private:
  struct Reply {
    bool ok = false;
    std::string code, text;
  };
  std::uint32_t SendLine(RigMessage message);
  void Request(RigMessage message, const std::string& what);
  void OnEvent(const RigLineEvent& event);
  void OnClose(const std::string& message);
  void NoteLocked(const std::string& text);
  void FlushRejectedLocked();
  void HeartbeatLoop();
  void SendSafeOnce(const std::string& why);
  void ThrowIfFailed();
  void PullSamples();

  std::unique_ptr<RigLink> link_;
  LinePrinter print_;
  RigLimits limits_;
  RigSessionOptions options_;
  std::string port_;
  RigCaps caps_;
  std::uint32_t dry_seq_ = 0;

  mutable std::mutex mutex_;
  std::condition_variable changed_;
  std::optional<RigCaps> got_caps_;
  std::map<std::uint32_t, Reply> replies_;
  std::vector<RigSample> incoming_;  // appended by the reader, moved into samples_ by the caller
  std::vector<RigSample> samples_;   // the caller's copy
  RecordingSink* sink_ = nullptr;
  RigSessionStats stats_;
  std::uint32_t last_valid_seq_ = 0;
  std::uint64_t rejected_pending_ = 0;
  bool link_closed_ = false;
  std::string close_message_;
  std::string trip_;      // why the output tripped (empty: no trip)
  std::string rig_safe_;  // the rig went safe without being asked: its words
  Clock::time_point last_sample_at_{};
  bool streaming_ = false;

  std::atomic<bool> driving_{false};
  std::atomic<bool> safe_sent_{false};
  std::atomic<std::int64_t> last_send_ns_{0};
  std::optional<double> last_actuator_;  // the last value the session sent
  Clock::time_point last_change_{};
  bool changed_once_ = false;

  std::chrono::milliseconds heartbeat_{250};
  std::thread heartbeat_thread_;
  std::mutex beat_mutex_;
  std::condition_variable beat_cv_;
  bool stopping_ = false;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_SESSION_H_
