// parse_netlist: runs the X3 grammar of parser_def.hpp one statement at a time,
// turns its failures into diagnostics, and resumes at the next statement so one
// run reports several errors. parse_expression: the same for a lone expression
// (a --set value). The only translation unit that instantiates X3.
#include "tacet/language/parser.hpp"

#include <algorithm>

#include "language/parser/parser_def.hpp"

namespace tacet {

namespace {

using parser::iterator_type;
using parser::ParseState;
namespace x3 = boost::spirit::x3;

constexpr int max_errors = 20;

bool is_blank(char c) { return c == ' ' || c == '\t'; }
bool is_line_end(char c) { return c == '\n' || c == '\r'; }

iterator_type skip_blanks_and_comments(iterator_type at, iterator_type end) {
  x3::parse(at, end, *parser::skipper);
  return at;
}

/// The statement so far, on one line with single spaces and without
/// comments, for "after '...'".
std::string quote_so_far(iterator_type from, iterator_type to) {
  std::string out;
  bool pending_space = false;
  bool in_string = false;
  for (iterator_type at = from; at < to; ++at) {
    if (*at == '"' && (at == from || at[-1] != '\\')) in_string = !in_string;
    if (*at == '#' && !in_string) {
      while (at + 1 < to && !is_line_end(at[1])) ++at;
      pending_space = !out.empty();
      continue;
    }
    const bool space = is_blank(*at) || is_line_end(*at) || (*at == '\\' && at + 1 < to && is_line_end(at[1]));
    if (space) {
      pending_space = !out.empty();
      continue;
    }
    if (pending_space) out += ' ';
    pending_space = false;
    out += *at;
  }
  return out;
}

void replace_all(std::string& text, std::string_view placeholder, const std::string& by) {
  for (auto at = text.find(placeholder); at != std::string::npos;
       at = text.find(placeholder, at + by.size())) {
    text.replace(at, placeholder.size(), by);
  }
}

/// A whole word (or number) is underlined; any other character on its own.
std::uint32_t token_length(iterator_type at, iterator_type end) {
  iterator_type stop = at;
  while (stop != end && parser::is_word_byte(*stop)) ++stop;
  if (stop == at && at != end) ++stop;
  return static_cast<std::uint32_t>(stop - at);
}

/// Some editors start a UTF-8 file with the byte order mark EF BB BF; it is
/// not part of the first statement.
iterator_type after_byte_order_mark(iterator_type begin, iterator_type end) {
  constexpr std::string_view mark = "\xEF\xBB\xBF";
  if (std::string_view(begin, static_cast<std::size_t>(end - begin)).substr(0, 3) == mark) {
    return begin + 3;
  }
  return begin;
}

class TextParser {
 public:
  TextParser(std::string_view text, int file_id, Diagnostics& diagnostics)
      : file_id_(file_id), diagnostics_(diagnostics) {
    state_.begin = text.data();
    state_.end = text.data() + text.size();
  }

  std::optional<ast::Netlist> run() {
    ast::Netlist netlist;
    // At most one statement a line: one allocation, no moves of grown storage.
    netlist.statements.reserve(static_cast<std::size_t>(std::count(state_.begin, state_.end, '\n')) + 1);
    iterator_type at = after_byte_order_mark(state_.begin, state_.end);
    while (skip_blank_lines(at)) {
      if (errors_ == max_errors) {
        report(at, 1, Severity::note, "too many errors; stopping here", {});
        break;
      }
      // Kept here: block bodies move state_.statement_start to their own statements.
      const iterator_type statement_start = at;
      state_.statement_start = at;
      if (const InstanceStart start = instance_start(at); start != InstanceStart::none) {
        netlist.statements.emplace_back(ast::Instance{});
        auto& instance = boost::get<ast::Instance>(netlist.statements.back());
        const Outcome outcome = start == InstanceStart::element
                                    ? parse_in_place(at, instance, parser::element_line)
                                    : parse_in_place(at, instance, parser::use_line);
        if (outcome == Outcome::parsed) continue;
        netlist.statements.pop_back();
        if (outcome == Outcome::failed) {
          at = next_statement_line(statement_start);
          continue;
        }
        at = statement_start;  // declined: the general path decides
      }
      ast::Statement statement;
      if (parse_statement(at, statement)) {
        netlist.statements.push_back(std::move(statement));
      } else {
        at = next_statement_line(statement_start);
      }
    }
    if (errors_ > 0) return std::nullopt;
    return netlist;
  }

  /// The whole text as one expression, nothing before or after it.
  std::optional<ast::Expr> run_expression() {
    iterator_type at = state_.begin;
    state_.statement_start = at;
    ast::Expr expression;
    auto const grammar = x3::with<parser::state_tag>(
        state_)[x3::skip(parser::skipper)[parser::lone_expression]];
    try {
      if (x3::parse(at, state_.end, grammar, expression)) return expression;
      const iterator_type found = skip_blanks_and_comments(at, state_.end);
      report(found, token_length(found, state_.end), Severity::error, "expected a value", {});
    } catch (const parser::expectation_failure& failure) {
      report_expectation(failure);
    } catch (const parser::syntax_error& error) {
      report(error.where, error.length, Severity::error, error.message, error.hint);
    }
    return std::nullopt;
  }

 private:
  enum class InstanceStart { none, element, use };
  enum class Outcome { parsed, failed, declined };

  /// Whether the statement at `at` starts with an element keyword or `use`, as
  /// the keyword rules decide it: the whole word, up to a byte that cannot
  /// continue a name.
  InstanceStart instance_start(iterator_type at) const {
    iterator_type stop = at;
    while (stop != state_.end && is_name_byte(*stop)) ++stop;
    const std::string_view word(at, static_cast<std::size_t>(stop - at));
    if (word == "use") return InstanceStart::use;
    return element_kind_of(word) ? InstanceStart::element : InstanceStart::none;
  }

