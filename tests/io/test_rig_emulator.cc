// The rig emulator's core: the emulated plant against closed-form step responses, the Tustin
// controller against the substitution done by hand, the protocol's rig side, the watchdog and
// the fault counts (read back through the protocol's own stream splitter).
#include <cmath>
#include <cstdint>
#include <string>
#include <vector>

#include <doctest/doctest.h>

#include "io/emulated_controller.h"
#include "io/emulated_plant.h"
#include "io/rig_emulator.h"
#include "io/rig_protocol.h"
#include "io/rig_scenario.h"
#include "lti/controller.h"
#include "lti/error.h"
#include "lti/plant_formula.h"
#include "lti/transfer_function.h"

namespace {

// Everything the rig sent, parsed.
struct Received {
  std::vector<lw::RigMessage> messages;
  lw::RigStreamCounts counts;
};

Received Parse(const std::string& bytes) {
  Received r;
  lw::RigLineSplitter splitter([&](const lw::RigLineEvent& e) {
    if (e.kind == lw::RigLineEvent::Kind::kMessage) r.messages.push_back(e.message);
  });
  splitter.Feed(bytes);
  r.counts = splitter.counts();
  return r;
}

// Host lines with their own SEQ counter.
class Host {
 public:
  std::string Line(lw::RigMessage m) {
    m.seq = seq_++;
    return lw::EncodeRigLine(m);
  }
  std::uint32_t next() const { return seq_; }

 private:
  std::uint32_t seq_ = 0;
};

// Open loop at u and streaming on, both at host time 0.
void OpenAndGo(lw::RigEmulator& rig, Host& host, double u) {
  rig.HostBytes(host.Line(lw::RigMessage::Actuator(0, u)), 0);
  rig.HostBytes(host.Line(lw::RigMessage::Bare(lw::RigMessageKind::kGo, 0)), 0);
}

lw::RigEmulatorOptions FastOptions() {
  lw::RigEmulatorOptions o;
  o.plant = lw::ParsePlantFormula("2/(s+1)");
  o.period_us = 10000;  // 100 Hz
  o.actuator_lo = 0.0;
  o.actuator_hi = 10.0;
  o.safe_value = 1.0;
  o.watchdog_ms = 200;
  o.name = "bench-rig";
  return o;
}

std::vector<lw::RigMessage> OfKind(const Received& r, lw::RigMessageKind kind) {
  std::vector<lw::RigMessage> out;
  for (const auto& m : r.messages) {
    if (m.kind == kind) out.push_back(m);
  }
  return out;
}

}  // namespace

TEST_CASE("emulated plant: first order with a fractional dead time matches the closed form") {
  // G(s) = K exp(-T s)/(tau s + 1) with a step of size A at t = 0 from rest at u0:
  //   y(t) = K u0 + K A (1 - exp(-(t - T)/tau)) for t >= T (the textbook first-order step).
  const double k = 2.5, tau = 0.7, delay = 0.0234, h = 0.01, u0 = 1.0, a = 3.0;
  lw::EmulatedPlant plant(lw::TransferFunction({k}, {tau, 1.0}, delay), h, u0);
  for (int i = 0; i < 400; ++i) {
    const double t = i * h;
    const double want = k * u0 + (t >= delay ? k * a * (1.0 - std::exp(-(t - delay) / tau)) : 0.0);
    CHECK(plant.Output() == doctest::Approx(want).epsilon(1e-11).scale(1.0));
    plant.Step(u0 + a);
  }
  CHECK(plant.instant() == 400);
}

TEST_CASE("emulated plant: second order, whole-sample dead time, matches the closed form") {
  // K / ((t1 s + 1)(t2 s + 1)) step of size A from zero:
  //   y(t) = K A (1 - (t1 exp(-t/t1) - t2 exp(-t/t2)) / (t1 - t2))   (distinct lags).
  const double k = 1.8, t1 = 2.0, t2 = 0.5, delay = 0.3, h = 0.05, a = 4.0;
  lw::EmulatedPlant plant(lw::ParsePlantFormula("1.8*exp(-0.3*s)/((2*s+1)*(0.5*s+1))"), h, 0.0);
  for (int i = 0; i < 300; ++i) {
    const double t = i * h - delay;
    const double want =
        t >= 0 ? k * a * (1.0 - (t1 * std::exp(-t / t1) - t2 * std::exp(-t / t2)) / (t1 - t2))
               : 0.0;
    CHECK(plant.Output() == doctest::Approx(want).epsilon(1e-10).scale(1.0));
    plant.Step(a);
  }
}

