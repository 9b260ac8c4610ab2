#include "io/rig_session.h"

#include <algorithm>
#include <cmath>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {
namespace {

constexpr auto kPoll = std::chrono::milliseconds(20);
constexpr auto kTick = std::chrono::milliseconds(100);
constexpr size_t kKeptReplies = 512;

std::int64_t NowNs() {
  return std::chrono::duration_cast<std::chrono::nanoseconds>(
             RigSession::Clock::now().time_since_epoch())
      .count();
}

std::string Ms(std::chrono::milliseconds ms) {
  return SignificantText(static_cast<double>(ms.count()) / 1000.0, 4) + " s";
}

}  // namespace

void RigSessionOptions::Validate() const {
  if (heartbeat.count() < 0) {
    throw UsageError("session heartbeat " + std::to_string(heartbeat.count()) +
                     " ms: it must be >= 0 (0 picks a quarter of the rig's watchdog time)");
  }
  if (reply_timeout.count() <= 0) {
    throw UsageError("session reply_timeout " + std::to_string(reply_timeout.count()) +
                     " ms: it must be > 0");
  }
  if (silence_timeout.count() <= 0) {
    throw UsageError("session silence_timeout " + std::to_string(silence_timeout.count()) +
                     " ms: it must be > 0");
  }
}

RigSession::RigSession(std::unique_ptr<RigLink> link, RigLimits limits, RigSessionOptions options)
    : link_(std::move(link)), limits_(std::move(limits)), options_(options) {
  options_.Validate();
  limits_.Validate();
  if (!link_) throw UsageError("RigSession needs an open link");
  port_ = link_->description();
  link_->Start([this](const RigLineEvent& e) { OnEvent(e); },
               [this](const std::string& m) { OnClose(m); });
}

RigSession::RigSession(LinePrinter print, RigLimits limits, RigSessionOptions options)
    : print_(std::move(print)), limits_(std::move(limits)), options_(options) {
  options_.Validate();
  limits_.Validate();
  port_ = "(dry run)";
}

RigSession::~RigSession() {
  if (link_ && driving_ && !safe_sent_) {
    try {
      SendSafeOnce("session ended");
    } catch (...) {
    }
  }
  {
    std::lock_guard<std::mutex> lock(beat_mutex_);
    stopping_ = true;
  }
  beat_cv_.notify_all();
  if (heartbeat_thread_.joinable()) heartbeat_thread_.join();
  if (link_) {
    link_->Close();
    std::lock_guard<std::mutex> lock(mutex_);
    FlushRejectedLocked();
    if (sink_) {
      try {
        sink_->Flush();
      } catch (...) {
      }
    }
  }
}

std::uint32_t RigSession::SendLine(RigMessage message) {
  if (!link_) {
    message.seq = dry_seq_++;
    std::string line = EncodeRigLine(message);
    line.pop_back();
    print_(line);
    return message.seq;
  }
  std::uint32_t seq = link_->Send(std::move(message));
  last_send_ns_ = NowNs();
  return seq;
}

void RigSession::Request(RigMessage message, const std::string& what) {
  ThrowIfFailed();
  std::uint32_t seq = SendLine(std::move(message));
  if (!link_) return;
  std::unique_lock<std::mutex> lock(mutex_);
  bool answered = changed_.wait_for(lock, options_.reply_timeout, [&] {
    return replies_.count(seq) > 0 || link_closed_ || !trip_.empty();
  });
  if (!trip_.empty() || link_closed_) {
    lock.unlock();
    ThrowIfFailed();
  }
  if (!answered) {
    throw LinkError("the rig on " + port_ + " did not answer '" + what + "' within " +
                    Ms(options_.reply_timeout));
  }
  Reply r = replies_[seq];
  replies_.erase(seq);
  if (!r.ok) {
    throw JobFailed("the rig on " + port_ + " refused '" + what + "': " + r.code +
                    (r.text.empty() ? "" : " (" + r.text + ")"));
  }
}

