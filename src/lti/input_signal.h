// Input signals written as a short text (`loopwright simulate --input` and `--reference`):
//
//   step:FROM:TO:AT            a step from FROM to TO at time AT (s). Several steps are joined
//                              with commas, e.g. "step:0:1:2,step:1:-0.5:30": each later step
//                              starts where the previous one ended (its FROM must equal the
//                              previous TO) and AT increases strictly.
//   prbs:LO:HI:BIT_S           a pseudo-random binary sequence switching between LO and HI, each
//                              bit BIT_S seconds long, bit k covering [t0 + k BIT_S,
//                              t0 + (k+1) BIT_S) with t0 the first time sampled. The bits are a
//                              maximum-length sequence (period 2^15 - 1 = 32767 bits) of the
//                              Fibonacci shift register with the primitive polynomial
//                              x^15 + x^14 + 1 (a_{n+15} = a_{n+14} xor a_n; the PRBS15 of
//                              ITU-T O.150, from memory); bit 1 gives HI. The seed picks the
//                              nonzero starting state, so a seed reproduces the same sequence.
//   csv:FILE:COLUMN            a recorded column (name or 1-based number) of a CSV file. This
//                              library takes data, never paths: Parse() only splits the text and
//                              the caller reads the file (is_csv(), csv_file(), csv_column()).
//                              FILE runs to the last ':' so it may itself contain ':'.
// Numbers are decimal (as std::from_chars reads them) and must be finite.
#ifndef LOOPWRIGHT_LTI_INPUT_SIGNAL_H_
#define LOOPWRIGHT_LTI_INPUT_SIGNAL_H_

#include <cstdint>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace lw {

class InputSignal {
 public:
  enum class Kind { kSteps, kPrbs, kCsv };

  // A default-constructed signal is the constant 0 (no steps).
  InputSignal() = default;
  // Throws UsageError naming the spec and what was expected.
  static InputSignal Parse(std::string_view spec);

  Kind kind() const { return kind_; }
  bool is_csv() const { return kind_ == Kind::kCsv; }
  const std::string& csv_file() const { return csv_file_; }
  const std::string& csv_column() const { return csv_column_; }

  // The value at each time in t (held signals: a step's TO applies from t >= AT on, within
  // 1e-12 relative of AT). seed matters only for prbs. t need not be uniform. Throws UsageError
  // for a csv signal (its values come from the file) or a non-finite time.
  std::vector<double> Sample(std::span<const double> t, uint64_t seed = 1) const;
  // Times of the steps (AT of each), in order; empty for prbs and csv.
  std::vector<double> StepTimes() const;
  // The level before any step or the LO level of a prbs; 0 for csv.
  double initial_level() const;
  // Back to the text form.
  std::string ToString() const;

 private:
  struct Step {
    double from, to, at;
  };
  Kind kind_ = Kind::kSteps;
  std::vector<Step> steps_;
  double lo_ = 0.0, hi_ = 0.0, bit_s_ = 0.0;
  std::string csv_file_, csv_column_;
};

// The bits of the sequence described above for a seed: `count` values of 0 or 1.
std::vector<uint8_t> PrbsBits(uint64_t seed, size_t count);

// t_k = k / rate_hz for k = 0 .. floor(duration_s * rate_hz) (within 1e-9), so the grid covers
// [0, duration_s]. Throws UsageError unless both are finite and > 0 and the grid has at most
// 1e9 samples.
std::vector<double> UniformGrid(double rate_hz, double duration_s);

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_INPUT_SIGNAL_H_