TEST_CASE("emulated plant: an integrator starts from zero and ramps at its gain") {
  // 0.5 exp(-0.25 s) / s driven by u = 2 from t = 0: y = 0.5 * 2 * (t - 0.25) after the delay.
  lw::EmulatedPlant plant(lw::ParsePlantFormula("0.5*exp(-0.25*s)/s"), 0.1, 0.0);
  for (int i = 0; i < 50; ++i) {
    const double t = i * 0.1;
    CHECK(plant.Output() ==
          doctest::Approx(t > 0.25 ? 1.0 * (t - 0.25) : 0.0).epsilon(1e-12).scale(1.0));
    plant.Step(2.0);
  }
}

TEST_CASE("Tustin controller: PI and lead equal the substitution s = (2/h)(z-1)/(z+1)") {
  const double h = 0.1, k = 1.7;
  // Error sequence with steps and a ramp.
  std::vector<double> e;
  for (int i = 0; i < 60; ++i) e.push_back(i < 10 ? 1.0 : (i < 30 ? -0.5 + 0.05 * i : 2.0));
  // PI: K (s + Z)/s -> u[k] = u[k-1] + K (1 + Z h/2) e[k] - K (1 - Z h/2) e[k-1] (by hand).
  {
    const double z = 0.8;
    lw::EmulatedController c(lw::Controller::Parse("pi:0.8"), k, h);
    double u_prev = 0.0, e_prev = 0.0;
    for (double ek : e) {
      const double want = u_prev + k * (1.0 + z * h / 2.0) * ek - k * (1.0 - z * h / 2.0) * e_prev;
      const double got = c.Update(ek);
      CHECK(got == doctest::Approx(want).epsilon(1e-12));
      u_prev = want;
      e_prev = ek;
    }
  }
  // Lead: K (s + Z)/(s + P): with w = 2/h,
  //   (w + P) u[k] = K ((w + Z) e[k] + (Z - w) e[k-1]) - (P - w) u[k-1].
  {
    const double z = 1.5, p = 6.0, w = 2.0 / h;
    lw::EmulatedController c(lw::Controller::Parse("lead:1.5:6"), k, h);
    c.Start(0.0, 0.0);
    double u_prev = 0.0, e_prev = 0.0;
    for (double ek : e) {
      const double want = (k * ((w + z) * ek + (z - w) * e_prev) - (p - w) * u_prev) / (w + p);
      CHECK(c.Update(ek) == doctest::Approx(want).epsilon(1e-12).scale(1e-12));
      u_prev = want;
      e_prev = ek;
    }
  }
  // Proportional: no state.
  lw::EmulatedController pc(lw::Controller::Parse("p"), 3.0, h);
  CHECK(pc.Update(2.0) == doctest::Approx(6.0));
  CHECK_THROWS_AS(lw::EmulatedController(lw::Controller::Parse("p"), 0.0, h), lw::UsageError);
}

TEST_CASE("Tustin controller: the switch into closed loop is bumpless with an integrator") {
  lw::EmulatedController pi(lw::Controller::Parse("pi:0.2"), 2.0, 0.5);
  pi.Start(3.0, 41.0);
  CHECK(pi.Update(3.0) == doctest::Approx(41.0));
  lw::EmulatedController pid(lw::Controller::Parse("pid:0.5:2:20"), 1.5, 0.01);
  pid.Start(-1.0, 12.5);
  CHECK(pid.Update(-1.0) == doctest::Approx(12.5));
  // A lead controller starts at rest for the first error: its output is C(0) e0 = K Z/P e0.
  lw::EmulatedController lead(lw::Controller::Parse("lead:1:4"), 2.0, 0.01);
  lead.Start(2.0, 99.0);
  CHECK(lead.Update(2.0) == doctest::Approx(2.0 * 1.0 / 4.0 * 2.0));
}