RigCaps RigSession::Connect() {
  if (!link_) {
    caps_ = RigCaps{};
    caps_.actuator_lo = std::isfinite(limits_.actuator_lo) ? limits_.actuator_lo : 0.0;
    caps_.actuator_hi = std::isfinite(limits_.actuator_hi) ? limits_.actuator_hi : 0.0;
    caps_.safe_value = caps_.actuator_lo;
    caps_.name = "dry-run";
    SendLine(RigMessage::Hello(0));
    return caps_;
  }
  SendLine(RigMessage::Hello(0));
  {
    std::unique_lock<std::mutex> lock(mutex_);
    changed_.wait_for(lock, options_.reply_timeout,
                      [&] { return got_caps_.has_value() || link_closed_; });
    if (!got_caps_) {
      std::string why = link_closed_ ? close_message_ : std::string();
      throw LinkError("no caps line from " + port_ + " within " + Ms(options_.reply_timeout) +
                      " of hello" + (why.empty() ? "" : " (" + why + ")") +
                      "; is a rig speaking the loopwright rig protocol there?");
    }
    caps_ = *got_caps_;
  }
  if (caps_.version != kRigProtocolVersion) {
    throw LinkError("the rig on " + port_ + " speaks protocol version " +
                    std::to_string(caps_.version) + "; this loopwright speaks version " +
                    std::to_string(kRigProtocolVersion));
  }
  RigLimits from_rig;
  from_rig.actuator_lo = caps_.actuator_lo;
  from_rig.actuator_hi = caps_.actuator_hi;
  RigLimits merged = limits_.Merge(from_rig);
  if (!(merged.actuator_lo < merged.actuator_hi)) {
    throw UsageError("the host's actuator limits " + SignificantText(limits_.actuator_lo, 6) +
                     " to " + SignificantText(limits_.actuator_hi, 6) +
                     " do not overlap the rig's range " + SignificantText(caps_.actuator_lo, 6) +
                     " to " + SignificantText(caps_.actuator_hi, 6));
  }
  std::string why = merged.CheckActuatorValue(caps_.safe_value);
  if (!why.empty()) {
    throw UsageError("the rig's safe value is outside the host's limits: " + why);
  }
  limits_ = merged;
  heartbeat_ = options_.heartbeat.count() > 0
                   ? options_.heartbeat
                   : std::max(std::chrono::milliseconds(10),
                              std::chrono::milliseconds(caps_.watchdog_ms / 4));
  heartbeat_thread_ = std::thread([this] { HeartbeatLoop(); });
  return caps_;
}

void RigSession::SetStreaming(bool on) {
  Request(RigMessage::Bare(on ? RigMessageKind::kGo : RigMessageKind::kHalt, 0),
          on ? "go" : "halt");
  std::lock_guard<std::mutex> lock(mutex_);
  streaming_ = on;
  last_sample_at_ = Clock::now();
}

void RigSession::SetActuator(double value) {
  double from = caps_.safe_value;
  {
    std::lock_guard<std::mutex> lock(mutex_);
    if (stats_.last) from = stats_.last->actuator;
  }
  if (last_actuator_ && !stats().last) from = *last_actuator_;
  double since = changed_once_ ? std::chrono::duration<double>(Clock::now() - last_change_).count()
                               : RigLimits::kInf;
  limits_.RequireActuatorMove(from, value, since);
  driving_ = true;
  Request(RigMessage::Actuator(0, value), "u " + ShortestText(value));
  last_actuator_ = value;
  last_change_ = Clock::now();
  changed_once_ = true;
  safe_sent_ = false;
}

void RigSession::CloseLoop(const std::string& controller, double gain, double reference) {
  limits_.RequireGain(gain);
  driving_ = true;
  Request(RigMessage::Loop(0, controller, gain, reference),
          "loop " + controller + " " + ShortestText(gain) + " " + ShortestText(reference));
  safe_sent_ = false;
}

void RigSession::SetReference(double value) {
  Request(RigMessage::Ref(0, value), "ref " + ShortestText(value));
}

void RigSession::SendSafeOnce(const std::string& why) {
  if (safe_sent_.exchange(true)) return;
  SendLine(RigMessage::Bare(RigMessageKind::kSafe, 0));
  if (link_) {
    std::lock_guard<std::mutex> lock(mutex_);
    NoteLocked("safe stop sent: " + why);
  }
}

