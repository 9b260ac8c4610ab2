// The response figure: a predicted closed-loop step response with its uncertainty, and what the
// rig did when there is a measurement to lay over it.
//
//   top panel     the reference (kMuted, dotted); the predicted output (kModel, solid) with the
//                 envelope of the responses over the parameter draws shaded (kModel, translucent);
//                 the measured output (kMeasured) when given; the overshoot limit as a dashed
//                 line (kLimit) and the settling band as a shaded strip between two dotted lines
//                 (kRegion)
//   bottom panel  the actuator effort u (kInput; its envelope shaded when given; the measured
//                 effort in kMeasured when given) with the actuator limits as dashed lines
//                 (kLimit)
// Both panels share the time axis; long traces are reduced keeping peaks.
#ifndef LOOPWRIGHT_IO_RESPONSE_FIGURE_H_
#define LOOPWRIGHT_IO_RESPONSE_FIGURE_H_

#include <cmath>
#include <string>
#include <vector>

namespace lw {

struct ResponseFigureData {
  std::string title;
  std::vector<double> t;                                   // s, non-decreasing
  std::vector<double> reference;                           // same length as t, or empty
  std::vector<double> predicted;                           // same length as t
  std::vector<double> envelope_lo, envelope_hi;            // same length as t, or both empty
  std::vector<double> effort;                              // same length as t
  std::vector<double> effort_lo, effort_hi;                // same length as t, or both empty
  std::vector<double> measured_t, measured_y, measured_u;  // optional; u may be empty
  double overshoot_level = NAN;  // output level the overshoot limit allows (absolute), NaN = none
  double settle_lo = NAN, settle_hi = NAN;  // settling band (absolute output levels), NaN = none
  double actuator_lo = NAN, actuator_hi = NAN;  // NaN = no limit
  std::string output_unit, input_unit;
  std::vector<std::string> caption;  // at most 4 lines
};

// Writes the figure (.svg, .png, .pdf; figure.h). UsageError when series lengths disagree.
void WriteResponseFigure(const std::string& path, const ResponseFigureData& data);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_RESPONSE_FIGURE_H_
