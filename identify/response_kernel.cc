#include "identify/response_kernel.h"

#include <cmath>

#include "lti/error.h"

namespace lw {

SampleGrid MakeSampleGrid(std::span<const double> t) {
  SampleGrid grid{t, 0.0};
  if (t.size() < 2) return grid;
  const double h = (t.back() - t.front()) / static_cast<double>(t.size() - 1);
  if (!(h > 0.0)) return grid;
  for (size_t i = 1; i < t.size(); ++i) {
    if (std::abs((t[i] - t[i - 1]) - h) > 1e-6 * h) return grid;
  }
  grid.h = h;
  return grid;
}

std::vector<double> StructureResponse(Structure s, std::span<const double> p,
                                      std::span<const double> t, std::span<const double> v,
                                      double y_offset, bool zero_initial) {
  if (!IsPhysical(s, p)) throw UsageError("StructureResponse: parameters are not physical");
  if (t.size() != v.size()) throw UsageError("StructureResponse: t and v differ in size");
  double dyn[3];
  const int nd = DynamicCount(s);
  for (int i = 0; i < nd - 1; ++i) dyn[i] = p[1 + i];
  dyn[nd - 1] = p.back();
  double w0 = 0.0, w1 = 0.0;
  OutputWeights(s, p.size() > 2 ? p[2] : 1.0, p.size() > 3 ? p[3] : 0.0, w0, w1);
  std::vector<double> y(t.size());
  const double k = p[0];
  RunResponseKernel(
      s, dyn, MakeSampleGrid(t), v, zero_initial,
      [&](size_t i, double x1, double x2) { y[i] = y_offset + k * (w0 * x1 + w1 * x2); });
  return y;
}

}  // namespace lw
