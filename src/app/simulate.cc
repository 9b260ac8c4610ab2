// `loopwright simulate`: the response of a model to an input, open or closed loop, into a CSV.
//
//   loopwright simulate (--plant FORMULA | --model FILE | FILE) --input SPEC --rate HZ
//                       --duration S [--noise SD] [--quantize STEP] [--saturate LO:HI]
//                       [--seed N] [--start rest|zero] -o FILE.csv [--json]
//   loopwright simulate ... --gain K [--controller C] --reference SPEC ...   (closed loop)
//
// Open loop writes t,u,y; closed loop writes t,r,u,y. The order of effects:
//   1. the input (or reference) is sampled on the grid t = 0, 1/HZ, ... (lti/input_signal.h);
//   2. --saturate clips the actuator u: in open loop the samples of u, in closed loop inside the
//      loop (the loop sees the clipped u, saturated_loop.h);
//   3. the exact response is computed (lti/simulate.h);
//   4. --noise adds white Gaussian noise of that standard deviation to the written y, and
//      --quantize rounds the written y to a multiple of STEP (a measurement's resolution). Both
//      touch only the written y: the closed loop itself is simulated without them.
// The noise comes from a 64-bit Mersenne Twister seeded with --seed and a Box-Muller transform
// written here, so the same seed gives the same file on every platform.
// A closed loop that is unstable without --saturate limits reached (a closed-loop pole, dead time
// through Padé order 3, in the right half plane) diverges: the summary says so and gives no step
// metrics (JSON: metrics null), since a diverging record's "final value" and rise
// are only where it stopped.
// With one step in the input (or reference) the summary gives the step's metrics; a response
// without a peak (lti/step_metrics.h) shows "no peak (why)" as its peak time, and in JSON
// metrics.peak_time is null and metrics.peak_note the reason (null when there is a peak).
#include <algorithm>
#include <cmath>
#include <complex>
#include <cstdint>
#include <optional>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "app/command.h"
#include "app/controller_option.h"
#include "app/model_source.h"
#include "app/output.h"
#include "design/loop_polynomials.h"
#include "io/csv_reader.h"
#include "io/csv_writer.h"
#include "io/recording.h"
#include "io/rig_limits.h"
#include "lti/error.h"
#include "lti/input_signal.h"
#include "lti/saturated_loop.h"
#include "lti/simulate.h"
#include "lti/step_metrics.h"

namespace lw::app {
namespace {

constexpr long kMaxSamples = 50'000'000;

// White Gaussian noise, reproducible everywhere: mt19937_64 (fully specified by the C++
// standard) and the Box-Muller transform (std::normal_distribution differs between libraries).
class GaussianNoise {
 public:
  explicit GaussianNoise(std::uint64_t seed) : engine_(seed ^ 0x9E3779B97F4A7C15ULL) {}
  double Next() {
    if (spare_) {
      double v = *spare_;
      spare_.reset();
      return v;
    }
    // u1 in (0, 1], u2 in [0, 1), from 53 random bits each.
    double u1 = (static_cast<double>(engine_() >> 11) + 1.0) * 0x1.0p-53;
    double u2 = static_cast<double>(engine_() >> 11) * 0x1.0p-53;
    double radius = std::sqrt(-2.0 * std::log(u1));
    double angle = 2.0 * 3.14159265358979323846 * u2;
    spare_ = radius * std::sin(angle);
    return radius * std::cos(angle);
  }

