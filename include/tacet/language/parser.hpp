#pragma once
// parse: netlist text -> syntax tree. The only door into the Spirit X3 parser.

#include <optional>
#include <string_view>

#include "tacet/language/ast.hpp"
#include "tacet/language/diagnostics.hpp"

namespace tacet {

/// Parses one file's text. `file_id` is the SourceManager id of that text and is
/// used for the diagnostics. On a syntax error, reports it (position, source line,
/// caret, hint) to `diagnostics` and returns nullopt. Node offsets are relative to
/// the start of `text`.
std::optional<ast::Netlist> parse_netlist(std::string_view text, int file_id,
                                          Diagnostics& diagnostics);

/// The statement keywords of the language (the element keywords from the table of
/// kinds, element_kinds.hpp), for "did you mean" hints and error recovery.
const std::vector<std::string>& statement_keywords();

}  // namespace tacet

namespace tacet {

/// Parses a lone expression (a --set value on the command line); the whole text
/// must be one expression. Reports errors to `diagnostics` like parse_netlist.
std::optional<ast::Expr> parse_expression(std::string_view text, int file_id,
                                          Diagnostics& diagnostics);

}  // namespace tacet
