// Reducing a long trace for drawing without losing its peaks.
//
// A figure column a few hundred pixels wide cannot show 10^6 samples, but it must still show the
// one sample that overshot. ReduceForDrawing splits the x range [x_lo, x_hi] into `columns`
// equal-width bins (one per pixel column of the panel) and keeps, for every bin, the sample with
// the smallest y and the one with the largest y, in their original order; the first and the last
// sample of the whole trace are always kept. So the drawn envelope (min and max per column) is
// exactly the one of the full trace, and a trace with at most 2 samples per column comes back
// unchanged.
//
// Preconditions: x and y have the same length; x is non-decreasing (a time axis); columns >= 1;
// x_lo < x_hi. Samples outside [x_lo, x_hi] go to the first or last bin. NaN samples (gaps) are
// kept as they are, each one splitting the bins around it, so a gap stays a gap.
// Throws UsageError when the preconditions on lengths, columns or the range do not hold.
#ifndef LOOPWRIGHT_IO_FIGURE_REDUCE_H_
#define LOOPWRIGHT_IO_FIGURE_REDUCE_H_

#include <vector>

namespace lw {

struct ReducedTrace {
  std::vector<double> x, y;
};

ReducedTrace ReduceForDrawing(const std::vector<double>& x, const std::vector<double>& y,
                              double x_lo, double x_hi, int columns);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_FIGURE_REDUCE_H_
