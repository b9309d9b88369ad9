// Expressions evaluated to numbers: precedence, SI units checked against the
// value's dimension, params through the scope chain, functions, and the
// diagnostics for what cannot be evaluated.

#include "tacet/language/expression.hpp"

#include <catch2/catch.hpp>

#include <cmath>
#include <optional>
#include <string>

#include "tacet/language/parser.hpp"
#include "tacet/language/source.hpp"

using namespace tacet;

namespace {

struct Outcome {
  std::optional<double> value;
  std::string diagnostics;
};

Outcome evaluate_text(const std::string& text, Dimension expected, const Scope& scope = {}) {
  SourceManager sources;
  const int id = sources.add("expr", text);
  Diagnostics diagnostics(sources);
  const auto expr = parse_expression(sources.file(id).text, id, diagnostics);
  REQUIRE(expr.has_value());
  Outcome out;
  out.value = evaluate(*expr, id, scope, expected, diagnostics);
  out.diagnostics = diagnostics.render_all();
  return out;
}

double value_of(const std::string& text, Dimension expected = Dimension::none,
                const Scope& scope = {}) {
  const Outcome out = evaluate_text(text, expected, scope);
  INFO(out.diagnostics);
  REQUIRE(out.value.has_value());
  return *out.value;
}

}  // namespace

TEST_CASE("arithmetic follows the usual precedence and ^ groups to the right", "[expression]") {
  CHECK(value_of("1 + 2 * 3 ^ 2") == 19);
  CHECK(value_of("2 ^ 3 ^ 2") == 512);
  CHECK(value_of("(1 + 2) * 3") == 9);
  // ^ binds tighter than a leading minus, as in mathematics (and Python's **).
  CHECK(value_of("-2 ^ 2 + 10 / 4") == Approx(-1.5));
}

TEST_CASE("SI prefixes and units scale the number when the unit fits the value", "[expression]") {
  CHECK(value_of("4.7k", Dimension::resistance) == Approx(4700));
  CHECK(value_of("10nF", Dimension::capacitance) == Approx(10e-9));
  CHECK(value_of("2 * 1.5kHz", Dimension::frequency) == Approx(3000));
  // Decibels of a field quantity: ratio = 10^(dB/20) (IEC 60027-3); the sign
  // belongs to the decibels, so -6dB is about one half, not minus two.
  CHECK(value_of("-6dB", Dimension::gain) == Approx(std::pow(10.0, -6.0 / 20)));
}

TEST_CASE("a unit that does not fit the value is reported at the quantity", "[expression]") {
  const Outcome out = evaluate_text("1 + 10nF", Dimension::resistance);
  CHECK_FALSE(out.value);
  CHECK(out.diagnostics.find("expr:1:5: error: unit 'nF' is") == 0);
}

TEST_CASE("names are looked up in the scope, then its parent, and the nearer one wins",
          "[expression]") {
  Scope file;
  file.params["rg"] = {1e3, {}};
  file.params["gain"] = {10, {}};
  Scope block;
  block.parent = &file;
  block.params["gain"] = {2, {}};
  CHECK(value_of("rg * (gain - 1)", Dimension::resistance, block) == Approx(1e3));
  CHECK(value_of("rg * (gain - 1)", Dimension::resistance, file) == Approx(9e3));
  CHECK(value_of("2 * pi", Dimension::none) == Approx(2 * 3.14159265358979323846));
}

TEST_CASE("an unknown name suggests the nearest visible one", "[expression]") {
  Scope scope;
  scope.params["r_gain"] = {1e3, {}};
  const Outcome out = evaluate_text("r_gian * 2", Dimension::resistance, scope);
  CHECK_FALSE(out.value);
  CHECK(out.diagnostics ==
        "expr:1:1: error: unknown name 'r_gian'\n"
        "r_gian * 2\n"
        "^~~~~~\n"
        "hint: did you mean 'r_gain'?\n");
}

TEST_CASE("functions evaluate, and refuse arguments outside their domain", "[expression]") {
  // Two resistors in parallel: R1 R2 / (R1 + R2) (Kirchhoff's laws).
  CHECK(value_of("par(10k, 10k)", Dimension::resistance) == Approx(5e3));
  CHECK(value_of("sqrt(16) + max(1, 2)") == Approx(6));
  CHECK(value_of("db(10)") == Approx(20));
  CHECK_FALSE(evaluate_text("sqrt(-1)", Dimension::none).value);
  CHECK_FALSE(evaluate_text("log10(0)", Dimension::none).value);
  CHECK_FALSE(evaluate_text("max(1)", Dimension::none).value);
}