TEST_CASE("rig emulator: hello, caps, acknowledgements, refusals and mode changes") {
  lw::RigEmulator rig(FastOptions());
  Host host;
  std::string bytes;
  rig.HostBytes(host.Line(lw::RigMessage::Hello(0)), 0);
  rig.HostBytes(host.Line(lw::RigMessage::Actuator(0, 12.0)), 0);  // above 10: refused
  rig.HostBytes(host.Line(lw::RigMessage::Ref(0, 1.0)), 0);        // not closed: refused
  rig.HostBytes(host.Line(lw::RigMessage::Actuator(0, 4.0)), 0);
  rig.HostBytes(host.Line(lw::RigMessage::Loop(0, "lead:2", 1.0, 3.0)), 0);  // bad controller
  rig.HostBytes(host.Line(lw::RigMessage::Hello(0, 2)), 0);                  // bad version
  std::string corrupted = host.Line(lw::RigMessage::Bare(lw::RigMessageKind::kBeat, 0));
  corrupted[0] = 'x';  // "xeat 6 *CRC": the CRC no longer matches
  rig.HostBytes(corrupted, 0);
  rig.TakeOutput(bytes);
  const Received r = Parse(bytes);
  CHECK(r.counts.rejected == 0);
  REQUIRE(r.messages.size() == 8);
  CHECK(r.messages[0].kind == lw::RigMessageKind::kCaps);
  CHECK(r.messages[0].caps.period_us == 10000);
  CHECK(r.messages[0].caps.actuator_lo == 0.0);
  CHECK(r.messages[0].caps.actuator_hi == 10.0);
  CHECK(r.messages[0].caps.safe_value == 1.0);
  CHECK(r.messages[0].caps.watchdog_ms == 200);
  CHECK(r.messages[0].caps.name == "bench-rig");
  CHECK(r.messages[1].kind == lw::RigMessageKind::kErr);
  CHECK(r.messages[1].acked == 1);
  CHECK(r.messages[1].code == "range");
  CHECK(r.messages[2].code == "mode");
  CHECK(r.messages[3].kind == lw::RigMessageKind::kOk);
  CHECK(r.messages[3].acked == 3);
  CHECK(r.messages[4].kind == lw::RigMessageKind::kState);
  CHECK(r.messages[4].mode == lw::RigMode::kOpen);
  CHECK(r.messages[5].code == "controller");
  CHECK(r.messages[6].code == "version");
  CHECK(r.messages[7].code == "crc");
  CHECK(r.messages[7].acked == 6);
  for (std::size_t i = 1; i < r.messages.size(); ++i) {
    CHECK(r.messages[i].seq == r.messages[i - 1].seq + 1);
  }
  CHECK(rig.counts().host_rejected == 1);
  CHECK(rig.counts().host_refused == 5);
  CHECK(rig.mode() == lw::RigMode::kOpen);
}

TEST_CASE("rig emulator: samples carry rig time, the open-loop value and the measured output") {
  lw::RigEmulator rig(FastOptions());
  Host host;
  OpenAndGo(rig, host, 4.0);
  CHECK(rig.Advance(1'000'000, 100) == 101);  // instants 0, 10 ms, ..., 1 s
  std::string bytes;
  rig.TakeOutput(bytes);
  const auto samples = OfKind(Parse(bytes), lw::RigMessageKind::kSample);
  REQUIRE(samples.size() == 101);
  for (std::size_t i = 0; i < samples.size(); ++i) {
    const double t = 0.01 * static_cast<double>(i);
    CHECK(samples[i].sample.t_us == 10000 * i);
    CHECK(samples[i].sample.actuator == 4.0);
    // From rest at the safe value 1 (y = 2), stepped to 4: y = 2 + 2*3 (1 - exp(-t)), to the
    // nine significant digits of the wire format.
    CHECK(samples[i].sample.output ==
          doctest::Approx(2.0 + 6.0 * (1.0 - std::exp(-t))).epsilon(2e-9));
  }
}

TEST_CASE("rig emulator: closed loop settles where the final-value theorem says") {
  // P control of 2/(s+1) with K = 3: y -> K G(0) r / (1 + K G(0)) = 6 r / 7. PI: y -> r.
  for (const char* controller : {"p", "pi:1"}) {
    lw::RigEmulator rig(FastOptions());
    Host host;
    rig.HostBytes(host.Line(lw::RigMessage::Loop(0, controller, 3.0, 7.0)), 0);
    rig.HostBytes(host.Line(lw::RigMessage::Bare(lw::RigMessageKind::kGo, 0)), 0);
    rig.Advance(20'000'000, 0);
    std::string bytes;
    rig.TakeOutput(bytes);
    const auto samples = OfKind(Parse(bytes), lw::RigMessageKind::kSample);
    REQUIRE(!samples.empty());
    const double want = std::string(controller) == "p" ? 6.0 : 7.0;
    CHECK(samples.back().sample.output == doctest::Approx(want).epsilon(1e-6));
    CHECK(samples.back().sample.reference == 7.0);
    CHECK(rig.mode() == lw::RigMode::kClosed);
    // What the rig runs, in its notes (the emulator's display shows them).
    rig.HostBytes(host.Line(lw::RigMessage::Ref(0, 7.5)), 20'000'000);
    std::vector<std::string> notes;
    for (const auto& n : rig.TakeNotes()) notes.push_back(n.text);
    CHECK(notes == std::vector<std::string>{
                       "mode closed",
                       "loop: controller " + std::string(controller) + ", gain 3, reference 7",
                       "reference 7.5"});
  }
}