void RigSession::SafeStop(const std::string& why) {
  bool was_sent = safe_sent_;
  if (!link_) {
    SendSafeOnce(why);
    return;
  }
  {
    std::lock_guard<std::mutex> lock(mutex_);
    if (link_closed_) return;
  }
  if (was_sent) return;
  std::uint32_t seq = 0;
  if (!safe_sent_.exchange(true)) {
    seq = SendLine(RigMessage::Bare(RigMessageKind::kSafe, 0));
    std::lock_guard<std::mutex> lock(mutex_);
    NoteLocked("safe stop sent: " + why);
  }
  std::unique_lock<std::mutex> lock(mutex_);
  changed_.wait_for(lock, options_.reply_timeout,
                    [&] { return replies_.count(seq) > 0 || link_closed_; });
  driving_ = false;
}

void RigSession::AttachRecording(RecordingSink* sink) {
  std::lock_guard<std::mutex> lock(mutex_);
  FlushRejectedLocked();
  sink_ = sink;
}

void RigSession::Note(const std::string& text) {
  std::lock_guard<std::mutex> lock(mutex_);
  NoteLocked(text);
}

void RigSession::NoteLocked(const std::string& text) {
  if (sink_) sink_->Note(text);
}

void RigSession::FlushRejectedLocked() {
  if (rejected_pending_ > 0 && sink_) sink_->NoteCorrupted(last_valid_seq_, rejected_pending_);
  rejected_pending_ = 0;
}

void RigSession::OnEvent(const RigLineEvent& e) {
  std::lock_guard<std::mutex> lock(mutex_);
  try {
    switch (e.kind) {
      case RigLineEvent::Kind::kRejected:
        ++stats_.rejected;
        if (e.status == RigParseStatus::kBadCrc) ++stats_.corrupted;
        ++rejected_pending_;
        return;
      case RigLineEvent::Kind::kGap:
        FlushRejectedLocked();
        if (e.missing > e.rejected_in_gap) stats_.lost += e.missing - e.rejected_in_gap;
        if (sink_) sink_->NoteGap(e.first_missing, e.last_missing);
        return;
      case RigLineEvent::Kind::kMessage:
        break;
    }
    FlushRejectedLocked();
    const RigMessage& m = e.message;
    last_valid_seq_ = m.seq;
    switch (m.kind) {
      case RigMessageKind::kSample: {
        const RigSample& s = m.sample;
        bool tripped_now = false;
        if (trip_.empty()) {
          std::string why = limits_.CheckOutput(s.output);
          if (!why.empty()) {
            trip_ = why;
            tripped_now = true;
            // Out first, then the bookkeeping: the line leaves as soon as this handler returns.
            if (!safe_sent_.exchange(true)) {
              link_->Send(RigMessage::Bare(RigMessageKind::kSafe, 0));
              last_send_ns_ = NowNs();
            }
          }
        }
        if (sink_) sink_->AddSample(m.seq, s.t_us, s.reference, s.actuator, s.output);
        if (tripped_now) NoteLocked("trip: " + trip_ + "; safe stop sent");
        double t = static_cast<double>(s.t_us) / 1e6;
        if (stats_.samples == 0) stats_.first_t_s = t;
        stats_.last_t_s = t;
        stats_.last = s;
        ++stats_.samples;
        incoming_.push_back(s);
        last_sample_at_ = Clock::now();
        break;
      }
      case RigMessageKind::kCaps:
        got_caps_ = m.caps;
        break;
      case RigMessageKind::kOk:
      case RigMessageKind::kErr: {
        Reply r;
        r.ok = m.kind == RigMessageKind::kOk;
        r.code = m.code;
        r.text = m.text;
        replies_[m.acked] = r;
        while (replies_.size() > kKeptReplies) replies_.erase(replies_.begin());
        break;
      }
      case RigMessageKind::kState:
        if (m.mode == RigMode::kSafe && !safe_sent_ && rig_safe_.empty()) {
          rig_safe_ = m.text.empty() ? "no reason given" : m.text;
          NoteLocked("the rig went to its safe state on its own: " + rig_safe_);
        }
        break;
      default:
        break;
    }
  } catch (const std::exception& ex) {
    // A recording that cannot be written: stop driving, let the caller's thread report it.
    if (close_message_.empty()) close_message_ = ex.what();
    link_closed_ = true;
    if (driving_ && !safe_sent_.exchange(true)) {
      link_->Send(RigMessage::Bare(RigMessageKind::kSafe, 0));
    }
  }
  changed_.notify_all();
}

