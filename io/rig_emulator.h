// The firmware side of the rig protocol (io/rig_protocol.h, io/rig_protocol.md) around an
// emulated plant: what `loopwright emulate` runs. This class is the rig's logic alone, with no
// I/O and no clock of its own: the caller feeds it the host's bytes and the current times, and
// collects the bytes it would send (io/rig_emulator_server.h does that over a pseudo-terminal or
// TCP). That makes every behaviour below exactly repeatable in tests.
//
// Two clocks. Rig time (microseconds, from 0 at construction) is the rig's own clock: samples
// are taken at t_k = k * PERIOD_US and every sample line carries it. Host time (microseconds) is
// the real time of the machine the host runs on; it drives the heartbeat watchdog only, because
// a host keeps its heartbeat in real time even when the emulator runs faster than real time
// (`--speed`). At speed 1 the two advance together.
//
// Each sample instant k, in this order (the firmware's control tick):
//   1. measure y[k] (io/emulated_plant.h), add white Gaussian noise of sd `noise_sd` and round to
//      a multiple of `quantize` (when > 0): the output the rig's sensor reports;
//   2. choose the actuator value u[k] by mode:
//        idle   the safe value (the rig has not been told anything yet)
//        open   the value of the last `u` line
//        closed the controller's output for e[k] = r - y[k] (io/emulated_controller.h, so the
//               controller sees the measured output, noise included), clipped to the actuator
//               range [ACT_LO, ACT_HI]
//        safe   the safe value
//   3. when streaming, send "s SEQ T_US R U Y" (R: the reference of the last `loop`/`ref` line,
//      0 before any);
//   4. hold u[k] on the plant until instant k + 1.
// Host lines are handled as they arrive; what they change takes effect at the next instant.
//
// Host lines and replies (every valid host line also feeds the watchdog):
//   hello V   -> caps (V must be 1, else err version)
//   u V       -> ok; mode open at V. V outside [ACT_LO, ACT_HI] -> err range, nothing changes
//   loop C K R-> ok; mode closed with controller C, gain K > 0, reference R (err controller /
//                err range when C or K is wrong, nothing changes)
//   ref R     -> ok in closed mode (err mode otherwise)
//   go / halt -> ok; streaming on / off
//   safe      -> ok; mode safe
//   beat      -> ok
// Accepted loop and ref lines are noted (TakeNotes) with the controller, gain and reference the
// rig now runs: "loop: controller pi:0.5, gain 2.5, reference 40", "reference 45"; so is every
// mode change ("mode closed", "mode safe (safe stop)").
// A line of the rig's own kinds gets err syntax; a corrupted or malformed line gets
// "err SEQ N crc|syntax TEXT" with N its SEQ field when that can be read, else 0. Every mode
// change sends "state SEQ MODE [why]" after the ok.
//
// Watchdog: in mode open or closed, when no valid host line arrived for WATCHDOG_MS of host time,
// the rig goes to mode safe ("state SEQ safe watchdog"), stops streaming and forgets any bytes
// it had not yet sent (they were for a host that is gone). It stays safe until told otherwise.
//
// Faults (seeded, repeatable; `drop` and `corrupt` touch sample lines only, so the command
// exchange of a test stays reliable while the sample stream carries exactly known damage):
//   drop=P              each sample line is lost with probability P (its SEQ is used up, so a
//                       host sees the gap)
//   corrupt=P           each remaining sample line has one digit of its T_US, R, U or Y field
//                       replaced by a different digit, so its CRC no longer matches (CRC-16
//                       detects every single-byte change)
//   disconnect-after=S  S seconds of rig time after the first `go`, the rig drops the link
//                       (disconnected() turns true; the caller closes it)
//   stuck-after=S       S seconds of rig time after the first `go`, the firmware hangs: it sends
//                       nothing more and ignores the host, the actuator stays where it was and the
//                       watchdog no longer runs; the plant carries on
#ifndef LOOPWRIGHT_IO_RIG_EMULATOR_H_
#define LOOPWRIGHT_IO_RIG_EMULATOR_H_

#include <cstdint>
#include <memory>
#include <optional>
#include <random>
#include <string>
#include <string_view>
#include <vector>

#include "io/emulated_controller.h"
#include "io/emulated_plant.h"
#include "io/rig_protocol.h"
#include "lti/transfer_function.h"

namespace lw {

struct RigFaults {
  double drop = 0.0;                         // probability in [0, 1)
  double corrupt = 0.0;                      // probability in [0, 1)
  std::optional<double> disconnect_after_s;  // > 0
  std::optional<double> stuck_after_s;       // > 0

