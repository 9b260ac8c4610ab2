// A small driver for tests/reference/lti_algebra_vs_numpy.py. Reads one query a line from stdin
// and answers each in order on stdout (numbers as %.17g):
//
//   roots C0 C1 ...      ->  "roots N" then N lines "RE IM"   (coefficients in descending powers)
//   pade T ORDER         ->  "num ..." and "den ..." lines     (den made monic, see
//   transfer_function.h) formula TEXT         ->  "num ...", "den ..." and "delay T" lines
//
// A query the library refuses is answered with one line "error MESSAGE".
#include <cstdio>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "lti/error.h"
#include "lti/pade.h"
#include "lti/plant_formula.h"
#include "lti/polynomial.h"
#include "lti/transfer_function.h"

namespace {

void PrintPolynomial(const char* label, const lw::Polynomial& p) {
  std::printf("%s", label);
  for (double c : p.coefficients()) std::printf(" %.17g", c);
  std::printf("\n");
}

void PrintTransferFunction(const lw::TransferFunction& g) {
  PrintPolynomial("num", g.num());
  PrintPolynomial("den", g.den());
  std::printf("delay %.17g\n", g.delay());
}

void Answer(const std::string& line) {
  std::istringstream in(line);
  std::string what;
  in >> what;
  if (what == "roots") {
    std::vector<double> c;
    double x;
    while (in >> x) c.push_back(x);
    const auto r = lw::Polynomial(c).roots();
    std::printf("roots %zu\n", r.size());
    for (const auto& z : r) std::printf("%.17g %.17g\n", z.real(), z.imag());
  } else if (what == "pade") {
    double t = 0.0;
    int order = 0;
    in >> t >> order;
    PrintTransferFunction(lw::PadeDelay(t, order));
  } else if (what == "formula") {
    std::string text;
    std::getline(in, text);
    PrintTransferFunction(lw::ParsePlantFormula(text));
  } else {
    throw lw::UsageError("unknown query '" + what + "'");
  }
}

}  // namespace

int main() {
  std::string line;
  while (std::getline(std::cin, line)) {
    if (line.empty()) continue;
    try {
      Answer(line);
    } catch (const lw::Error& e) {
      std::printf("error %s\n", e.what());
    }
  }
  return 0;
}
