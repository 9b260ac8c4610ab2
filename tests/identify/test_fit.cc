// The identification pipeline: Smith's two-point constants, the kernel against lw::Simulate,
// recovery and interval honesty on exact first-order data, structure selection, and refusal of
// unusable recordings.
#include <doctest/doctest.h>

#include <cmath>
#include <random>
#include <string>
#include <vector>

#include "identify/fit.h"
#include "identify/output_error.h"
#include "identify/parameter_draws.h"
#include "identify/response_kernel.h"
#include "identify/two_point.h"
#include "lti/error.h"
#include "lti/simulate.h"

namespace {

using lw::Structure;

// K (1 - e^{-(t - ts - T)/tau}) above `base`, the step of size du at ts (closed form).
lw::StepRecording FirstOrderRecording(double k, double tau, double dead, double h, double dur,
                                      double ts, double du, double base, double noise_sd,
                                      unsigned seed) {
  lw::StepRecording r;
  std::mt19937_64 gen(seed);
  std::normal_distribution<double> noise(0.0, noise_sd > 0 ? noise_sd : 1.0);
  for (double t = 0.0; t <= dur + 1e-9; t += h) {
    double s = t - ts - dead;
    // The input is held from the first sample at or after ts: the response starts at that
    // sample's time plus the dead time.
    double y = base + (s > 0 ? k * du * (1 - std::exp(-s / tau)) : 0.0);
    r.t.push_back(t);
    r.u.push_back(t >= ts - 1e-12 ? du : 0.0);
    r.y.push_back(y + (noise_sd > 0 ? noise(gen) : 0.0));
  }
  return r;
}

}  // namespace

// C. L. Smith, Digital Computer Process Control (1972): tau = 1.5 (t63 - t28), T = t63 - tau
// (from memory). On exact first-order data t28 = T + tau ln(1/0.717) and t63 = T + tau
// ln(1/0.368), so the method must give tau within 0.1 % and T within 0.002 tau.
TEST_CASE("Smith two-point constants on exact first-order data") {
  const double tau = 4.0, dead = 0.7, h = 0.0005;
  std::vector<double> t, y;
  for (double ti = 0; ti < 40; ti += h) {
    t.push_back(ti);
    double s = ti - 1.0 - dead;
    y.push_back(3.0 + (s > 0 ? 2.0 * (1 - std::exp(-s / tau)) : 0.0));
  }
  auto e = lw::SmithTwoPoint(t, y, 1.0, 3.0, 5.0);
  REQUIRE(e.has_value());
  CHECK(e->t28 == doctest::Approx(dead + tau * std::log(1 / 0.717)).epsilon(1e-4));
  CHECK(e->t63 == doctest::Approx(dead + tau * std::log(1 / 0.368)).epsilon(1e-4));
  CHECK(std::abs(e->time_constant - tau) / tau < 1e-3);
  CHECK(std::abs(e->dead_time - dead) < 2e-3 * tau);
}

TEST_CASE("response kernel agrees with lw::Simulate for every structure") {
  std::vector<double> t, u;
  for (int i = 0; i < 600; ++i) {
    t.push_back(0.05 * i);
    u.push_back(((i / 47) % 2) * 1.5 - ((i / 131) % 2) * 0.7);
  }
  struct Case {
    Structure s;
    std::vector<double> p;
  };
  for (const Case& c :
       {Case{Structure::kFopdt, {1.7, 2.2, 0.33}}, Case{Structure::kSopdt, {0.9, 3.1, 0.8, 0.47}},
        Case{Structure::kUnderdamped, {1.2, 0.4, 2.5, 0.21}},
        Case{Structure::kSopdtZero, {1.1, 2.6, 0.9, -1.3, 0.12}}}) {
    lw::TransferFunction g = lw::StructureTransferFunction(c.s, c.p);
    std::vector<double> ref = lw::Simulate(g, t, u);
    std::vector<double> got = lw::StructureResponse(c.s, c.p, t, u);
    double worst = 0;
    for (size_t i = 0; i < t.size(); ++i) worst = std::max(worst, std::abs(ref[i] - got[i]));
    CAPTURE(lw::StructureName(c.s));
    CHECK(worst < 1e-9);
  }
}

