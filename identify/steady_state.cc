#include "identify/steady_state.h"

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "lti/error.h"
#include "lti/number_text.h"

namespace lw {

void SteadyStateOptions::Validate() const {
  auto fail = [](const std::string& field, double v, const std::string& rule) {
    throw UsageError("steady-state " + field + " = " + ShortestText(v) + ": " + rule);
  };
  if (min_samples < 4) fail("min_samples", static_cast<double>(min_samples), "it must be >= 4");
  if (!(window_fraction > 0.0 && window_fraction <= 1.0)) {
    fail("window_fraction", window_fraction, "it must lie in (0, 1]");
  }
  if (!(band >= 0.0 && band < 1.0)) fail("band", band, "it must lie in [0, 1)");
  if (!(noise_factor > 0.0)) fail("noise_factor", noise_factor, "it must be > 0");
}

SteadyStateTest TestSteadyState(std::span<const double> y, std::size_t begin, double level_before,
                                const SteadyStateOptions& o) {
  o.Validate();
  SteadyStateTest r;
  if (begin > y.size()) throw UsageError("steady-state test: begin is past the end of the data");
  const std::size_t n = y.size() - begin;
  if (n < 2 * o.min_samples) return r;
  std::size_t w = std::max<std::size_t>(
      o.min_samples,
      static_cast<std::size_t>(std::ceil(o.window_fraction * static_cast<double>(n))));
  w = std::min(w, n);
  const std::size_t h = w / 2;
  const double* b_end = y.data() + y.size();
  const double* b_begin = b_end - h;
  const double* a_begin = b_begin - h;
  double mean_a = 0.0, mean_b = 0.0;
  for (const double* p = a_begin; p < b_begin; ++p) mean_a += *p;
  for (const double* p = b_begin; p < b_end; ++p) mean_b += *p;
  mean_a /= static_cast<double>(h);
  mean_b /= static_cast<double>(h);
  std::vector<double> diff;
  diff.reserve(2 * h);
  for (const double* p = a_begin + 1; p < b_end; ++p) diff.push_back(std::abs(p[0] - p[-1]));
  auto mid = diff.begin() + static_cast<std::ptrdiff_t>(diff.size() / 2);
  std::nth_element(diff.begin(), mid, diff.end());
  // The differences of white noise are centred on zero, so their absolute median is the MAD.
  r.noise_sd = 1.4826 * *mid / std::sqrt(2.0);
  r.window = w;
  r.drift = std::abs(mean_b - mean_a);
  r.change = std::abs(mean_b - level_before);
  r.allowance = o.noise_factor * r.noise_sd * std::sqrt(2.0 / static_cast<double>(h));
  const double floor = 1e-12 * std::max(1.0, std::abs(mean_b));
  r.at_rest = r.drift <= o.band * r.change + r.allowance + floor;
  if (o.require_change && !(r.change > 2.0 * r.allowance + floor)) r.at_rest = false;
  return r;
}

}  // namespace lw
