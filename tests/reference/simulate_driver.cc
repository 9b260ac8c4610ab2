// A small driver for tests/reference/simulate_vs_scipy.py: reads a model and an input from
// stdin, prints the simulated response, one line per sample (%.17g).
//
//   num C0 C1 ...            numerator, descending powers of s
//   den C0 C1 ...            denominator
//   delay T                  dead time in s
//   initial steady|zero
//   open                     or:  closed CONTROLLER GAIN   (controller text as controller.h)
//   samples N
//   followed by N lines "t value" (the input u, or the reference r for a closed loop)
// Open loop prints y; closed loop prints "y u". Errors go to stderr with exit status 2.
#include <cstdio>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "lti/controller.h"
#include "lti/error.h"
#include "lti/simulate.h"
#include "lti/transfer_function.h"

namespace {

std::vector<double> ReadNumbers(std::istringstream& in) {
  std::vector<double> v;
  double x;
  while (in >> x) v.push_back(x);
  return v;
}

}  // namespace

int main() {
  try {
    std::vector<double> num, den;
    double delay = 0.0, gain = 1.0;
    bool closed = false;
    std::string controller = "p";
    lw::SimulateOptions options;
    std::string line;
    size_t samples = 0;
    while (std::getline(std::cin, line)) {
      std::istringstream in(line);
      std::string key;
      in >> key;
      if (key == "num") num = ReadNumbers(in);
      if (key == "den") den = ReadNumbers(in);
      if (key == "delay") in >> delay;
      if (key == "initial") {
        std::string v;
        in >> v;
        options.initial = v == "zero" ? lw::SimulateOptions::Initial::kZero
                                      : lw::SimulateOptions::Initial::kSteadyState;
      }
      if (key == "closed") {
        closed = true;
        in >> controller >> gain;
      }
      if (key == "samples") {
        in >> samples;
        break;
      }
    }
    std::vector<double> t(samples), u(samples);
    for (size_t i = 0; i < samples; ++i) {
      if (!(std::cin >> t[i] >> u[i])) throw lw::UsageError("driver: short sample list");
    }
    const lw::TransferFunction plant(num, den, delay);
    if (closed) {
      const lw::ClosedLoopResponse r =
          lw::SimulateClosedLoop(plant, lw::Controller::Parse(controller), gain, t, u, options);
      for (size_t i = 0; i < samples; ++i) std::printf("%.17g %.17g\n", r.y[i], r.u[i]);
    } else {
      for (double y : lw::Simulate(plant, t, u, options)) std::printf("%.17g\n", y);
    }
    return 0;
  } catch (const lw::Error& e) {
    std::fprintf(stderr, "%s\n", e.what());
    return 2;
  }
}