TEST_CASE("fopdt recovery from exact data and a sensible interval from noisy data") {
  lw::FitOptions opt;
  opt.structure = "fopdt";
  lw::StepRecording clean = FirstOrderRecording(2.2, 6.5, 1.23, 0.1, 60, 5.0, 3.0, 10.0, 0, 1);
  lw::Identification id = lw::Identify(clean, opt);
  REQUIRE(id.model.values.size() == 3);
  CHECK(id.model.values[0] == doctest::Approx(2.2).epsilon(1e-6));
  CHECK(id.model.values[1] == doctest::Approx(6.5).epsilon(1e-6));
  CHECK(id.model.values[2] == doctest::Approx(1.23).epsilon(1e-6));
  CHECK(id.model.fit_percent > 99.99);

  lw::StepRecording noisy = FirstOrderRecording(2.2, 6.5, 1.23, 0.1, 60, 5.0, 3.0, 10.0, 0.1, 7);
  id = lw::Identify(noisy, opt);
  REQUIRE(id.model.covariance_ok);
  for (const auto& p : id.model.parameters) {
    CAPTURE(p.name);
    CHECK(p.ci_low < p.value);
    CHECK(p.value < p.ci_high);
  }
  CHECK(id.model.parameters[0].ci_low < 2.2);
  CHECK(2.2 < id.model.parameters[0].ci_high);
}

// A step at the second sample leaves one baseline sample: said once, in the singular; three
// are plural. The fit itself still recovers exact data, and the flat dead time that continues
// a one-sample baseline of an exact record is not taken for a clipped output (with under 3
// baseline samples the noise estimate is the whole record's, which the response's own
// curvature makes nonzero; this record was refused as clipped at 10 for 13 samples).
TEST_CASE("a short baseline is warned about, with the count in words that agree") {
  lw::FitOptions opt;
  opt.structure = "fopdt";
  auto baseline_warnings = [&](double ts) {
    lw::StepRecording rec = FirstOrderRecording(2.2, 6.5, 1.23, 0.1, 60, ts, 3.0, 10.0, 0, 1);
    lw::Identification id = lw::Identify(rec, opt);
    std::vector<std::string> found;
    for (const auto& w : id.warnings) {
      if (w.find("before the first step") != std::string::npos) found.push_back(w);
    }
    CHECK(id.model.values[0] == doctest::Approx(2.2).epsilon(1e-6));
    return found;
  };
  std::vector<std::string> one = baseline_warnings(0.1);
  REQUIRE(one.size() == 1);
  CHECK(one[0] == "only 1 sample before the first step: the baseline is uncertain");
  std::vector<std::string> three = baseline_warnings(0.3);
  REQUIRE(three.size() == 1);
  CHECK(three[0] == "only 3 samples before the first step: the baseline is uncertain");
  CHECK(baseline_warnings(5.0).empty());
}

// A measured input carries noise, and its first sample is one draw of it: the model must start
// at rest at the baseline (the mean before the step), not at rest for the first sample's
// input, or the offset, gain and dead time absorb a start-up transient that is not in the data.
// The output is the closed form of the clean step; the recorded input is that step plus noise
// (sd 5 % of the step), its first sample 3 sd high.
TEST_CASE("a noisy input channel: the model starts at rest at the baseline") {
  lw::StepRecording rec = FirstOrderRecording(2.2, 6.5, 1.23, 0.1, 60, 5.0, 3.0, 10.0, 0, 1);
  std::mt19937_64 gen(11);
  std::normal_distribution<double> noise(0.0, 0.15);
  for (double& u : rec.u) u += noise(gen);
  rec.u[0] = 0.45;
  lw::FitOptions opt;
  opt.structure = "fopdt";
  lw::Identification id = lw::Identify(rec, opt);
  REQUIRE(id.model.values.size() == 3);
  // Errors in the input variable bias the fit a little (the model filters the input noise the
  // output never saw); a start at the first sample's input moved the gain by 13 %.
  CHECK(id.model.values[0] == doctest::Approx(2.2).epsilon(0.02));
  CHECK(std::abs(id.model.values[2] - 1.23) < 0.1);  // within one sample
  for (const auto& w : id.warnings) {
    CAPTURE(w);
    CHECK(w.find("outlier") == std::string::npos);
  }
}

TEST_CASE("auto prefers fopdt on first-order data and reports every candidate") {
  lw::StepRecording noisy = FirstOrderRecording(1.5, 4.0, 0.8, 0.05, 40, 3.0, 2.0, 0.0, 0.03, 11);
  lw::FitOptions opt;
  lw::Identification id = lw::Identify(noisy, opt);
  CHECK(id.automatic);
  CHECK(id.candidates.size() == 5);
  // AICc penalises the extra parameters that buy nothing on first-order data; the nested
  // second-order structures may tie, but fopdt must not lose by more than 2 units (common
  // practice reads delta < 2 as no evidence either way).
  double fopdt_delta = id.candidates[0].delta_aicc;
  CHECK(fopdt_delta < 2.0);
}

