// Benchmark of the gain-band designer: locus band, response band and robust band (500 draws) for
// plants of our own from 2nd to 10th order with dead time. Prints one JSON line per plant with
// medians in milliseconds and the loop polynomials (for bench_band.py's numpy sweep).
#include <cstdio>
#include <functional>
#include <random>
#include <vector>

#include "design/gain_band.h"
#include "design/response_band.h"
#include "design/robust_band.h"
#include "tests/bench/median_time.h"

namespace {

double MedianMs(int reps, const std::function<void()>& f) {
  return 1000.0 * lw::bench::MedianSeconds(reps, lw::bench::WallSeconds, f);
}

// A plant of order n: lag time constants spread from 2 s down, one lightly damped pair when
// n >= 4, gain 2, dead time 0.3 s.
lw::TransferFunction Plant(int n, double scale) {
  lw::Polynomial den({1.0});
  int k = 0;
  if (n >= 4) {
    den = den * lw::Polynomial({1.0 / 16.0, 0.6 / 4.0, 1.0});
    k = 2;
  }
  for (; k < n; ++k) den = den * lw::Polynomial({2.0 * scale / (1.0 + 1.5 * k), 1.0});
  return lw::TransferFunction(lw::Polynomial({2.0}), den, 0.3 * scale);
}

void Print(const char* key, const lw::Polynomial& p) {
  std::printf("\"%s\": [", key);
  const auto& c = p.coefficients();
  for (size_t i = 0; i < c.size(); ++i) std::printf("%s%.17g", i ? ", " : "", c[i]);
  std::printf("]");
}

}  // namespace

int main() {
  lw::Controller c = lw::Controller::Parse("pi:0.3");
  lw::Specs specs;
  specs.overshoot_max = 20.0;
  lw::Region region = specs.ToRegion();
  for (int n : {2, 4, 6, 8, 10}) {
    lw::TransferFunction plant = Plant(n, 1.0);
    lw::LoopPolynomials loop = lw::LoopPolynomials::ForGain(plant, c, 3);
    lw::LocusBand band;
    double locus = MedianMs(21, [&] { band = lw::FindLocusBand(loop, region); });
    lw::ResponseBand rb;
    double response = MedianMs(3, [&] { rb = lw::FindResponseBand(plant, c, specs); });
    std::mt19937_64 rng(5);
    std::normal_distribution<double> z(0.0, 0.03);
    std::vector<lw::TransferFunction> draws;
    for (int i = 0; i < 500; ++i) draws.push_back(Plant(n, 1.0 + z(rng)));
    lw::RobustBand robust;
    double robust_ms = MedianMs(3, [&] { robust = lw::FindRobustBand(draws, c, region); });
    std::printf(
        "{\"order\": %d, \"locus_ms\": %.6g, \"response_ms\": %.6g, \"robust_ms\": %.6g, "
        "\"simulations\": %d, \"locus\": \"%s\", \"response\": \"%s\", ",
        n, locus, response, robust_ms, rb.simulations, lw::ToString(band.gains()).c_str(),
        lw::ToString(rb.gains()).c_str());
    std::printf("\"zeta_min\": %.17g, ", region.zeta_min);
    Print("a", loop.a);
    std::printf(", ");
    Print("b", loop.b);
    std::printf("}\n");
    std::fflush(stdout);
  }
  return 0;
}
