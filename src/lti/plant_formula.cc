// Recursive-descent parser for plant formulas (grammar in plant_formula.h):
//
//   formula := sum END
//   sum     := product (('+' | '-') product)*
//   product := signed (('*' | '/') signed)*
//   signed  := ('-' | '+') signed | power
//   power   := primary ('^' INTEGER)?
//   primary := NUMBER | 's' | '(' sum ')' | 'exp' '(' '-' delay ')'
//   delay   := NUMBER '*' 's' | 's' ('*' NUMBER)?
//
// Every value is a ratio of polynomials (the Rational below) that may carry the one dead-time
// factor; the factor may be multiplied in anywhere but never added, divided by or raised to a
// power, since the result would not be N(s)/D(s) exp(-T s) with T >= 0.
#include "lti/plant_formula.h"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <string>

namespace lw {
namespace {

// Limits that keep hostile input cheap: plants are low order, and every nesting level (a
// parenthesis or a sign) costs a few stack frames.
constexpr int kMaxDegree = 100;
// A single power may be as large as the largest degree, so every ToString() reads back.
constexpr int kMaxPower = kMaxDegree;
constexpr int kMaxDepth = 200;

// N(s)/D(s), optionally times exp(-T s). exp_column is the column of the exp factor (0: none).
struct Rational {
  Polynomial num = Polynomial::Constant(1.0);
  Polynomial den = Polynomial::Constant(1.0);
  double delay = 0.0;
  int exp_column = 0;
};

class Parser {
 public:
  explicit Parser(std::string_view text) : text_(text) {}

  TransferFunction Parse() {
    Rational r = Sum();
    SkipSpace();
    if (!AtEnd()) {
      if (Peek() == ')') Fail("unmatched ')'; there is no '(' before it");
      Fail("expected an operator (+ - * / ^) or end of formula, found " + Describe());
    }
    try {
      return TransferFunction(r.num, r.den, r.delay);
    } catch (const UsageError&) {
      // Only the scaling to a monic denominator can fail here, by overflowing.
      FailAt(1,
             "the coefficients overflow when the denominator is scaled to leading coefficient 1");
    }
  }

 private:
  // --- Characters -------------------------------------------------------------------------
  bool AtEnd() const { return pos_ >= text_.size(); }
  char Peek() const { return AtEnd() ? '\0' : text_[pos_]; }
  int Column() const { return static_cast<int>(pos_) + 1; }
  void SkipSpace() {
    while (!AtEnd() && std::isspace(static_cast<unsigned char>(text_[pos_]))) ++pos_;
  }
  // Skips spaces, then consumes c when it is next.
  bool Accept(char c) {
    SkipSpace();
    if (Peek() != c) return false;
    ++pos_;
    return true;
  }
  static bool IsNameStart(char c) {
    return std::isalpha(static_cast<unsigned char>(c)) || c == '_';
  }
  static bool IsNameChar(char c) {
    return IsNameStart(c) || std::isdigit(static_cast<unsigned char>(c));
  }
  static bool IsNumberStart(char c) {
    return std::isdigit(static_cast<unsigned char>(c)) || c == '.';
  }

  // The token at the current position, for "found ..." (spaces already skipped).
  std::string Describe() const {
    if (AtEnd()) return "end of formula";
    const char c = Peek();
    size_t end = pos_ + 1;
    if (IsNameStart(c)) {
      while (end < text_.size() && IsNameChar(text_[end])) ++end;
    } else if (IsNumberStart(c)) {
      end = NumberEnd(pos_);
    } else if (!std::isprint(static_cast<unsigned char>(c))) {
      char buf[8];
      std::snprintf(buf, sizeof(buf), "0x%02X", static_cast<unsigned char>(c));
      return std::string("the byte ") + buf;
    }
    return Quote(text_.substr(pos_, end - pos_));
  }

  static std::string Quote(std::string_view v) {
    std::string r(1, '\'');
    r.append(v);
    r.push_back('\'');
    return r;
  }

  [[noreturn]] void FailAt(int column, const std::string& what) const {
    throw FormulaError(column, "plant formula, column " + std::to_string(column) + ": " + what);
  }
  [[noreturn]] void Fail(const std::string& what) const { FailAt(Column(), what); }

  // Runs a polynomial operation, turning an overflow into a formula error at `column`.
  template <typename F>
  Polynomial Checked(int column, F f) const {
    try {
      return f();
    } catch (const UsageError&) {
      FailAt(column, "the coefficients overflow (a result is not a finite number)");
    }
  }