  // "drop=P,corrupt=P,disconnect-after=S,stuck-after=S", any subset in any order, each at most
  // once; "" or "none" is no fault. Throws UsageError naming the part that is wrong.
  static RigFaults Parse(std::string_view text);
  void Validate() const;
  bool any() const { return drop > 0.0 || corrupt > 0.0 || disconnect_after_s || stuck_after_s; }
};

struct RigEmulatorOptions {
  TransferFunction plant;          // proper
  std::int64_t period_us = 10000;  // sample period, > 0
  double actuator_lo = 0.0;        // actuator range, lo < hi
  double actuator_hi = 100.0;
  double safe_value = 0.0;            // in [lo, hi]; the plant starts at rest there
  std::int64_t watchdog_ms = 1000;    // > 0, host time
  std::string name = "emulated-rig";  // no spaces, 1..40 characters
  double noise_sd = 0.0;              // >= 0
  double quantize = 0.0;              // >= 0 (0: off)
  RigFaults faults;
  std::uint64_t seed = 1;

  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
};

// What happened, for the emulator's own display (the library never prints).
struct RigEmulatorNote {
  std::uint64_t rig_us = 0;
  std::string text;  // one sentence, e.g. "watchdog: no host line for 1000 ms; actuator to 0"
};

struct RigEmulatorCounts {
  std::uint64_t lines_sent = 0;     // every line put out, corrupted ones included
  std::uint64_t samples_taken = 0;  // control ticks while streaming
  std::uint64_t samples_sent = 0;   // sample lines put out intact
  std::uint64_t host_lines = 0;     // valid host lines
  std::uint64_t host_rejected = 0;  // host lines that were corrupted or malformed
  std::uint64_t host_refused = 0;   // valid host lines answered with err
  std::uint64_t host_missing = 0;   // host SEQ numbers skipped
  std::uint64_t watchdog_trips = 0;
  std::vector<std::uint32_t> dropped_seqs;    // SEQ of every sample line the drop fault lost
  std::vector<std::uint32_t> corrupted_seqs;  // SEQ of every sample line the corrupt fault hit
};

class RigEmulator {
 public:
  // Throws UsageError when the options are invalid.
  explicit RigEmulator(RigEmulatorOptions options);
  ~RigEmulator();
  RigEmulator(const RigEmulator&) = delete;
  RigEmulator& operator=(const RigEmulator&) = delete;

  // Bytes from the host, received at host time host_us (any split into chunks).
  void HostBytes(std::string_view bytes, std::int64_t host_us);
  // Runs every sample instant with t_k <= rig_us (at most max_ticks of them; returns how many
  // ran), then the watchdog at host time host_us.
  std::int64_t Advance(std::uint64_t rig_us, std::int64_t host_us,
                       std::int64_t max_ticks = 1 << 30);

  // Rig time of the next sample instant.
  std::uint64_t next_tick_us() const;
  // Host time at which the watchdog will trip if nothing arrives, or nullopt when it is not armed.
  std::optional<std::int64_t> watchdog_deadline_us() const;

  // The bytes to send since the last call (appended to `into`).
  void TakeOutput(std::string& into);
  // Notes since the last call.
  std::vector<RigEmulatorNote> TakeNotes();

  bool disconnected() const { return disconnected_; }
  bool stuck() const { return stuck_; }
  RigMode mode() const { return mode_; }
  bool streaming() const { return streaming_; }
  double actuator() const { return actuator_; }  // u of the last instant (safe before any)
  const RigCaps& caps() const { return caps_; }
  const RigEmulatorCounts& counts() const { return counts_; }

 private:
  void OnEvent(const RigLineEvent& event);
  void OnMessage(const RigMessage& message);
  void Send(const RigMessage& message);
  void Refuse(std::uint32_t acked, const std::string& code, const std::string& text);
  void SetMode(RigMode mode, const std::string& why);
  void Tick();
  void SendSample(const RigSample& sample);
  double Measure();
  double Gaussian();
  void Note(const std::string& text);

  RigEmulatorOptions options_;
  RigCaps caps_;
  EmulatedPlant plant_;
  std::unique_ptr<EmulatedController> controller_;
  bool controller_started_ = false;
  std::unique_ptr<RigLineSplitter> splitter_;
  std::mt19937_64 noise_engine_;
  std::mt19937_64 fault_engine_;
  std::optional<double> spare_normal_;

  RigMode mode_ = RigMode::kIdle;
  bool streaming_ = false;
  bool disconnected_ = false;
  bool stuck_ = false;
  double open_value_ = 0.0;
  double reference_ = 0.0;
  double actuator_ = 0.0;
  std::optional<std::uint64_t> first_go_us_;
  std::uint32_t seq_ = 0;
  std::uint64_t rig_now_us_ = 0;  // rig time of the instant being handled / last handled
  std::int64_t host_now_us_ = 0;
  std::int64_t last_host_line_us_ = 0;
  std::string out_;
  std::vector<RigEmulatorNote> notes_;
  RigEmulatorCounts counts_;
};

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RIG_EMULATOR_H_
