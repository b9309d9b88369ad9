#pragma once
// The syntax tree of a netlist, exactly as written: names and numbers are still
// text, nothing is resolved. Every node records the byte offset (and length) of
// the text it came from, so elaboration can report at the right spot.
//
// The node types mirror the productions of grammar/tacet.ebnf. Only the
// variant and forward_ast helpers of Spirit X3 are used here; the parser
// itself lives in src/language/parser/.

#include <cstdint>
#include <string>
#include <vector>

#include <boost/optional.hpp>
#include <boost/spirit/home/x3/support/ast/variant.hpp>

namespace tacet::ast {

namespace x3 = boost::spirit::x3;

/// Where a node's text starts and how long it is, in bytes of its file.
struct Located {
  std::uint32_t offset = 0;
  std::uint32_t length = 0;
};

struct Identifier : Located {
  std::string text;
};

/// A number as written: `digits` is the numeral ("4.7", "1e-3"), `suffix` the
/// SI prefix and unit glued to it ("kΩ", "nF", "dB", "V/us", "%"), or empty.
/// Elaboration decides what the suffix means for the element at hand.
struct Quantity : Located {
  std::string digits;
  std::string suffix;
};

struct Call;
struct Unary;
struct Chain;

struct Expr : x3::variant<Quantity, Identifier, x3::forward_ast<Call>, x3::forward_ast<Unary>,
                          x3::forward_ast<Chain>> {
  using base_type::base_type;
  using base_type::operator=;
};

/// `name(arg, ...)`: sqrt, log10, ln, exp, abs, db (ratio to dB), undb.
struct Call : Located {
  Identifier function;
  std::vector<Expr> args;
};

/// `-x` or `+x`.
struct Unary : Located {
  char op = '-';
  Expr operand;
};

struct Operation : Located {
  char op = '+';  ///< one of + - * / ^
  Expr operand;
};

/// `first op operand op operand ...` for operators of one precedence level.
/// + - * / associate to the left; a `^` chain has exactly one operation.
struct Chain : Located {
  Expr first;
  std::vector<Operation> rest;
};

/// One connection in `( ... )`; `polarity` is '+' or '-' for op-amp inputs, else 0.
struct Terminal : Located {
  char polarity = 0;
  std::string node;
};

/// `(a, b)` or, for controlled sources, `(out_p, out_n; ctl_p, ctl_n)`.
struct Connections : Located {
  std::vector<Terminal> first;
  std::vector<Terminal> second;  ///< after ';', empty when there is none
};

/// `key=value`, or a bare `key` (a flag such as `noiseless`, or a block
/// parameter without a default).
struct Option : Located {
  Identifier key;
  boost::optional<Expr> value;
};

struct Title : Located {
  std::string text;
};

struct Include : Located {
  std::string path;  ///< as written, without quotes
};

/// `ambient 40C`, or a range `ambient 0C..70C` (then `high` is its hot end).
struct Ambient : Located {
  Expr value;
  boost::optional<Expr> high;
};

/// `supply +15V -15V ripple=10mV ripple_f=100Hz`: the rails and their options.
struct Supply : Located {
  Expr high;
  Expr low;
  std::vector<Option> options;
};

struct Param : Located {
  Identifier name;
  Expr value;
};

/// Any element or block instance: `res R1 (a, b) 10k tol=1%`,
/// `opamp U1 (+a, -b, out) model_name`, `use F1 (a, b) block_name r=1k`.
struct Instance : Located {
  Identifier keyword;  ///< res cap ind vsrc isrc vcvs vccs opamp use
  Identifier name;
  Connections connections;
  boost::optional<Expr> value;  ///< value, model name or block name
  std::vector<Option> options;
};

struct ModelEntry : Located {
  Identifier key;
  Expr value;
};

struct Model : Located {
  Identifier name;
  Identifier kind;  ///< "opamp" is the only kind so far
  std::vector<ModelEntry> entries;
};

struct BlockStatement : x3::variant<Param, Instance> {
  using base_type::base_type;
  using base_type::operator=;
};

struct Block : Located {
  Identifier name;
  std::vector<Terminal> ports;
  std::vector<Option> parameters;  ///< with defaults, or bare when required
  std::vector<BlockStatement> body;
};

/// `spec NAME KIND (probe) key=value ...`: one requirement of the budget.
/// The probe connections are optional (a rails spec has none).
struct Spec : Located {
  Identifier name;
  Identifier kind;
  boost::optional<Connections> probe;
  std::vector<Option> options;
};

struct Statement : x3::variant<Title, Include, Ambient, Supply, Param, Instance, Model, Block, Spec> {
  using base_type::base_type;
  using base_type::operator=;
};

struct Netlist {
  std::vector<Statement> statements;
};

}  // namespace tacet::ast