  // --- Numbers ----------------------------------------------------------------------------
  // One past the end of the number starting at i: digits [. digits] [e [+-] digits]. The exponent
  // part is only taken when digits follow, so the caller sees a malformed one as an error.
  size_t NumberEnd(size_t i) const {
    auto digit = [&](size_t k) {
      return k < text_.size() && std::isdigit(static_cast<unsigned char>(text_[k]));
    };
    while (digit(i)) ++i;
    if (i < text_.size() && text_[i] == '.') {
      ++i;
      while (digit(i)) ++i;
    }
    if (i < text_.size() && (text_[i] == 'e' || text_[i] == 'E')) {
      size_t k = i + 1;
      if (k < text_.size() && (text_[k] == '+' || text_[k] == '-')) ++k;
      if (digit(k)) {
        while (digit(k)) ++k;
        i = k;
      }
    }
    return i;
  }

  double Number() {
    SkipSpace();
    const int column = Column();
    const size_t end = NumberEnd(pos_);
    const std::string_view token = text_.substr(pos_, end - pos_);
    if (token == ".") FailAt(column, "expected a number, found '.'");
    if (end < text_.size() && (text_[end] == 'e' || text_[end] == 'E')) {
      const std::string_view written = text_.substr(pos_, end + 1 - pos_);
      pos_ = end + 1;
      Fail("expected digits in the exponent of " + Quote(written) + ", found " + Describe());
    }
    double v = 0.0;
    auto res = std::from_chars(token.data(), token.data() + token.size(), v);
    if (res.ec != std::errc() || res.ptr != token.data() + token.size() || !std::isfinite(v)) {
      FailAt(column, "the number " + Quote(token) + " is out of range");
    }
    pos_ = end;
    return v;
  }

  std::string Name() {
    const size_t start = pos_;
    while (!AtEnd() && IsNameChar(Peek())) ++pos_;
    return std::string(text_.substr(start, pos_ - start));
  }

  // --- Limits -----------------------------------------------------------------------------
  [[noreturn]] void FailDegree(int column, int degree) const {
    FailAt(column, "the formula reaches degree " + std::to_string(degree) + " in s; at most " +
                       std::to_string(kMaxDegree) + " is supported");
  }
  void CheckDegree(int column, const Rational& r) const {
    const int degree = std::max(r.num.degree(), r.den.degree());
    if (degree > kMaxDegree) FailDegree(column, degree);
  }
  // Counts the nesting depth for as long as it lives.
  class DepthGuard {
   public:
    explicit DepthGuard(Parser& p) : p_(p) {
      if (++p_.depth_ > kMaxDepth) {
        --p_.depth_;
        p_.Fail("the formula nests more than " + std::to_string(kMaxDepth) +
                " levels of parentheses and signs");
      }
    }
    ~DepthGuard() { --p_.depth_; }
    DepthGuard(const DepthGuard&) = delete;
    DepthGuard& operator=(const DepthGuard&) = delete;

   private:
    Parser& p_;
  };

  // --- Grammar ----------------------------------------------------------------------------
  Rational Sum() {
    Rational left = Product();
    while (true) {
      SkipSpace();
      const char op = Peek();
      if (op != '+' && op != '-') return left;
      const int column = Column();
      ++pos_;
      Rational right = Product();
      const int exp_column = left.exp_column ? left.exp_column : right.exp_column;
      if (exp_column) {
        FailAt(exp_column,
               "the dead-time factor exp(...) must multiply the whole formula, but here it is "
               "part of a sum");
      }
      // a/b +- c/d = (a d +- c b) / (b d); equal denominators are kept as they are.
      Rational r;
      if (left.den == right.den) {
        r.num = Checked(column,
                        [&] { return op == '+' ? left.num + right.num : left.num - right.num; });
        r.den = left.den;
      } else {
        const Polynomial ad = Checked(column, [&] { return left.num * right.den; });
        const Polynomial cb = Checked(column, [&] { return right.num * left.den; });
        r.num = Checked(column, [&] { return op == '+' ? ad + cb : ad - cb; });
        r.den = Checked(column, [&] { return left.den * right.den; });
      }
      CheckDegree(column, r);
      left = r;
    }
  }

  Rational Product() {
    Rational left = Signed();
    while (true) {
      SkipSpace();
      const char op = Peek();
      if (op != '*' && op != '/') return left;
      const int column = Column();
      ++pos_;
      Rational right = Signed();
      if (op == '/') {
        if (right.exp_column) {
          FailAt(right.exp_column,
                 "the dead-time factor exp(...) stands in a denominator, which would mean a "
                 "negative dead time; write it in the numerator");
        }
        if (right.num.is_zero()) FailAt(column, "division by zero (the divisor is identically 0)");
        std::swap(right.num, right.den);
      }
      left.num = Checked(column, [&] { return left.num * right.num; });
      left.den = Checked(column, [&] { return left.den * right.den; });
      CheckDegree(column, left);
      if (right.exp_column) {
        left.exp_column = right.exp_column;
        left.delay = right.delay;
      }
    }
  }

  Rational Signed() {
    SkipSpace();
    const DepthGuard guard(*this);
    if (Peek() == '-' || Peek() == '+') {
      const char sign = Peek();
      const int column = Column();
      ++pos_;
      Rational r = Signed();
      if (sign == '-') r.num = Checked(column, [&] { return -r.num; });
      return r;
    }
    return Power();
  }