void RigSession::OnClose(const std::string& message) {
  std::lock_guard<std::mutex> lock(mutex_);
  link_closed_ = true;
  if (close_message_.empty()) {
    close_message_ = message.empty() ? "the link to " + port_ + " was closed" : message;
  }
  FlushRejectedLocked();
  if (sink_) {
    try {
      sink_->Note("link lost: " + close_message_);
      sink_->Flush();
    } catch (...) {
    }
  }
  changed_.notify_all();
}

void RigSession::HeartbeatLoop() {
  std::unique_lock<std::mutex> lock(beat_mutex_);
  while (!stopping_) {
    beat_cv_.wait_for(lock, std::min<std::chrono::milliseconds>(kPoll, heartbeat_));
    if (stopping_) break;
    try {
      if (options_.stop_request && options_.stop_request->load() != 0 && driving_ && !safe_sent_) {
        SendSafeOnce("stop requested (signal " + std::to_string(options_.stop_request->load()) +
                     ")");
      }
      if (NowNs() - last_send_ns_.load() >=
          std::chrono::duration_cast<std::chrono::nanoseconds>(heartbeat_).count()) {
        SendLine(RigMessage::Bare(RigMessageKind::kBeat, 0));
      }
      std::lock_guard<std::mutex> data(mutex_);
      if (sink_) sink_->FlushIfDue();
    } catch (const std::exception&) {
      // The link is gone or the recording failed: OnClose / OnEvent say so to the caller.
    }
  }
}

void RigSession::ThrowIfFailed() {
  if (!link_) return;
  std::string trip, closed, rig_safe;
  {
    std::lock_guard<std::mutex> lock(mutex_);
    trip = trip_;
    closed = link_closed_ ? close_message_ : std::string();
    rig_safe = driving_ ? rig_safe_ : std::string();
    if (streaming_ && !link_closed_ && trip.empty() &&
        Clock::now() - last_sample_at_ > options_.silence_timeout) {
      closed = "no sample from " + port_ + " for " + Ms(options_.silence_timeout) +
               " while streaming: the rig stopped answering";
      NoteLocked("link lost: " + closed);
      if (sink_) sink_->Flush();
    }
  }
  if (!trip.empty()) {
    throw SafetyStop("trip: " + trip + "; safe stop sent to " + port_);
  }
  if (options_.stop_request && options_.stop_request->load() != 0) {
    int sig = options_.stop_request->load();
    if (driving_) SendSafeOnce("stop requested (signal " + std::to_string(sig) + ")");
    throw SafetyStop("stopped by signal " + std::to_string(sig) +
                     (driving_ ? "; safe stop sent to " + port_ : std::string()));
  }
  if (!closed.empty()) throw LinkError(closed);
  if (!rig_safe.empty()) {
    throw SafetyStop("the rig on " + port_ + " went to its safe state on its own (" + rig_safe +
                     ")");
  }
}

void RigSession::PullSamples() {
  std::lock_guard<std::mutex> lock(mutex_);
  if (incoming_.empty()) return;
  samples_.insert(samples_.end(), incoming_.begin(), incoming_.end());
  incoming_.clear();
}

void RigSession::WaitUntil(const std::function<bool()>& done,
                           const std::function<void()>& on_tick) {
  if (!link_) return;
  auto next_tick = Clock::now();
  for (;;) {
    PullSamples();
    ThrowIfFailed();
    if (on_tick && Clock::now() >= next_tick) {
      on_tick();
      next_tick = Clock::now() + kTick;
    }
    if (done()) break;
    std::unique_lock<std::mutex> lock(mutex_);
    changed_.wait_for(lock, kPoll, [&] { return !incoming_.empty() || link_closed_; });
  }
  if (on_tick) on_tick();
}

void RigSession::WaitRigSeconds(double seconds, const std::function<void()>& on_tick) {
  if (!link_) return;
  PullSamples();
  double start = samples_.empty() ? NAN : static_cast<double>(samples_.back().t_us) / 1e6;
  WaitUntil(
      [&] {
        if (samples_.empty()) return false;
        if (std::isnan(start)) start = static_cast<double>(samples_.front().t_us) / 1e6;
        return static_cast<double>(samples_.back().t_us) / 1e6 - start >= seconds;
      },
      on_tick);
}

RigSessionStats RigSession::stats() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return stats_;
}

}  // namespace lw
