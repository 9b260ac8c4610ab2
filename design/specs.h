// Response requirements for a closed loop and the region of the s-plane they ask of its dominant
// poles.
//
// Each requirement becomes one bound on the dominant closed-loop pole s = -sigma +/- j wd,
// wn = |s|, zeta = sigma / wn (second-order relations, e.g. Franklin, Powell & Emami-Naeini,
// Feedback Control of Dynamic Systems, ch. 3; from memory):
//   rise_max S      wn >= 1.8 / S. The published approximation tr ~ 1.8 / wn for the 10-90 % rise
//                   time of an underdamped second-order step; it is within about 10 % for
//                   0.3 <= zeta <= 0.8 and grows pessimistic outside (a rule of thumb, not exact).
//   overshoot_max P zeta >= -ln(P/100) / sqrt(pi^2 + ln^2(P/100)). Exact for a second-order
//                   pair without zeros (Mp = exp(-pi zeta / sqrt(1 - zeta^2))).
//   zeta_min Z      zeta >= Z.
//   settle_max S    sigma >= 4.6 / S for the 1 % band, sigma >= 4.0 / S for the 2 % band
//                   (settle_band 0.01 or 0.02; the envelope exp(-sigma t) reaches 1 % at
//                   t = 4.6 / sigma; for 2 % ln(50) = 3.9 is rounded to 4 as is common practice).
//   peak_max S      wd >= pi / S (peak time tp = pi / wd).
//   wn_min W        wn >= W.
// Always: every closed-loop pole strictly in the left half plane. Optionally decay_min: every
// pole other than the dominant pair has -Re(s) >= decay_min (1/s).
//
// The dominant pole (defined once, here, for every part of design/): the closed-loop pole with
// the largest real part, i.e. the one nearest the imaginary axis, together with its conjugate.
// Why: its mode decays slowest, so it sets the tail of the step response and the settling time.
// When a zero nearly cancels that pole (a small residue), a faster pair dominates the visible
// response instead; the region test cannot see that, the simulated response band
// (response_band.h) does, which is why both bands are reported.
#ifndef LOOPWRIGHT_DESIGN_SPECS_H_
#define LOOPWRIGHT_DESIGN_SPECS_H_

#include <complex>
#include <optional>
#include <string>

namespace lw {

// The region of the s-plane for the dominant pole; zero means "no bound".
struct Region {
  double wn_min = 0.0;     // |s| >= wn_min (rad/s)
  double zeta_min = 0.0;   // -Re(s) >= zeta_min |s|, 0 <= zeta_min < 1
  double sigma_min = 0.0;  // -Re(s) >= sigma_min (1/s)
  double wd_min = 0.0;     // |Im(s)| >= wd_min (rad/s)
  double decay_min = 0.0;  // every non-dominant pole: -Re(s) >= decay_min (1/s)

  // The dominant-pole bounds (not stability, not decay_min) hold at s, with a tolerance of
  // `tol` relative to |s| (0 for the strict test).
  bool ContainsDominant(std::complex<double> s, double tol = 0.0) const;
  // "wn >= 3 rad/s, zeta >= 0.59, sigma >= 1 1/s", or "stability only".
  std::string ToString() const;
};

// Zeta, wn, sigma and wd of a pole (zeta = 1 for a real pole, wn = |s|).
struct PoleShape {
  double zeta = 1.0, wn = 0.0, sigma = 0.0, wd = 0.0;
};
PoleShape ShapeOf(std::complex<double> s);

struct Specs {
  std::optional<double> rise_max;       // s, > 0 (10-90 % rise time)
  std::optional<double> overshoot_max;  // percent, 0 < P < 100
  std::optional<double> zeta_min;       // 0 <= Z < 1
  std::optional<double> settle_max;     // s, > 0
  double settle_band = 0.02;            // 0.01 or 0.02
  std::optional<double> peak_max;       // s, > 0
  std::optional<double> wn_min;         // rad/s, > 0
  double decay_min = 0.0;               // 1/s, >= 0

  // Throws UsageError naming the field, its value and the rule it broke.
  void Validate() const;
  // The region these specs ask of the dominant pole (Validate() first).
  Region ToRegion() const;
  // One line listing the given requirements, e.g. "overshoot <= 10 %, settling (2 %) <= 4 s".
  std::string ToString() const;
};

// Zeta of the second-order pair whose step overshoots by `percent` (0 < percent < 100).
double ZetaForOvershoot(double percent);
// Overshoot in percent of the second-order pair with damping zeta (0 <= zeta < 1); 0 for >= 1.
double OvershootForZeta(double zeta);
// The constant c in sigma >= c / settle_max: 4.6 for the 1 % band, 4.0 for 2 %.
double SettleConstant(double band);
// The constant in wn >= 1.8 / rise_max.
inline constexpr double kRiseConstant = 1.8;

}  // namespace lw

#endif  // LOOPWRIGHT_DESIGN_SPECS_H_