 private:
  std::mt19937_64 engine_;
  std::optional<double> spare_;
};

// Samples of one SPEC on the grid t; csv:FILE:COLUMN is read here and held onto the grid.
struct SampledSignal {
  std::vector<double> values;
  std::vector<double> step_times;  // the steps' instants (empty for prbs and csv)
};

SampledSignal SampleSpec(const std::string& option, const std::string& spec,
                         const std::vector<double>& t, std::uint64_t seed) {
  InputSignal signal;
  try {
    signal = InputSignal::Parse(spec);
  } catch (const UsageError& e) {
    throw UsageError(option + ": " + e.what());
  }
  SampledSignal out;
  if (!signal.is_csv()) {
    out.values = signal.Sample(t, seed);
    out.step_times = signal.StepTimes();
    return out;
  }
  // The file's time column is the one named t (or its first column), in seconds.
  Table table = ReadCsv(signal.csv_file());
  ColumnNames names;
  if (std::find(table.names.begin(), table.names.end(), "t") == table.names.end()) {
    names.time = "1";
  }
  names.input = signal.csv_column();
  Recording rec = SelectColumns(table, names, /*need_input=*/true, /*need_output=*/false,
                                /*need_reference=*/false, /*min_samples=*/1);
  // Zero-order hold: the value of the last row at or before each grid time (the first row's
  // value before the file starts).
  out.values.resize(t.size());
  size_t j = 0;
  for (size_t k = 0; k < t.size(); ++k) {
    while (j + 1 < rec.t.size() && rec.t[j + 1] <= t[k] * (1.0 + 1e-12)) ++j;
    out.values[k] = rec.u[j];
  }
  return out;
}

nlohmann::json MetricsJson(const StepMetrics& m) {
  return {{"step_time", nullptr},
          {"initial", JsonNumber(m.initial)},
          {"final_value", JsonNumber(m.final_value)},
          {"rise_time", JsonNumber(m.rise_time)},
          {"peak_time", m.has_peak ? JsonNumber(m.peak_time) : nlohmann::json()},
          {"peak_note", m.has_peak ? nlohmann::json() : nlohmann::json(m.no_peak)},
          {"overshoot_percent", JsonNumber(m.overshoot_percent)},
          {"undershoot_percent", JsonNumber(m.undershoot_percent)},
          {"settling_time", JsonNumber(m.settling_time)},
          {"steady_state_error", JsonNumber(m.steady_state_error)},
          {"peak_actuator", JsonNumber(m.peak_actuator)},
          {"settled", m.settled}};
}

class SimulateCommand : public Command {
 public:
  void Configure(CLI::App& sub) override {
    sub.footer(
        "SPEC is step:FROM:TO:AT (several, comma-separated, each starting where the last ended),\n"
        "prbs:LO:HI:BIT_S (a seeded pseudo-random binary sequence) or csv:FILE:COLUMN (a column\n"
        "of a CSV file, held between its rows; its time column is the one named t, else the\n"
        "first, in seconds).\n"
        "Open loop writes t,u,y; with --gain it closes the loop e = r - y, u = C(s) e and writes\n"
        "t,r,u,y. --saturate clips the actuator u: in open loop its samples, in closed loop "
        "inside\n"
        "the loop (the loop sees the clipped u; the controller has no anti-windup). --noise and\n"
        "--quantize change only the written y; the loop itself is simulated without them.\n"
        "The data are synthetic: for dry runs before touching a rig.");
    source_.Add(sub, ModelSource::FileSpelling::kBoth);
    sub.add_option("--input", input_, "Actuator input SPEC (open loop)");
    sub.add_option("--reference", reference_, "Reference SPEC (closed loop, with --gain)");
    sub.add_option("--rate", rate_, "Sampling rate in Hz (> 0)")->required();
    sub.add_option("--duration", duration_, "Length of the record in s (> 0)")->required();
    controller_.Add(sub, /*gain_required=*/false);
    sub.add_option("--noise", noise_, "Standard deviation of white noise added to y (>= 0)")
        ->capture_default_str();
    sub.add_option("--quantize", quantize_, "Round y to a multiple of STEP (0 = off)")
        ->capture_default_str();
    sub.add_option("--saturate", saturate_, "Actuator limits LO:HI (clip u)");
    sub.add_option("--seed", seed_, "Seed of the noise and of prbs inputs")->capture_default_str();
    sub.add_option("--start", start_, "Start at rest for the first input value, or from zero")
        ->capture_default_str()
        ->check(CLI::IsMember({"rest", "zero"}));
    sub.add_option("-o,--out", out_path_, "CSV file to write")->required();
    sub.add_flag("--json", json_, "Print one JSON document instead of text");
  }

