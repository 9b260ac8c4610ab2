// Controller texts: parsing, shapes C(s)/K for every kind, round trips and error sentences.
#include <doctest/doctest.h>

#include <string>
#include <utility>

#include "lti/controller.h"
#include "lti/error.h"

namespace lw {
namespace {

std::string ParseError(const std::string& text) {
  try {
    Controller::Parse(text);
  } catch (const UsageError& e) {
    return e.what();
  }
  return "(no error)";
}

TEST_CASE("controller shapes for each kind") {
  SUBCASE("proportional") {
    const Controller c = Controller::Parse("p");
    CHECK(c.kind() == Controller::Kind::kProportional);
    CHECK(c.Shape().num() == Polynomial::Constant(1.0));
    CHECK(c.Shape().den() == Polynomial::Constant(1.0));
    CHECK(Controller().kind() == Controller::Kind::kProportional);
  }
  SUBCASE("pi: (s + Z) / s") {
    const Controller c = Controller::Parse("pi:0.35");
    CHECK(c.kind() == Controller::Kind::kPI);
    CHECK(c.Shape().num() == Polynomial({1.0, 0.35}));
    CHECK(c.Shape().den() == Polynomial({1.0, 0.0}));
    CHECK(c.Shape().integrators() == 1);
  }
  SUBCASE("lead: (s + Z) / (s + P)") {
    const Controller c = Controller::Parse("lead:1.5:12");
    CHECK(c.kind() == Controller::Kind::kLead);
    CHECK(c.Shape().num() == Polynomial({1.0, 1.5}));
    CHECK(c.Shape().den() == Polynomial({1.0, 12.0}));
  }
  SUBCASE("pid: (s + Z1)(s + Z2) / (s (s + P))") {
    const Controller c = Controller::Parse("pid:0.2:3:40");
    CHECK(c.kind() == Controller::Kind::kPID);
    const auto zeros = c.Shape().zeros();
    REQUIRE(zeros.size() == 2);
    CHECK(zeros[0].real() == doctest::Approx(-3.0));
    CHECK(zeros[1].real() == doctest::Approx(-0.2));
    CHECK(c.Shape().num().coefficient(1) == doctest::Approx(3.2));
    CHECK(c.Shape().num().coefficient(0) == doctest::Approx(0.6));
    CHECK(c.Shape().den() == Polynomial({1.0, 40.0, 0.0}));
  }
  SUBCASE("zeros may be negative (non-minimum-phase shapes) or zero") {
    CHECK(Controller::Parse("pi:-0.5").Shape().num() == Polynomial({1.0, -0.5}));
    CHECK(Controller::Parse("lead:0:2").Shape().num() == Polynomial({1.0, 0.0}));
  }
}

TEST_CASE("controller with a gain") {
  const TransferFunction c = Controller::Parse("lead:2:9").WithGain(4.5);
  CHECK(c.num() == Polynomial({4.5, 9.0}));
  CHECK(c.den() == Polynomial({1.0, 9.0}));
  CHECK(c.delay() == 0.0);
}

TEST_CASE("controller text round trip") {
  for (const char* text : {"p", "pi:0.35", "lead:1.5:12", "pid:0.2:3:40", "pi:-0.5",
                           "lead:1e-05:0.1", "pid:0.3333333333333333:7:1e+20"}) {
    CAPTURE(text);
    const Controller c = Controller::Parse(text);
    CHECK(c.ToString() == text);
    const Controller again = Controller::Parse(c.ToString());
    CHECK(again.kind() == c.kind());
    CHECK(again.Shape().num() == c.Shape().num());
    CHECK(again.Shape().den() == c.Shape().den());
  }
  // Other spellings of the same numbers come back in the shortest form.
  CHECK(Controller::Parse("lead:2.50:1E1").ToString() == "lead:2.5:10");
}

TEST_CASE("controller errors are one clear sentence") {
  // Each message reads "controller '<text>': <what is wrong>".
  const std::pair<const char*, const char*> cases[] = {
      {"lead:2", "expected lead:Z:P (zero and pole in rad/s)"},
      {"pi", "expected pi:Z (zero in rad/s)"},
      {"p:3", "expected p (no fields)"},
      {"pid:1:2", "expected pid:Z1:Z2:P (two zeros and a pole in rad/s)"},
      {"pi:1:2", "expected pi:Z (zero in rad/s)"},
      {"lag:1:2",
       "unknown kind 'lag'; expected p, pi:Z, lead:Z:P or pid:Z1:Z2:P (zeros and pole in rad/s)"},
      {"", "unknown kind ''; expected p, pi:Z, lead:Z:P or pid:Z1:Z2:P (zeros and pole in rad/s)"},
      {"PI:1",
       "unknown kind 'PI'; expected p, pi:Z, lead:Z:P or pid:Z1:Z2:P (zeros and pole in rad/s)"},
      {"pi:abc", "the zero Z 'abc' is not a finite number; expected pi:Z (zero in rad/s)"},
      {"lead:1:",
       "the pole P '' is not a finite number; expected lead:Z:P (zero and pole in rad/s)"},
      {"pid:1:2x:3",
       "the zero Z2 '2x' is not a finite number; expected pid:Z1:Z2:P (two zeros and a pole in "
       "rad/s)"},
      {"pi:inf", "the zero Z 'inf' is not a finite number; expected pi:Z (zero in rad/s)"},
      {"lead:1:1e999",
       "the pole P '1e999' is not a finite number; expected lead:Z:P (zero and pole in rad/s)"},
      {"lead:1:0", "the pole P is 0 rad/s but must be > 0 rad/s"},
      {"pid:1:2:-4", "the pole P is -4 rad/s but must be > 0 rad/s"},
      // K s / s has the closed-loop polynomial s (den + K num): a root at 0 for every K.
      {"pi:0",
       "the zero Z is 0 rad/s, which cancels the integrator's pole at s = 0 and leaves a "
       "closed-loop pole there at every gain; use p, or Z != 0"},
      {"pi:-0",
       "the zero Z is 0 rad/s, which cancels the integrator's pole at s = 0 and leaves a "
       "closed-loop pole there at every gain; use p, or Z != 0"},
      {"pid:0:2:8",
       "the zero Z1 is 0 rad/s, which cancels the integrator's pole at s = 0 and leaves a "
       "closed-loop pole there at every gain; use lead:2:8, or zeros != 0"},
      {"pid:0.5:0:8",
       "the zero Z2 is 0 rad/s, which cancels the integrator's pole at s = 0 and leaves a "
       "closed-loop pole there at every gain; use lead:0.5:8, or zeros != 0"},
  };
  for (const auto& [text, what] : cases) {
    CAPTURE(text);
    CHECK(ParseError(text) == "controller '" + std::string(text) + "': " + what);
  }
  // Every error is a usage error (exit status 2).
  CHECK_THROWS_AS(Controller::Parse(" p"), UsageError);
}

}  // namespace
}  // namespace lw
