// Input signal specs: steps, PRBS (checked against the defining properties of a maximum-length
// shift-register sequence: period 2^15 - 1, 2^14 ones, every nonzero 15-bit window once per
// period; Golomb, Shift Register Sequences, from memory), csv splitting and the uniform grid.
#include <cmath>
#include <set>
#include <vector>

#include <doctest/doctest.h>

#include "lti/error.h"
#include "lti/input_signal.h"

TEST_CASE("Steps: levels chain and apply from t >= AT") {
  const lw::InputSignal s = lw::InputSignal::Parse("step:0.5:2:1,step:2:-1:2.5");
  CHECK(s.kind() == lw::InputSignal::Kind::kSteps);
  CHECK(s.StepTimes() == std::vector<double>{1.0, 2.5});
  CHECK(s.initial_level() == 0.5);
  const std::vector<double> t{0.0, 0.999, 1.0, 2.0, 2.5, 9.0};
  CHECK(s.Sample(t) == std::vector<double>{0.5, 0.5, 2.0, 2.0, -1.0, -1.0});
  CHECK(lw::InputSignal::Parse(s.ToString()).Sample(t) == s.Sample(t));
}

TEST_CASE("Bad specs throw UsageError") {
  for (const char* bad :
       {"", "step", "step:0:1", "step:0:1:x", "step:0:1:2,step:0.5:2:3", "step:0:1:2,step:1:2:2",
        "step:0:1:2;", "prbs:0:1", "prbs:0:1:0", "prbs:0:1:-2", "csv:file.csv", "csv::col",
        "ramp:0:1", "step:0:inf:1", "step:0:1:2,ramp:1:2:3"}) {
    CAPTURE(bad);
    CHECK_THROWS_AS(lw::InputSignal::Parse(bad), lw::UsageError);
  }
}

TEST_CASE("csv: the file runs to the last colon, the caller reads it") {
  const lw::InputSignal s = lw::InputSignal::Parse("csv:runs/a:b.csv:valve");
  CHECK(s.is_csv());
  CHECK(s.csv_file() == "runs/a:b.csv");
  CHECK(s.csv_column() == "valve");
  const std::vector<double> t{0.0};
  CHECK_THROWS_AS(s.Sample(t), lw::UsageError);
}

TEST_CASE("PRBS bits are a maximum-length sequence of period 32767") {
  const size_t period = 32767;
  const auto bits = lw::PrbsBits(42, 2 * period + 15);
  size_t ones = 0;
  for (size_t i = 0; i < period; ++i) ones += bits[i];
  CHECK(ones == 16384);
  for (size_t i = 0; i < period + 15; ++i) CHECK(bits[i] == bits[i + period]);
  std::set<unsigned> windows;
  for (size_t i = 0; i < period; ++i) {
    unsigned w = 0;
    for (size_t j = 0; j < 15; ++j) w = (w << 1) | bits[i + j];
    windows.insert(w);
  }
  CHECK(windows.size() == period);
  CHECK(windows.count(0) == 0);
  // A different seed starts elsewhere in the same sequence; the same seed repeats it.
  CHECK(lw::PrbsBits(42, 64) == lw::PrbsBits(42, 64));
  CHECK(lw::PrbsBits(43, 64) != lw::PrbsBits(42, 64));
}

TEST_CASE("PRBS sampling holds each bit for BIT_S seconds from the first time") {
  const lw::InputSignal s = lw::InputSignal::Parse("prbs:-2:3:0.5");
  const std::vector<double> t = lw::UniformGrid(10.0, 20.0);
  const std::vector<double> v = s.Sample(t, 9);
  const auto bits = lw::PrbsBits(9, 41);
  for (size_t k = 0; k < t.size(); ++k) {
    CHECK(v[k] == (bits[k / 5] ? 3.0 : -2.0));
  }
  CHECK(s.StepTimes().empty());
  CHECK(s.Sample(t, 10) != v);
}

TEST_CASE("UniformGrid covers [0, duration] at k / rate") {
  const std::vector<double> t = lw::UniformGrid(1000.0, 2.0);
  CHECK(t.size() == 2001);
  CHECK(t.front() == 0.0);
  CHECK(t.back() == 2.0);
  CHECK(t[7] == 7.0 / 1000.0);
  CHECK(lw::UniformGrid(3.0, 1.0).size() == 4);
  CHECK_THROWS_AS(lw::UniformGrid(0.0, 1.0), lw::UsageError);
  CHECK_THROWS_AS(lw::UniformGrid(10.0, -1.0), lw::UsageError);
  CHECK_THROWS_AS(lw::UniformGrid(NAN, 1.0), lw::UsageError);
}

TEST_CASE("A default-constructed signal is the constant 0") {
  const lw::InputSignal s;
  const std::vector<double> t{0.0, 1.0, 2.0};
  CHECK(s.Sample(t) == std::vector<double>{0.0, 0.0, 0.0});
  CHECK(s.initial_level() == 0.0);
  CHECK(s.StepTimes().empty());
}
