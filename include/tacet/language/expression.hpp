#pragma once
// Evaluates expressions of the syntax tree to numbers. Names look up params
// through a Scope chain (a block instance's arguments, then the file's params);
// quantity literals are decoded and their units checked against the dimension
// the value is for.

#include <complex>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "tacet/language/ast.hpp"
#include "tacet/language/diagnostics.hpp"
#include "tacet/language/units.hpp"

namespace tacet {

struct ParamValue {
  double value = 0;
  SourceLocation where;
};

/// Names visible to an expression; `parent` is searched when a name is missing.
struct Scope {
  std::map<std::string, ParamValue> params;
  const Scope* parent = nullptr;

  const ParamValue* find(const std::string& name) const;
  /// Every visible name, for "did you mean" hints.
  std::vector<std::string> names() const;
};

/// Evaluates `expr` from file `file_id`. Reports problems (unknown name, unit
/// that does not fit `expected`, division by zero, overflow) and returns
/// nullopt; a result is always finite.
std::optional<double> evaluate(const ast::Expr& expr, int file_id, const Scope& scope,
                               Dimension expected, Diagnostics& diagnostics);

/// An expression in the complex frequency s (rad/s), for a target curve
/// (`target=1/(1+s*75u)`): compiled once from the syntax tree, with every
/// name and number other than `s` and `j` (the imaginary unit) resolved to a
/// constant, then evaluated at many s. Arithmetic is complex; the functions
/// are those that make sense for a complex argument (kComplexFunctions).
class ComplexExpression {
 public:
  enum class Op { constant, s, negate, add, subtract, multiply, divide, power, call };
  struct Step {
    Op op = Op::constant;
    std::complex<double> value;  ///< Op::constant
    std::size_t function = 0;    ///< Op::call: index into the function table
  };

  /// The value at s; not finite where the expression has a pole (a caller checks).
  std::complex<double> operator()(std::complex<double> s) const;

  std::vector<Step> steps;  ///< postfix order
};

/// The functions an expression in s may call, for hints and docs.
std::vector<std::string> complex_function_names();

/// Compiles `expr` as an expression in s. Names look up params through
/// `scope` (a param named s or j is shadowed here); numbers are decoded with
/// their units as for a param. Reports problems and returns nullopt.
std::optional<ComplexExpression> compile_in_s(const ast::Expr& expr, int file_id, const Scope& scope,
                                              Diagnostics& diagnostics);

/// Whether `expr` names s or j anywhere (then it is an expression in s).
bool mentions_s(const ast::Expr& expr);

/// `expr` without the single-term chains a parser wraps around every operand.
const ast::Expr& unwrap(const ast::Expr& expr);

/// The offset and length of the whole expression's text.
ast::Located extent(const ast::Expr& expr);

}  // namespace tacet
