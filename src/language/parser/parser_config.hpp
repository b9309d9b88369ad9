#pragma once
// The types the X3 grammar is instantiated with: the iterator over a netlist's
// text, the per-parse state injected into the context with x3::with, and the
// error that custom checks throw alongside X3's expectation_failure.

#include <cstdint>
#include <string>

#include <boost/spirit/home/x3.hpp>

namespace tacet::parser {

namespace x3 = boost::spirit::x3;

/// The whole text of one file is in memory, so a plain pointer is the iterator.
using iterator_type = const char*;

/// Reached through the context (x3::get<state_tag>): node offsets are measured
/// from `begin`, lookahead checks stop at `end`, and messages quote the
/// statement from `statement_start`.
struct ParseState {
  iterator_type begin = nullptr;
  iterator_type end = nullptr;
  iterator_type statement_start = nullptr;
  int nesting = 0;  ///< expression levels open at the current position
};

/// The deepest expression a netlist may write: parentheses, calls, signs and
/// powers each open a level. Far beyond any real value, and far below the
/// depth at which the recursive-descent parser would exhaust the stack.
inline constexpr int kDeepestExpression = 100;
struct state_tag;

/// A syntax error found by a check of our own (unknown keyword, malformed
/// number), already worded for the reader.
struct syntax_error {
  iterator_type where;
  std::uint32_t length;
  std::string message;
  std::string hint;
};

using expectation_failure = x3::expectation_failure<iterator_type>;

}  // namespace tacet::parser
