// Padé approximation of a dead time:
//   exp(-T s) ~= P_n(-T s) / P_n(T s),   P_n(x) = sum_{k=0..n} (2n-k)! n! / ((2n)! k! (n-k)!) x^k,
// the diagonal [n/n] approximant (closed form in e.g. Franklin, Powell & Emami-Naeini, Feedback
// Control of Dynamic Systems; from memory). Orders 1 to 8.
#ifndef LOOPWRIGHT_LTI_PADE_H_
#define LOOPWRIGHT_LTI_PADE_H_

#include "lti/transfer_function.h"

namespace lw {

// The [n/n] approximant of exp(-T s) as a delay-free transfer function. T >= 0; T = 0 gives 1.
// Throws UsageError when order is outside 1..8 or T is negative or not finite.
TransferFunction PadeDelay(double delay, int order);

// g with its exp(-T s) factor replaced by PadeDelay(T, order); g itself when T = 0.
TransferFunction ApplyPade(const TransferFunction& g, int order);

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_PADE_H_