// First-order truth (the closed-form step response K du (1 - exp(-(t - ts - T) / tau)) of
// FirstOrderRecording) with noise realization 12, one where the plain minimum of AICc takes
// sopdt (it nests fopdt) by less than 2: the near-tie rule (structure_selection.h; Burnham &
// Anderson, from memory, delta <= 2 as substantial support; the simplest-of-those tie-break is
// common practice) must return fopdt and leave the criterion values and deltas as they were.
TEST_CASE("auto takes fopdt over a nested structure that wins AICc by less than 2") {
  const double k = 0.9, tau = 3.2, dead = 0.6;
  lw::StepRecording noisy = FirstOrderRecording(k, tau, dead, 0.05, 30, 2.0, 1.5, 4.0, 0.02, 12);
  lw::FitOptions plain;
  plain.selection.prefer_fewer_parameters = false;
  lw::Identification min_only = lw::Identify(noisy, plain);
  REQUIRE(min_only.candidates.size() == 5);
  REQUIRE(min_only.model.structure != Structure::kFopdt);
  CHECK(min_only.selection_note.empty());
  const lw::Candidate& fopdt_plain = min_only.candidates[0];
  REQUIRE(fopdt_plain.structure == Structure::kFopdt);
  CHECK(fopdt_plain.delta_aicc > 0.0);
  CHECK(fopdt_plain.delta_aicc <= 2.0);

  lw::Identification id = lw::Identify(noisy, lw::FitOptions{});
  CHECK(id.model.structure == Structure::kFopdt);
  CHECK(!id.selection_note.empty());
  for (size_t i = 0; i < id.candidates.size(); ++i) {
    const lw::Candidate& a = id.candidates[i];
    const lw::Candidate& b = min_only.candidates[i];
    const std::string name(lw::StructureName(a.structure));
    CAPTURE(name);
    CHECK(a.usable == b.usable);
    if (!a.usable) continue;
    CHECK(a.aicc == b.aicc);
    CHECK(a.delta_aicc == b.delta_aicc);  // still measured from the smallest AICc
    CHECK(a.smallest == (a.structure == min_only.model.structure));
    CHECK(a.chosen == (a.structure == Structure::kFopdt));
  }
  CHECK(id.model.aicc == fopdt_plain.aicc);
  // The chosen model is the truth's structure and its intervals cover the truth.
  REQUIRE(id.model.covariance_ok);
  const double truth[] = {k, tau, dead};
  for (size_t i = 0; i < 3; ++i) {
    CAPTURE(id.model.parameters[i].name);
    CHECK(id.model.parameters[i].ci_low < truth[i]);
    CHECK(truth[i] < id.model.parameters[i].ci_high);
  }
}

TEST_CASE("near-tie selection: fewest parameters within the width, then the smallest AICc") {
  const std::vector<double> crit = {10.0, 8.5, 8.0, 12.0};
  const std::vector<int> k = {4, 5, 6, 4};
  const std::vector<bool> all(4, true);
  lw::SelectionOptions on;
  lw::Selection s = lw::SelectStructure(crit, k, all, on);
  CHECK(s.smallest == 2);
  CHECK(s.chosen == 0);  // delta 2.0 is inside (<= 2)
  on.support_width = 1.9;
  CHECK(lw::SelectStructure(crit, k, all, on).chosen == 1);
  on.support_width = 0.4;
  CHECK(lw::SelectStructure(crit, k, all, on).chosen == 2);
  lw::SelectionOptions off;
  off.prefer_fewer_parameters = false;
  CHECK(lw::SelectStructure(crit, k, all, off).chosen == 2);
  // Equal k: the smaller AICc; an unusable entry never counts.
  CHECK(lw::SelectStructure({9.0, 8.0, 8.5}, {4, 6, 4}, all, lw::SelectionOptions{}).chosen == 2);
  CHECK(lw::SelectStructure(crit, k, {false, true, true, true}, lw::SelectionOptions{}).chosen ==
        1);
  CHECK(lw::SelectStructure(crit, k, std::vector<bool>(4, false), lw::SelectionOptions{}).chosen ==
        -1);
  // Equal k inside the width: a determined entry before an undetermined one, whatever their
  // AICc; outside the width, or with fewer parameters elsewhere, determinedness does not count.
  CHECK(lw::SelectStructure({8.0, 8.6}, {5, 5}, {true, true}, lw::SelectionOptions{}, {false, true})
            .chosen == 1);
  CHECK(
      lw::SelectStructure({8.0, 10.6}, {5, 5}, {true, true}, lw::SelectionOptions{}, {false, true})
          .chosen == 0);
  CHECK(lw::SelectStructure({8.0, 8.6}, {4, 5}, {true, true}, lw::SelectionOptions{}, {false, true})
            .chosen == 0);
  CHECK(lw::SelectStructure({8.0, 8.6}, {5, 5}, {true, true}, lw::SelectionOptions{}, {}).chosen ==
        0);
  lw::SelectionOptions bad;
  bad.support_width = -1.0;
  CHECK_THROWS_AS(bad.Validate(), lw::UsageError);
}

