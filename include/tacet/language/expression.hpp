#pragma once
// Evaluates expressions of the syntax tree to numbers. Names look up params
// through a Scope chain (a block instance's arguments, then the file's params);
// quantity literals are decoded and their units checked against the dimension
// the value is for.

#include <functional>
#include <map>
#include <optional>
#include <string>

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

/// `expr` without the single-term chains a parser wraps around every operand.
const ast::Expr& unwrap(const ast::Expr& expr);

/// The offset and length of the whole expression's text.
ast::Located extent(const ast::Expr& expr);

}  // namespace tacet