TEST_CASE("rig emulator: the watchdog goes safe after WATCHDOG_MS of host silence") {
  lw::RigEmulator rig(FastOptions());
  Host host;
  OpenAndGo(rig, host, 8.0);
  // Heartbeats every 150 ms of host time keep it alive for 2 s.
  for (std::int64_t t = 0; t <= 2'000'000; t += 150'000) {
    rig.HostBytes(host.Line(lw::RigMessage::Bare(lw::RigMessageKind::kBeat, 0)), t);
    rig.Advance(static_cast<std::uint64_t>(t), t);
  }
  CHECK(rig.mode() == lw::RigMode::kOpen);
  CHECK(rig.counts().watchdog_trips == 0);
  const std::int64_t last = 1'950'000;
  REQUIRE(rig.watchdog_deadline_us().has_value());
  CHECK(*rig.watchdog_deadline_us() == last + 200'000);
  rig.Advance(2'100'000, last + 200'000);  // exactly at the deadline: still fine
  CHECK(rig.mode() == lw::RigMode::kOpen);
  rig.Advance(2'150'000, last + 200'001);
  CHECK(rig.mode() == lw::RigMode::kSafe);
  CHECK(rig.counts().watchdog_trips == 1);
  CHECK_FALSE(rig.streaming());
  std::string bytes;
  rig.TakeOutput(bytes);
  const Received r = Parse(bytes);
  REQUIRE(r.messages.size() == 1);  // what was unsent is dropped; the state line remains
  CHECK(r.messages[0].kind == lw::RigMessageKind::kState);
  CHECK(r.messages[0].mode == lw::RigMode::kSafe);
  CHECK(r.messages[0].text == "watchdog");
  rig.Advance(2'200'000, last + 250'000);
  CHECK(rig.actuator() == 1.0);  // the safe value from the next instant on
  // A new host may take over with a fresh command.
  rig.HostBytes(host.Line(lw::RigMessage::Actuator(0, 2.0)), last + 300'000);
  rig.Advance(2'300'000, last + 300'000);
  CHECK(rig.mode() == lw::RigMode::kOpen);
  CHECK(rig.actuator() == 2.0);
}

TEST_CASE("rig emulator: the safe command and the watchdog in closed loop") {
  lw::RigEmulator rig(FastOptions());
  Host host;
  rig.HostBytes(host.Line(lw::RigMessage::Loop(0, "pi:1", 1.0, 5.0)), 0);
  rig.Advance(500'000, 0);
  rig.HostBytes(host.Line(lw::RigMessage::Bare(lw::RigMessageKind::kSafe, 0)), 10);
  rig.Advance(510'000, 10);
  CHECK(rig.mode() == lw::RigMode::kSafe);
  CHECK(rig.actuator() == 1.0);
  CHECK_FALSE(rig.watchdog_deadline_us().has_value());  // not armed when safe
}

TEST_CASE("rig emulator: drop and corrupt faults are counted exactly by the host's splitter") {
  lw::RigEmulatorOptions o = FastOptions();
  o.noise_sd = 0.01;
  o.faults = lw::RigFaults::Parse("drop=0.02,corrupt=0.03");
  o.seed = 77;
  lw::RigEmulator rig(o);
  Host host;
  std::string bytes;
  OpenAndGo(rig, host, 3.0);
  rig.Advance(200'000'000, 0);  // 20001 samples
  rig.TakeOutput(bytes);
  const Received r = Parse(bytes);
  const auto& c = rig.counts();
  CHECK(c.samples_taken == 20001);
  CHECK(c.samples_sent + c.dropped_seqs.size() + c.corrupted_seqs.size() == 20001);
  CHECK(r.counts.bad_crc == c.corrupted_seqs.size());
  CHECK(r.counts.rejected == c.corrupted_seqs.size());
  CHECK(r.counts.dropped == c.dropped_seqs.size());
  CHECK(r.counts.missing == c.dropped_seqs.size() + c.corrupted_seqs.size());
  CHECK(OfKind(r, lw::RigMessageKind::kSample).size() == c.samples_sent);
  // Binomial counts within 5 standard deviations of n P.
  const double n = 20001.0;
  const double dropped = static_cast<double>(c.dropped_seqs.size());
  const double corrupted = static_cast<double>(c.corrupted_seqs.size());
  CHECK(std::abs(dropped - 0.02 * n) < 5.0 * std::sqrt(n * 0.02 * 0.98));
  CHECK(std::abs(corrupted - 0.98 * 0.03 * n) < 5.0 * std::sqrt(n * 0.03 * 0.97));
  // Repeatable for a seed.
  lw::RigEmulator again(o);
  Host host2;
  OpenAndGo(again, host2, 3.0);
  again.Advance(200'000'000, 0);
  std::string bytes2;
  again.TakeOutput(bytes2);
  CHECK(bytes2 == bytes);
}

TEST_CASE("rig emulator: disconnect-after and stuck-after count rig time from the first go") {
  {
    lw::RigEmulatorOptions o = FastOptions();
    o.faults = lw::RigFaults::Parse("disconnect-after=0.5");
    lw::RigEmulator rig(o);
    Host host;
    rig.Advance(300'000, 0);  // no go yet: no fault clock
    rig.HostBytes(host.Line(lw::RigMessage::Bare(lw::RigMessageKind::kGo, 0)), 0);
    rig.Advance(2'000'000, 0);
    CHECK(rig.disconnected());
    std::string bytes;
    rig.TakeOutput(bytes);
    const auto samples = OfKind(Parse(bytes), lw::RigMessageKind::kSample);
    REQUIRE(!samples.empty());
    CHECK(samples.front().sample.t_us == 310'000);
    CHECK(samples.back().sample.t_us == 310'000 + 500'000 - 10'000);  // go at 310 ms
  }
  {
    lw::RigEmulatorOptions o = FastOptions();
    o.faults = lw::RigFaults::Parse("stuck-after=1");
    lw::RigEmulator rig(o);
    Host host;
    OpenAndGo(rig, host, 6.0);
    rig.Advance(3'000'000, 0);
    CHECK(rig.stuck());
    std::string bytes;
    rig.TakeOutput(bytes);
    CHECK(OfKind(Parse(bytes), lw::RigMessageKind::kSample).back().sample.t_us == 990'000);
    // Hung: host lines get no answer and the watchdog does not run.
    rig.HostBytes(host.Line(lw::RigMessage::Bare(lw::RigMessageKind::kBeat, 0)), 5'000'000);
    rig.Advance(6'000'000, 9'000'000);
    bytes.clear();
    rig.TakeOutput(bytes);
    CHECK(bytes.empty());
    CHECK(rig.actuator() == 6.0);
    CHECK(rig.counts().watchdog_trips == 0);
  }
}

TEST_CASE("rig faults and options: parse and refuse with the reason") {
  const lw::RigFaults f = lw::RigFaults::Parse("stuck-after=3,drop=0.5");
  CHECK(f.drop == 0.5);
  CHECK(f.stuck_after_s == 3.0);
  CHECK_FALSE(f.disconnect_after_s.has_value());
  CHECK_FALSE(lw::RigFaults::Parse("none").any());
  CHECK_THROWS_WITH_AS(lw::RigFaults::Parse("drop=1"),
                       "--faults part 'drop=1': expected a probability P with 0 <= P < 1",
                       lw::UsageError);
  CHECK_THROWS_AS(lw::RigFaults::Parse("drop=0.1,drop=0.2"), lw::UsageError);
  CHECK_THROWS_AS(lw::RigFaults::Parse("jam=1"), lw::UsageError);
  CHECK_THROWS_AS(lw::RigFaults::Parse("disconnect-after=-1"), lw::UsageError);
  CHECK_THROWS_AS(lw::RigFaults::Parse("corrupt"), lw::UsageError);
  lw::RigEmulatorOptions o = FastOptions();
  o.safe_value = 11.0;
  CHECK_THROWS_AS(lw::RigEmulator{o}, lw::UsageError);
  o = FastOptions();
  o.name = "two words";
  CHECK_THROWS_AS(lw::RigEmulator{o}, lw::UsageError);
}

TEST_CASE("rig scenarios: every one parses and makes a valid rig") {
  for (const auto& s : lw::RigScenarios()) {
    lw::RigEmulatorOptions o;
    o.plant = lw::ParsePlantFormula(s.plant_formula);
    o.period_us = static_cast<std::int64_t>(std::llround(1e6 / s.rate_hz));
    o.actuator_lo = s.actuator_lo;
    o.actuator_hi = s.actuator_hi;
    o.safe_value = s.safe_value;
    o.name = s.rig_name;
    CHECK_NOTHROW(lw::RigEmulator{o});
  }
  CHECK(lw::FindRigScenario("heater-zone").plant_formula == "2.6*exp(-38*s)/((240*s+1)*(45*s+1))");
  CHECK_THROWS_AS(lw::FindRigScenario("boiler"), lw::UsageError);
}