  int Run(Context& ctx) override {
    Validate();
    LoadedModel model = source_.Load();
    const bool closed = controller_.has_gain();
    const std::vector<double> t = UniformGrid(rate_, duration_);

    SimulateOptions options;
    options.initial =
        start_ == "zero" ? SimulateOptions::Initial::kZero : SimulateOptions::Initial::kSteadyState;
    std::optional<ActuatorLimits> limits;
    if (!saturate_.empty()) {
      const auto [lo, hi] = ParseRange(saturate_, "--saturate");
      limits = ActuatorLimits{lo, hi};
    }

    std::vector<std::string> names;
    std::vector<double> r, u, y;
    SampledSignal signal;
    bool limits_reached = false;
    Controller controller;
    if (closed) {
      controller = controller_.Parse();
      signal = SampleSpec("--reference", reference_, t, seed_);
      r = signal.values;
      if (limits) {
        SaturatedLoopResponse loop =
            SimulateSaturatedLoop(model.tf, controller, controller_.gain(), t, r, *limits, options);
        limits_reached = loop.limits_reached;
        u = std::move(loop.response.u);
        y = std::move(loop.response.y);
      } else {
        ClosedLoopResponse loop =
            SimulateClosedLoop(model.tf, controller, controller_.gain(), t, r, options);
        u = std::move(loop.u);
        y = std::move(loop.y);
      }
      names = {"t", "r", "u", "y"};
    } else {
      signal = SampleSpec("--input", input_, t, seed_);
      u = signal.values;
      if (limits) {
        for (double& v : u) {
          double clipped = std::clamp(v, limits->low, limits->high);
          limits_reached = limits_reached || clipped != v;
          v = clipped;
        }
      }
      y = Simulate(model.tf, t, u, options);
      names = {"t", "u", "y"};
    }
    if (noise_ > 0.0) {
      GaussianNoise noise(seed_);
      for (double& v : y) v += noise_ * noise.Next();
    }
    if (quantize_ > 0.0) {
      for (double& v : y) v = quantize_ * std::nearbyint(v / quantize_);
    }

    std::vector<std::span<const double>> columns;
    columns.push_back(t);
    if (closed) columns.push_back(r);
    columns.push_back(u);
    columns.push_back(y);
    std::ostringstream provenance;
    provenance << "loopwright " << LOOPWRIGHT_VERSION << ": " << ctx.command_line
               << " | synthetic data from " << model.description;
    WriteCsv(out_path_, names, columns, provenance.str());

    // An unstable linear loop diverges: no metrics (a saturated one may stay bounded).
    std::optional<std::complex<double>> unstable;
    if (closed && !limits_reached) {
      for (const auto& s :
           LoopPolynomials::ForGain(model.tf, controller, 3).PolesAt(controller_.gain())) {
        if (s.real() >= 0.0 && (!unstable || s.real() > unstable->real())) unstable = s;
      }
    }
    // Step metrics when the input (or reference) is one step.
    std::optional<StepMetrics> metrics;
    double step_time = 0.0;
    if (signal.step_times.size() == 1 && !unstable) {
      step_time = signal.step_times.front();
      size_t after = 0;
      for (double ti : t) after += ti >= step_time ? 1 : 0;
      if (after >= 3) {
        StepMetricsOptions mo;
        mo.noisy = noise_ > 0.0 || quantize_ > 0.0;
        std::optional<double> target;
        if (closed) target = r.back();
        metrics = MeasureStep(t, y, step_time, mo, target, u);
      }
    }
    if (unstable) {
      Warn(ctx, "the closed loop is unstable at K = " + FormatNumber(controller_.gain(), 6) +
                    " (a pole at s = " + PoleText(*unstable) +
                    "): the record diverges, so it has no step metrics");
    }
    if (json_) {
      PrintJsonSummary(ctx, model, closed, names, limits, limits_reached, metrics, step_time,
                       t.size());
    } else {
      PrintText(ctx, model, closed, names, limits, limits_reached, metrics, step_time, t.size());
    }
    return 0;
  }

 private:
  void Validate() const {
    if (!std::isfinite(rate_) || rate_ <= 0.0) {
      throw UsageError("--rate " + FormatNumber(rate_, 6) + ": the rate must be a number > 0 Hz");
    }
    if (!std::isfinite(duration_) || duration_ <= 0.0) {
      throw UsageError("--duration " + FormatNumber(duration_, 6) +
                       ": the duration must be a number > 0 s");
    }
    if (rate_ * duration_ + 1.0 > static_cast<double>(kMaxSamples)) {
      throw UsageError("--rate " + FormatNumber(rate_, 6) + " with --duration " +
                       FormatNumber(duration_, 6) + " gives more than " +
                       std::to_string(kMaxSamples) + " samples");
    }
    if (!std::isfinite(noise_) || noise_ < 0.0) {
      throw UsageError("--noise " + FormatNumber(noise_, 6) + ": the noise must be >= 0");
    }
    if (!std::isfinite(quantize_) || quantize_ < 0.0) {
      throw UsageError("--quantize " + FormatNumber(quantize_, 6) + ": the step must be >= 0");
    }
    if (controller_.has_gain()) {
      if (reference_.empty()) {
        throw UsageError("a closed loop (--gain) needs --reference SPEC");
      }
      if (!input_.empty()) {
        throw UsageError(
            "--input is for the open loop; with --gain the loop makes u from --reference");
      }
    } else {
      if (!reference_.empty()) {
        throw UsageError("--reference needs --gain K (it drives a closed loop)");
      }
      if (controller_.text() != "p") {
        throw UsageError("--controller needs --gain K (it drives a closed loop)");
      }
      if (input_.empty()) {
        throw UsageError("give --input SPEC (open loop) or --gain K with --reference SPEC");
      }
    }
  }