TEST_CASE("a problem without excitation names what it cannot determine") {
  std::vector<double> t(50), v(50, 0.0), y(50);
  for (int i = 0; i < 50; ++i) {
    t[i] = 0.1 * i;
    y[i] = 0.01 * std::sin(1.3 * i);
  }
  lw::OutputErrorProblem pb;
  pb.structure = Structure::kFopdt;
  pb.t = t;
  pb.v = v;
  pb.y = y;
  const double inf = std::numeric_limits<double>::infinity();
  lw::SolveReport r =
      lw::SolveOutputError(pb, {1.0, 1.0, 0.2, 0.0, 0.0}, {false, false, false, false, true},
                           {-inf, 1e-3, 0.0, -inf, -inf}, {inf, inf, 4.0, inf, inf});
  CHECK_FALSE(r.covariance_ok);
  CHECK(r.rank_deficiency.find("gain") != std::string::npos);
  CHECK(r.rank_deficiency.find("time_constant") != std::string::npos);
}

TEST_CASE("unusable recordings are refused with one clear sentence") {
  lw::StepRecording good = FirstOrderRecording(1.0, 2.0, 0.3, 0.1, 20, 2.0, 1.0, 0.0, 0.01, 3);
  lw::FitOptions opt;
  opt.structure = "fopdt";
  auto refused = [&](const lw::StepRecording& r, const char* words) {
    try {
      lw::Identify(r, opt);
      return std::string("accepted");
    } catch (const lw::DataError& e) {
      std::string what = e.what();
      return what.find(words) != std::string::npos ? std::string("ok") : what;
    }
  };
  lw::StepRecording constant = good;
  std::fill(constant.u.begin(), constant.u.end(), 2.0);
  CHECK(refused(constant, "constant") == "ok");
  lw::StepRecording ramp = good;
  for (size_t i = 0; i < ramp.u.size(); ++i) ramp.u[i] = 0.01 * static_cast<double>(i);
  CHECK(refused(ramp, "no step") == "ok");
  lw::StepRecording clipped = good;
  for (double& y : clipped.y) y = std::min(y, 0.8);
  CHECK(refused(clipped, "clipped") == "ok");
  lw::StepRecording three = good;
  three.t.resize(3);
  three.u.resize(3);
  three.y.resize(3);
  CHECK(refused(three, "3 samples") == "ok");
  lw::StepRecording nan = good;
  std::fill(nan.y.begin(), nan.y.end(), std::numeric_limits<double>::quiet_NaN());
  CHECK(refused(nan, "no finite values") == "ok");
}

// Sample mean and covariance of many draws against the given ones (law of large numbers: the
// errors shrink like 1/sqrt(n); 4 standard errors allowed).
TEST_CASE("parameter draws reproduce their mean and covariance and stay physical") {
  std::vector<double> mean = {2.0, 5.0, 0.8};
  Eigen::MatrixXd cov(3, 3);
  cov << 0.01, 0.002, 0.0, 0.002, 0.04, -0.001, 0.0, -0.001, 0.0025;
  const size_t n = 20000;
  lw::ParameterDraws d = lw::DrawParameters(Structure::kFopdt, mean, cov, n, 42);
  REQUIRE(d.parameters.size() == n);
  REQUIRE(d.plants.size() == n);
  Eigen::Vector3d m = Eigen::Vector3d::Zero();
  for (const auto& v : d.parameters) m += Eigen::Vector3d(v[0], v[1], v[2]);
  m /= static_cast<double>(n);
  Eigen::Matrix3d c = Eigen::Matrix3d::Zero();
  for (const auto& v : d.parameters) {
    Eigen::Vector3d e = Eigen::Vector3d(v[0], v[1], v[2]) - m;
    c += e * e.transpose();
  }
  c /= static_cast<double>(n - 1);
  for (int i = 0; i < 3; ++i) {
    CHECK(std::abs(m[i] - mean[i]) < 4.0 * std::sqrt(cov(i, i) / n));
    CHECK(std::abs(c(i, i) - cov(i, i)) < 4.0 * cov(i, i) * std::sqrt(2.0 / n));
  }
  for (const auto& v : d.parameters) CHECK(lw::IsPhysical(Structure::kFopdt, v));
  // Same seed, same draws.
  lw::ParameterDraws again = lw::DrawParameters(Structure::kFopdt, mean, cov, 3, 42);
  CHECK(again.parameters[0] == d.parameters[0]);
}