  static bool is_name_byte(char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_';
  }

  /// An element or `use` statement parsed straight into the netlist's own
  /// Instance: the general path would parse it into a Statement aside (after
  /// the other alternatives fail on its keyword) and move it in. Once the
  /// keyword matches the statement is committed either way, so the errors are
  /// the general path's; "declined" (no error, no match) hands it back.
  template <class Line>
  Outcome parse_in_place(iterator_type& at, ast::Instance& instance, Line const& line) {
    auto const grammar = x3::with<parser::state_tag>(state_)[x3::skip(parser::skipper)[line]];
    try {
      return x3::parse(at, state_.end, grammar, instance) ? Outcome::parsed : Outcome::declined;
    } catch (const parser::expectation_failure& failure) {
      report_expectation(failure);
    } catch (const parser::syntax_error& error) {
      report(error.where, error.length, Severity::error, error.message, error.hint);
    }
    return Outcome::failed;
  }

  /// Moves past empty and comment-only lines; false at the end of the text.
  bool skip_blank_lines(iterator_type& at) const {
    x3::parse(at, state_.end, *(parser::skipper | x3::eol));
    return at != state_.end;
  }

  bool parse_statement(iterator_type& at, ast::Statement& statement) {
    auto const grammar = x3::with<parser::state_tag>(state_)[x3::skip(parser::skipper)[parser::statement_line]];
    try {
      if (x3::parse(at, state_.end, grammar, statement)) return true;
      report(at, token_length(at, state_.end), Severity::error, "expected a statement", {});
    } catch (const parser::expectation_failure& failure) {
      report_expectation(failure);
    } catch (const parser::syntax_error& error) {
      report(error.where, error.length, Severity::error, error.message, error.hint);
    }
    return false;
  }

  /// Points at the token that is there instead; at a line end, just after
  /// the last token read (so a missing '}' is shown at the end of the text,
  /// not on an empty line after it).
  void report_expectation(const parser::expectation_failure& failure) {
    iterator_type where = failure.where();
    const iterator_type found = skip_blanks_and_comments(where, state_.end);
    std::uint32_t length = 1;
    if (found != state_.end && !is_line_end(*found)) {
      where = found;
      length = token_length(found, state_.end);
    } else {
      while (where > state_.begin &&
             (is_blank(where[-1]) || is_line_end(where[-1]))) {
        --where;
      }
    }
    std::string message = parser::reader_message(failure.which());
    replace_all(message, "{so_far}", quote_so_far(state_.statement_start, failure.where()));
    replace_all(message, "{found}", std::string(where, where + length));
    report(where, length, Severity::error, std::move(message), {});
  }

  void report(iterator_type where, std::uint32_t length, Severity severity, std::string message,
              std::string hint) {
    const auto offset = static_cast<std::uint32_t>(where - state_.begin);
    diagnostics_.add(Diagnostic{severity, SourceLocation{file_id_, offset}, length,
                                std::move(message), std::move(hint)});
    if (severity == Severity::error) ++errors_;
  }

  /// After an error, the first later line that starts with a statement keyword
  /// and is not inside the braces the failed statement opened. A line starting
  /// `model` or `block` ends the braces anyway: they cannot nest, so the
  /// braces were never closed.
  iterator_type next_statement_line(iterator_type statement) const {
    int depth = 0;
    iterator_type line = statement;
    for (;;) {
      const iterator_type line_end = std::find(line, state_.end, '\n');
      depth += brace_balance(line, line_end);
      if (line_end == state_.end) return state_.end;
      line = line_end + 1;
      const std::string word = first_word(line);
      const bool keyword = std::find(statement_keywords().begin(), statement_keywords().end(),
                                     word) != statement_keywords().end();
      if (keyword && (depth <= 0 || word == "model" || word == "block")) return line;
    }
  }

  std::string first_word(iterator_type line) const {
    iterator_type at = line;
    while (at != state_.end && is_blank(*at)) ++at;
    iterator_type stop = at;
    while (stop != state_.end && parser::is_word_byte(*stop)) ++stop;
    return std::string(at, stop);
  }

  /// '{' minus '}' on a line, outside strings and comments.
  static int brace_balance(iterator_type from, iterator_type to) {
    int balance = 0;
    bool in_string = false;
    for (iterator_type at = from; at < to; ++at) {
      if (in_string) {
        if (*at == '\\') ++at;
        else if (*at == '"') in_string = false;
      } else if (*at == '"') {
        in_string = true;
      } else if (*at == '#') {
        break;
      } else if (*at == '{') {
        ++balance;
      } else if (*at == '}') {
        --balance;
      }
    }
    return balance;
  }

  int file_id_;
  Diagnostics& diagnostics_;
  ParseState state_;
  int errors_ = 0;
};

}  // namespace

std::optional<ast::Netlist> parse_netlist(std::string_view text, int file_id,
                                          Diagnostics& diagnostics) {
  return TextParser(text, file_id, diagnostics).run();
}

std::optional<ast::Expr> parse_expression(std::string_view text, int file_id,
                                          Diagnostics& diagnostics) {
  return TextParser(text, file_id, diagnostics).run_expression();
}

const std::vector<std::string>& statement_keywords() {
  static const std::vector<std::string> words = [] {
    std::vector<std::string> out{"title", "include", "ambient", "supply", "param"};
    for (const ElementTraits& row : kElementKinds) out.emplace_back(row.keyword);
    for (const char* word : {"model", "block", "use", "spec"}) out.emplace_back(word);
    return out;
  }();
  return words;
}

}  // namespace tacet