TEST_CASE("division by zero and overflow are errors, never an infinite value", "[expression]") {
  const Outcome zero = evaluate_text("1k / (2 - 2)", Dimension::resistance);
  CHECK_FALSE(zero.value);
  CHECK(zero.diagnostics.find("error: division by zero") != std::string::npos);
  const Outcome overflow = evaluate_text("10 ^ 400", Dimension::none);
  CHECK_FALSE(overflow.value);
  CHECK(overflow.diagnostics.find("error: value overflows") != std::string::npos);
}

TEST_CASE("sums and products associate to the left; a sign after an operator is a sign",
          "[expression]") {
  CHECK(value_of("8 - 3 - 2") == 3);
  CHECK(value_of("12 / 2 / 3") == 2);
  CHECK(value_of("2 * -3") == -6);
  CHECK(value_of("2 ^ -1") == 0.5);
}

TEST_CASE("every function and pi give their textbook values", "[expression]") {
  CHECK(value_of("undb(20)") == Approx(10));
  CHECK(value_of("log10(1000)") == Approx(3));
  CHECK(value_of("ln(exp(2))") == Approx(2));
  CHECK(value_of("abs(-3) + min(1, 2)") == 4);
  CHECK(value_of("2 * pi") == Approx(6.283185307179586));
  CHECK(value_of("atan(1) * 4") == Approx(3.141592653589793));
  CHECK(value_of("sin(pi / 2) + cos(0)") == Approx(2));
}

TEST_CASE("what cannot be evaluated is reported word for word", "[expression]") {
  CHECK(evaluate_text("10kx", Dimension::resistance).diagnostics ==
        "expr:1:1: error: unknown unit or prefix 'kx'\n"
        "10kx\n"
        "^~~~\n");
  CHECK(evaluate_text("1 / (2 - 2)", Dimension::none).diagnostics ==
        "expr:1:6: error: division by zero\n"
        "1 / (2 - 2)\n"
        "     ^~~~~\n");  // the divisor, inside its parentheses
  CHECK(evaluate_text("sqrt(-1)", Dimension::none).diagnostics ==
        "expr:1:1: error: sqrt() is not defined for this argument\n"
        "sqrt(-1)\n"
        "^~~~~~~~\n");
  CHECK(evaluate_text("sqr(4)", Dimension::none).diagnostics ==
        "expr:1:1: error: unknown function 'sqr'\n"
        "sqr(4)\n"
        "^~~\n"
        "hint: did you mean 'sqrt'?\n");
  CHECK(evaluate_text("par(1k)", Dimension::none).diagnostics ==
        "expr:1:1: error: par() takes 2 arguments, not 1\n"
        "par(1k)\n"
        "^~~~~~~\n");
}

// ---- expressions in s -------------------------------------------------------

namespace {

struct Compiled {
  std::optional<ComplexExpression> expression;
  std::string diagnostics;
};

Compiled compile_text(const std::string& text, const Scope& scope = {}) {
  SourceManager sources;
  const int id = sources.add("expr", text);
  Diagnostics diagnostics(sources);
  const auto expr = parse_expression(sources.file(id).text, id, diagnostics);
  REQUIRE(expr.has_value());
  Compiled out;
  out.expression = compile_in_s(*expr, id, scope, diagnostics);
  out.diagnostics = diagnostics.render_all();
  return out;
}

std::complex<double> value_in_s(const std::string& text, std::complex<double> s, const Scope& scope = {}) {
  const Compiled c = compile_text(text, scope);
  INFO(c.diagnostics);
  REQUIRE(c.expression.has_value());
  return (*c.expression)(s);
}

}  // namespace

TEST_CASE("an expression in s does complex arithmetic with s and j", "[expression]") {
  using C = std::complex<double>;
  const C s(1, 2);
  // Against std::complex, the C++ standard's complex arithmetic.
  CHECK(value_in_s("(1 + s*2) / (3 - j)", s) == (1.0 + s * 2.0) / (3.0 - C(0, 1)));
  CHECK(value_in_s("-s + 2*j", s) == -s + C(0, 2));
  CHECK(value_in_s("s^2", C(0, 1)) == C(-1, 0));  // a whole power is exact: j^2 = -1
  CHECK(value_in_s("s^-2", C(0, 2)) == C(-0.25, 0));
  CHECK(value_in_s("2^s", C(1, 0)) == C(2, 0));
  CHECK(std::abs(value_in_s("s^0.5", C(-4, 0)) - C(0, 2)) < 1e-15);  // principal branch
}

