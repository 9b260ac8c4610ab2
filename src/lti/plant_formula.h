// The plant formula parser: ordinary maths for a transfer function in s, e.g.
//   2.5*exp(-0.3*s)/((4*s+1)*(0.6*s+1))     1/(s*(s+1)*(s+2))     9/(s^2+1.2*s+9)
// Grammar: numbers (with exponents, 1e-3), the variable s, + - * /, unary minus, ^ with a
// non-negative integer power, parentheses, and at most one dead-time factor exp(-T*s) (also
// exp(-s*T), exp(-T s) is not accepted: multiplication is explicit) with T >= 0 a number.
// Spaces are ignored. The result must be a ratio of polynomials; the exp factor may stand anywhere
// a factor may (it multiplies the whole formula).
// No common factors are cancelled, except that fractions with identical denominators are added
// over that denominator (1/(s+1) + 2/(s+1) is 3/(s+1)).
// Limits: powers and the degree in s up to 100 (numerator and denominator), and at most 200
// nested levels of parentheses and signs.
#ifndef LOOPWRIGHT_LTI_PLANT_FORMULA_H_
#define LOOPWRIGHT_LTI_PLANT_FORMULA_H_

#include <string_view>

#include "lti/error.h"
#include "lti/transfer_function.h"

namespace lw {

// A bad formula: what() reads like
//   "plant formula, column 9: expected ')' after '(4*s+1', found end of formula".
class FormulaError : public UsageError {
 public:
  FormulaError(int column, const std::string& message) : UsageError(message), column_(column) {}
  int column() const { return column_; }  // 1-based

 private:
  int column_;
};

TransferFunction ParsePlantFormula(std::string_view formula);

}  // namespace lw

#endif  // LOOPWRIGHT_LTI_PLANT_FORMULA_H_