  void PrintText(Context& ctx, const LoadedModel& model, bool closed,
                 const std::vector<std::string>& names, std::optional<ActuatorLimits> limits,
                 bool limits_reached, const std::optional<StepMetrics>& metrics, double step_time,
                 size_t samples) const {
    std::string cols;
    for (const auto& n : names) cols += (cols.empty() ? "" : ",") + n;
    ctx.out << Bold(ctx, closed ? "simulated closed loop" : "simulated open loop") << " of "
            << model.description << " (synthetic)\n";
    KeyValueList kv;
    if (closed) {
      kv.Add("controller", controller_.text() + ", K = " + FormatNumber(controller_.gain(), 6));
    }
    kv.Add("samples", std::to_string(samples) + " at " + FormatNumber(rate_, 6) + " Hz, 0 to " +
                          FormatNumber(duration_, 6) + " s");
    kv.Add("columns", cols);
    kv.Add("file", out_path_);
    if (noise_ > 0.0 || quantize_ > 0.0) {
      kv.Add("measurement", "noise sd " + FormatNumber(noise_) + ", quantize " +
                                FormatNumber(quantize_) + ", seed " + std::to_string(seed_));
    }
    if (limits) {
      kv.Add("actuator", "limits " + FormatNumber(limits->low) + " to " +
                             FormatNumber(limits->high) +
                             (limits_reached ? ", reached" : ", not reached"));
    }
    kv.Print(ctx.out);
    if (!metrics) return;
    ctx.out << "step response of y (step at " << FormatNumber(step_time) << " s):\n";
    KeyValueList m;
    m.Add("initial -> final",
          FormatNumber(metrics->initial) + " -> " + FormatNumber(metrics->final_value));
    m.Add("rise time (10-90 %)", FormatQuantity(metrics->rise_time, "s"));
    m.Add("overshoot", FormatQuantity(metrics->overshoot_percent, "%", 3));
    m.Add("peak time", metrics->has_peak ? FormatQuantity(metrics->peak_time, "s")
                                         : "no peak (" + metrics->no_peak.substr(9) + ")");
    m.Add("settling time (2 %)",
          metrics->settled ? FormatQuantity(metrics->settling_time, "s") : "not settled");
    if (closed) m.Add("steady-state error", FormatNumber(metrics->steady_state_error));
    m.Add("peak actuator |u|", FormatNumber(metrics->peak_actuator));
    m.Print(ctx.out);
  }

  void PrintJsonSummary(Context& ctx, const LoadedModel& model, bool closed,
                        const std::vector<std::string>& names, std::optional<ActuatorLimits> limits,
                        bool limits_reached, const std::optional<StepMetrics>& metrics,
                        double step_time, size_t samples) const {
    nlohmann::json doc;
    doc["command"] = "simulate";
    doc["loop"] = closed ? "closed" : "open";
    doc["model"] = model.description;
    doc["tf"] = {{"num", model.tf.num().coefficients()},
                 {"den", model.tf.den().coefficients()},
                 {"delay", model.tf.delay()}};
    if (closed) {
      doc["controller"] = controller_.text();
      doc["gain"] = controller_.gain();
    }
    doc["file"] = out_path_;
    doc["columns"] = names;
    doc["samples"] = samples;
    doc["rate_hz"] = rate_;
    doc["duration_s"] = duration_;
    doc["noise_sd"] = noise_;
    doc["quantize"] = quantize_;
    doc["seed"] = seed_;
    doc["saturate"] = limits ? nlohmann::json{limits->low, limits->high} : nlohmann::json();
    doc["limits_reached"] = limits_reached;
    doc["synthetic"] = true;
    if (metrics) {
      doc["metrics"] = MetricsJson(*metrics);
      doc["metrics"]["step_time"] = step_time;
    } else {
      doc["metrics"] = nullptr;
    }
    PrintJson(ctx, doc);
  }

  ModelSource source_;
  ControllerOption controller_;
  std::string input_, reference_, saturate_, out_path_;
  std::string start_ = "rest";
  double rate_ = 0.0, duration_ = 0.0, noise_ = 0.0, quantize_ = 0.0;
  std::uint64_t seed_ = 1;
  bool json_ = false;
};

}  // namespace

std::unique_ptr<Command> MakeSimulateCommand() { return std::make_unique<SimulateCommand>(); }

}  // namespace lw::app