TEST_CASE("functions of an expression in s take complex arguments", "[expression]") {
  using C = std::complex<double>;
  CHECK(std::abs(value_in_s("sqrt(s)", C(-4, 0)) - C(0, 2)) < 1e-15);
  CHECK(std::abs(value_in_s("exp(j*pi)", C(0, 0)) - C(-1, 0)) < 1e-15);  // Euler's identity
  CHECK(value_in_s("abs(s)", C(3, 4)) == C(5, 0));
  CHECK(value_in_s("re(s) + im(s)", C(3, 4)) == C(7, 0));
  CHECK(value_in_s("conj(s)", C(3, 4)) == C(3, -4));
  CHECK(value_in_s("arg(s)", C(0, 1)) == C(std::acos(0.0), 0));
  CHECK(value_in_s("db(s)", C(0, 10)) == C(20, 0));
  CHECK(std::abs(value_in_s("undb(20)", C(0, 0)) - C(10, 0)) < 1e-14);
  // Two impedances in parallel, Z1 Z2 / (Z1 + Z2): a resistor and a capacitor (Kirchhoff's laws).
  const C s(0, 1e4);
  CHECK(std::abs(value_in_s("par(1k, 1/(s*100n))", s) - (1e3 / (1.0 + s * 1e3 * 100e-9))) < 1e-12);
  CHECK(std::abs(value_in_s("log10(s) + ln(s)", C(10, 0)) - C(1 + std::log(10.0), 0)) < 1e-15);
}

TEST_CASE("an expression in s reads params, units and dB as a param does", "[expression]") {
  using C = std::complex<double>;
  Scope scope;
  scope.params["tau"] = {75e-6, {}};
  scope.params["s"] = {42, {}};  // a param named s is shadowed by the complex frequency
  const C s(0, 1 / 75e-6);
  CHECK(std::abs(value_in_s("1/(1 + s*tau)", s, scope) - 1.0 / C(1, 1)) < 1e-15);
  CHECK(std::abs(value_in_s("1/(1 + s*75u)", s) - 1.0 / C(1, 1)) < 1e-15);
  CHECK(std::abs(value_in_s("-6dB * s", C(1, 0)) - C(std::pow(10.0, -6 / 20.0), 0)) < 1e-15);
  CHECK(value_in_s("max(2, 3) * s", C(0, 1)) == C(0, 3));  // a real function where s is absent
}

TEST_CASE("what an expression in s cannot compile is reported word for word", "[expression]") {
  CHECK(compile_text("1/(1 + s*tua)").diagnostics ==
        "expr:1:10: error: unknown name 'tua'\n"
        "1/(1 + s*tua)\n"
        "         ^~~\n"
        "hint: declare it with 'param tua = ...' before this line\n");
  CHECK(compile_text("min(s, 2)").diagnostics ==
        "expr:1:1: error: unknown function 'min' in an expression in s\n"
        "min(s, 2)\n"
        "^~~\n"
        "hint: did you mean 'sin'?\n");
  CHECK(compile_text("par(s)").diagnostics ==
        "expr:1:1: error: par() takes 2 arguments, not 1\n"
        "par(s)\n"
        "^~~~~~\n");
}

TEST_CASE("s and j in a real value are an error at their position", "[expression]") {
  CHECK(evaluate_text("1k * (1 + s)", Dimension::resistance).diagnostics ==
        "expr:1:11: error: 's' is the complex frequency, which only an expression in s may use\n"
        "1k * (1 + s)\n"
        "          ^\n"
        "hint: a value here is a real number; expressions in s are written after target=\n");
  CHECK(evaluate_text("2*j", Dimension::none).diagnostics ==
        "expr:1:3: error: 'j' is the imaginary unit, which only an expression in s may use\n"
        "2*j\n"
        "  ^\n"
        "hint: a value here is a real number; expressions in s are written after target=\n");
  Scope scope;  // a param named s keeps working in a real value, as it always has
  scope.params["s"] = {2, {}};
  CHECK(value_of("s * 3", Dimension::none, scope) == 6);
}