  Rational Power() {
    const size_t start = (SkipSpace(), pos_);
    Rational base = Primary();
    if (!Accept('^')) return base;
    const int caret_column = Column() - 1;
    SkipSpace();
    if (!std::isdigit(static_cast<unsigned char>(Peek()))) {
      Fail("expected a non-negative integer power after '^', found " + Describe());
    }
    const size_t end = NumberEnd(pos_);
    const std::string_view token = text_.substr(pos_, end - pos_);
    if (token.find_first_not_of("0123456789") != std::string_view::npos) {
      Fail("the power must be a non-negative integer, found " + Quote(token));
    }
    int n = 0;
    auto res = std::from_chars(token.data(), token.data() + token.size(), n);
    if (res.ec != std::errc() || n > kMaxPower) {
      Fail("the power " + std::string(token) + " is too large; at most " +
           std::to_string(kMaxPower) + " is allowed");
    }
    pos_ = end;
    if (base.exp_column) {
      FailAt(caret_column,
             "the dead-time factor exp(...) cannot be raised to a power; write one "
             "exp(-T*s) with the whole dead time T");
    }
    SkipSpace();
    if (Peek() == '^') {
      Fail("a power cannot itself be raised to a power; use parentheses, e.g. '(" +
           std::string(text_.substr(start, pos_ - start)) + ")^2'");
    }
    const int degree = std::max(base.num.degree(), base.den.degree()) * n;
    if (degree > kMaxDegree) FailDegree(caret_column, degree);
    Rational r;
    for (int i = 0; i < n; ++i) {
      r.num = Checked(caret_column, [&] { return r.num * base.num; });
      r.den = Checked(caret_column, [&] { return r.den * base.den; });
    }
    return r;
  }

  Rational Primary() {
    SkipSpace();
    const int column = Column();
    const char c = Peek();
    if (IsNumberStart(c)) {
      Rational r;
      r.num = Polynomial::Constant(Number());
      return r;
    }
    if (c == '(') {
      const size_t open = pos_;
      ++pos_;
      Rational r = Sum();
      if (!Accept(')')) {
        const std::string inner(text_.substr(open, pos_ - open));
        Fail("expected ')' after '" + inner + "', found " + Describe());
      }
      return r;
    }
    if (IsNameStart(c)) {
      const std::string name = Name();
      if (name == "s") {
        Rational r;
        r.num = Polynomial({1.0, 0.0});
        return r;
      }
      if (name == "exp") return Exp(column);
      FailAt(column, "unknown name '" + name + "': the variable is s");
    }
    Fail("expected a number, s, '(' or exp(-T*s), found " + Describe());
  }

  // Consumes the variable s, or fails saying what stands there instead.
  void ExpectS(const char* where) {
    SkipSpace();
    const int column = Column();
    const std::string found = Describe();
    if (IsNameStart(Peek()) && Name() == "s") return;
    FailAt(column, std::string("expected s ") + where + ", found " + found);
  }

  // After the name 'exp' at `column`: '(' '-' delay ')'.
  Rational Exp(int column) {
    if (!Accept('(')) Fail("expected '(' after 'exp', found " + Describe());
    const bool negative = Accept('-');
    SkipSpace();
    double t = 1.0;
    if (IsNumberStart(Peek())) {
      t = Number();
      if (!Accept('*')) Fail("expected '*' after the dead time in exp(-T*s), found " + Describe());
      ExpectS("after '*' in exp(-T*s)");
    } else if (IsNameStart(Peek())) {
      ExpectS("or a number in exp(-T*s)");
      if (Accept('*')) {
        SkipSpace();
        if (!IsNumberStart(Peek())) {
          Fail("expected the dead time after 's*' in exp(-s*T), found " + Describe());
        }
        t = Number();
      }
    } else {
      Fail("expected the exponent -T*s (T >= 0 in seconds) inside exp(...), found " + Describe());
    }
    if (!Accept(')')) Fail("expected ')' to close exp(-T*s), found " + Describe());
    if (!negative && t != 0.0) {
      FailAt(column,
             "exp(...) has a positive exponent, which would be a negative dead time; a dead time "
             "is written exp(-T*s) with T >= 0");
    }
    if (exp_seen_) {
      FailAt(column,
             "a second dead-time factor exp(...); at most one is allowed, so write the "
             "whole dead time in one exp(-T*s)");
    }
    exp_seen_ = true;
    Rational r;
    r.delay = t;
    r.exp_column = column;
    return r;
  }

  std::string_view text_;
  size_t pos_ = 0;
  bool exp_seen_ = false;
  int depth_ = 0;
};

}  // namespace

TransferFunction ParsePlantFormula(std::string_view formula) { return Parser(formula).Parse(); }

}  // namespace lw
