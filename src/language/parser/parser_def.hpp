#pragma once
// The grammar of grammar/tacet.ebnf in Spirit X3, rule for rule and with the
// same names. Included only by parser.cpp, the one place X3 is instantiated.
//
// Sections: skippers; rule IDs and annotation; rules; lexical grammar;
// expressions; statements; custom checks (unknown statements, malformed
// numbers); error handling (rule names -> reader words).
//
// Newlines separate statements, so the skipper takes spaces, tabs, comments
// and backslash-newline only; a model's `{ }` adds the newline to it.
// `>` marks commitment: once a statement's keyword has matched, a mismatch is
// an error at that spot rather than a silent backtrack.
//
// The `netlist` production itself is the loop in parse_netlist (parser.cpp),
// which parses one `statement` at a time so it can recover after an error.

#include <string>
#include <string_view>
#include <type_traits>
#include <vector>

#include "language/parser/ast_adapted.hpp"
#include "language/parser/parser_config.hpp"
#include "tacet/language/diagnostics.hpp"
#include "tacet/language/element_kinds.hpp"
#include "tacet/language/parser.hpp"

namespace boost::spirit::x3::traits {

// A statement's connections and options are a handful each: room for four
// at the first, instead of growing through one, two and four.
template <typename Element>
struct reserving_push_back {
  template <typename T>
  static bool call(std::vector<Element>& c, T&& value) {
    if (c.capacity() == 0) c.reserve(4);
    c.push_back(static_cast<T&&>(value));
    return true;
  }
};
template <>
struct push_back_container<std::vector<tacet::ast::Terminal>>
    : reserving_push_back<tacet::ast::Terminal> {};
template <>
struct push_back_container<std::vector<tacet::ast::Option>> : reserving_push_back<tacet::ast::Option> {};

}  // namespace boost::spirit::x3::traits

namespace tacet::parser {

// ---- skippers -------------------------------------------------------------

inline auto const comment = x3::lexeme['#' >> *(x3::char_ - x3::eol)];
inline auto const continuation = x3::lexeme['\\' >> x3::eol];
// char_(" \t"), not x3::blank: the standard-encoding classifiers assert (and are
// undefined in release) on a byte above 0x7F, such as the first of a no-break space.
inline auto const skipper = x3::char_(" \t") | comment | continuation;
/// Inside a model's braces a line end is plain space.
inline auto const model_skipper = skipper | x3::eol;

// ---- rule IDs and annotation ------------------------------------------------

inline bool is_word_byte(char c) {
  const auto u = static_cast<unsigned char>(c);
  return (u >= 'a' && u <= 'z') || (u >= 'A' && u <= 'Z') || (u >= '0' && u <= '9') ||
         u == '_' || u == '.' || u >= 0x80;
}

/// Fills offset and length of every syntax-tree node a rule produces; `first`
/// is already past the skipped space.
struct annotate_location {
  template <class Attribute, class Context>
  void on_success(iterator_type first, iterator_type last, Attribute& node,
                  Context const& context) const {
    if constexpr (std::is_base_of_v<ast::Located, Attribute>) {
      const ParseState& state = x3::get<state_tag>(context);
      node.offset = static_cast<std::uint32_t>(first - state.begin);
      node.length = static_cast<std::uint32_t>(last - first);
    }
  }
};

/// A numeral glued to anything that cannot continue it (`1.2.3`, `10k5`) is
/// one malformed number, not a number and a stray word.
struct check_quantity_end : annotate_location {
  template <class Attribute, class Context>
  void on_success(iterator_type first, iterator_type last, Attribute& node,
                  Context const& context) const {
    annotate_location::on_success(first, last, node, context);
    const ParseState& state = x3::get<state_tag>(context);
    if (last == state.end || !is_word_byte(*last)) return;
    if (*last == '.' && last + 1 != state.end && *(last + 1) == '.') return;  // a range, 0C..70C
    iterator_type tail = last;
    while (tail != state.end && is_word_byte(*tail)) ++tail;
    const std::string token(first, tail);
    throw syntax_error{first, static_cast<std::uint32_t>(tail - first),
                       "malformed number '" + token + "'", {}};
  }
};

struct identifier_id;
struct keyword_id;
struct string_id;
struct node_id;
struct numeral_id;
struct digits_id;
struct suffix_id;
struct word_id;
struct quantity_id : check_quantity_end {};
struct term_id;
struct signed_term_id : annotate_location {};
struct expression_id;
struct sum_id : annotate_location {};
struct sum_operation_id : annotate_location {};
struct product_id : annotate_location {};
struct product_value_id;
struct product_operation_id : annotate_location {};
struct unary_id;
struct negation_id : annotate_location {};
struct power_id : annotate_location {};
struct power_value_id;
struct power_operation_id : annotate_location {};
struct primary_id;
struct call_id : annotate_location {};
struct value_id;
struct terminal_id : annotate_location {};
struct port_id : annotate_location {};
struct connections_id : annotate_location {};
struct option_id : annotate_location {};
struct title_id : annotate_location {};
struct title_text_id;
struct include_id : annotate_location {};
struct include_text_id;
struct ambient_id : annotate_location {};
struct ambient_text_id;
struct supply_id : annotate_location {};
struct param_id : annotate_location {};
struct element_id;
struct valued_id : annotate_location {};
struct unvalued_id : annotate_location {};
struct modelled_id : annotate_location {};
struct use_id : annotate_location {};
struct model_name_id;
struct block_name_id;
struct model_id : annotate_location {};
struct model_entry_id : annotate_location {};
struct block_id : annotate_location {};
struct spec_id : annotate_location {};
struct block_ports_id;
struct block_body_id;
struct block_statement_id;
struct statement_id;
struct newline_id;
struct token_id;

// ---- rules ------------------------------------------------------------------

x3::rule<identifier_id, ast::Identifier> const identifier = "identifier";
x3::rule<string_id, std::string> const string = "string";
x3::rule<node_id, std::string> const node = "node";
x3::rule<numeral_id, std::string> const numeral = "numeral";
x3::rule<digits_id> const digits = "digits";
// `true`: the V/A check is a semantic action, which would otherwise stop the
// rule from passing its text up.
x3::rule<suffix_id, std::string, true> const suffix = "suffix";
x3::rule<word_id> const word = "word";
x3::rule<quantity_id, ast::Quantity> const quantity = "quantity";
x3::rule<term_id, ast::Expr> const term = "term";
x3::rule<signed_term_id, ast::Unary> const signed_term = "term";
x3::rule<expression_id, ast::Expr> const expression = "expression";
/// `expression` without the shortcut for a lone operand (expression_parser).
x3::rule<struct expression_long_id, ast::Expr> const expression_long = "expression";
x3::rule<sum_id, ast::Chain> const sum = "sum";
x3::rule<sum_operation_id, ast::Operation> const sum_operation = "sum";
x3::rule<product_id, ast::Chain> const product = "product";
x3::rule<product_value_id, ast::Expr> const product_value = "product";
x3::rule<product_operation_id, ast::Operation> const product_operation = "product";
x3::rule<unary_id, ast::Expr> const unary = "unary";
x3::rule<negation_id, ast::Unary> const negation = "unary";
x3::rule<power_id, ast::Chain> const power = "power";
x3::rule<power_value_id, ast::Expr> const power_value = "power";
x3::rule<power_operation_id, ast::Operation> const power_operation = "power";
x3::rule<primary_id, ast::Expr> const primary = "primary";
x3::rule<call_id, ast::Call> const call = "call";
x3::rule<value_id, ast::Expr> const value = "value";
x3::rule<terminal_id, ast::Terminal> const terminal = "terminal";
x3::rule<port_id, ast::Terminal> const port = "node";
x3::rule<connections_id, ast::Connections> const connections = "connections";
x3::rule<option_id, ast::Option> const option = "option";
x3::rule<title_id, ast::Title> const title = "title";
x3::rule<title_text_id, ast::Title> const title_text = "title";
x3::rule<include_id, ast::Include> const include = "include";
x3::rule<include_text_id, ast::Include> const include_text = "include";
x3::rule<ambient_id, ast::Ambient> const ambient = "ambient";
x3::rule<ambient_text_id, ast::Ambient> const ambient_text = "ambient";
x3::rule<supply_id, ast::Supply> const supply = "supply";
x3::rule<param_id, ast::Param> const param = "param";
x3::rule<element_id, ast::Instance> const element = "element";
x3::rule<valued_id, ast::Instance> const valued = "valued";
x3::rule<unvalued_id, ast::Instance> const unvalued = "unvalued";
x3::rule<modelled_id, ast::Instance> const modelled = "modelled";
x3::rule<use_id, ast::Instance> const use = "use";
x3::rule<model_name_id, ast::Expr> const model_name = "model_name";
x3::rule<block_name_id, ast::Expr> const block_name = "block_name";
x3::rule<model_id, ast::Model> const model = "model";
x3::rule<model_entry_id, ast::ModelEntry> const model_entry = "model_entry";
x3::rule<block_id, ast::Block> const block = "block";
x3::rule<spec_id, ast::Spec> const spec = "spec";
x3::rule<block_ports_id, std::vector<ast::Terminal>> const block_ports = "block_ports";
x3::rule<block_body_id, std::vector<ast::BlockStatement>> const block_body = "block_body";
x3::rule<block_statement_id, ast::BlockStatement> const block_statement = "block_statement";
x3::rule<statement_id, ast::Statement> const statement = "statement";
x3::rule<newline_id> const newline = "newline";

/// A punctuation mark at a commitment point, named for the error message
/// (see reader_message below).
inline auto token(char c, char const* name) { return x3::rule<token_id>{name} = x3::lit(c); }

// ---- lexical grammar ----------------------------------------------------------

inline auto const letter = x3::char_("a-zA-Z");
inline auto const digit = x3::char_("0-9");
inline auto const name_char = x3::char_("a-zA-Z0-9_");

/// Identifier text and location from the raw range (which starts past the skip).
inline auto const set_identifier = [](auto& ctx) {
  auto const& range = x3::_attr(ctx);
  auto& id = x3::_val(ctx);
  const ParseState& state = x3::get<state_tag>(ctx);
  id.text.assign(range.begin(), range.end());
  id.offset = static_cast<std::uint32_t>(range.begin() - state.begin);
  id.length = static_cast<std::uint32_t>(range.end() - range.begin());
};

/// A keyword matches only as a whole word: `resistor` is not `res`.
template <class Words>
auto keyword_of(Words words) {
  return x3::lexeme[words >> !name_char];
}
/// A keyword kept in the tree (Instance::keyword), as an Identifier.
template <class Words>
auto keyword_identifier(Words words) {
  return x3::rule<keyword_id, ast::Identifier>{"keyword"} =
             x3::raw[keyword_of(words)][set_identifier];
}

inline auto const identifier_def = x3::raw[x3::lexeme[(letter | '_') >> *name_char]][set_identifier];
// raw: the name is copied once, not appended a character at a time.
inline auto const node_def = x3::raw[x3::lexeme[+name_char]];
inline auto const digits_def = +digit;
inline auto const numeral_def = x3::raw[x3::lexeme[
    (digits >> -('.' >> -digits) | '.' >> digits) >>
    -(x3::char_("eE") >> -x3::char_("+-") >> digits)]];

inline auto const micro_sign = x3::lit("\xC2\xB5") | x3::lit("\xCE\xBC");  // µ (micro sign), μ (Greek mu)
inline auto const ohm_sign = x3::lit("\xCE\xA9");    // Ω
inline auto const word_def = +(letter | micro_sign | ohm_sign);

/// `V/us` and `A/V` are units; after any other word a slash is division.
inline auto const ends_in_v_or_a = [](auto& ctx) {
  auto const& range = x3::_attr(ctx);
  const char last = range.empty() ? '\0' : *(range.end() - 1);
  x3::_pass(ctx) = last == 'V' || last == 'A';
};
inline auto const suffix_def =
    x3::raw[(x3::raw[word][ends_in_v_or_a] >> '/' >> word) | word] | x3::string("%");
inline auto const quantity_def = x3::lexeme[numeral >> -suffix];

inline auto const string_close = token('"', "string_close");
inline auto const string_def = x3::lexeme['"' > *(('\\' >> x3::char_("\"\\")) |
                                                  ~x3::char_("\"\r\n")) > string_close];
inline auto const newline_def = x3::eol;

// ---- expressions ----------------------------------------------------------------

/// A chain with no operators is just its first operand: `10k` stays a Quantity.
inline auto const collapse_chain = [](auto& ctx) {
  auto& chain = x3::_attr(ctx);
  if (chain.rest.empty()) {
    x3::_val(ctx) = std::move(chain.first);
  } else {
    x3::_val(ctx) = std::move(chain);
  }
};

inline auto const group_close = token(')', "group_close");
inline auto const call_close = token(')', "call_close");

/// `expression`. A lone number or name, the whole of nearly every value (`10k`, `chain_amp`),
/// parsed without the chains that `sum`, `product` and `power` build around it
/// and collapse again. It fails without moving when an operator or a call's
/// '(' follows, or at the nesting bound, and `sum` then parses the same text
/// the long way: the tree, the locations and the errors are the same.
struct expression_parser : x3::parser<expression_parser> {
  using attribute_type = ast::Expr;
  static bool const has_attribute = true;

  template <class Iterator, class Context, class RContext, class Attribute>
  bool parse(Iterator& first, Iterator const& last, Context const& context, RContext& rcontext,
             Attribute& attribute) const;
  template <class Iterator, class Context, class RContext, class Attribute>
  bool parse_simple(Iterator& first, Iterator const& last, Context const& context,
                    RContext& rcontext, Attribute& attribute) const;
};

inline auto const term_def = signed_term | primary;
inline auto const signed_term_def = x3::char_("+-") >> primary;
inline auto const expression_def = expression_parser{};
inline auto const expression_long_def = sum[collapse_chain];
inline auto const sum_def = product_value >> *sum_operation;
inline auto const sum_operation_def = x3::char_("+-") > product_value;
inline auto const product_value_def = product[collapse_chain];
inline auto const product_def = unary >> *product_operation;
inline auto const product_operation_def = x3::char_("*/") > unary;
/// Every way an expression nests (a parenthesis, a call's arguments, a sign, a
/// power) passes through `unary`, so counting here bounds the recursion.
template <class Subject>
struct nesting_directive : x3::unary_parser<Subject, nesting_directive<Subject>> {
  using base_type = x3::unary_parser<Subject, nesting_directive<Subject>>;
  static bool const is_pass_through_unary = true;
  constexpr explicit nesting_directive(Subject const& inner) : base_type(inner) {}

  template <class Iterator, class Context, class RContext, class Attribute>
  bool parse(Iterator& first, Iterator const& last, Context const& context, RContext& rcontext,
             Attribute& attribute) const {
    ParseState& state = x3::get<state_tag>(context);
    if (state.nesting >= kDeepestExpression)
      throw syntax_error{first, 1,
                         "expression nested more than " + std::to_string(kDeepestExpression) +
                             " levels deep",
                         "split it into params"};
    struct Level {
      int& nesting;
      explicit Level(int& n) : nesting(++n) {}
      ~Level() { --nesting; }
    } level(state.nesting);
    return this->subject.parse(first, last, context, rcontext, attribute);
  }
};
struct nesting_gen {
  template <class Subject>
  constexpr nesting_directive<typename x3::extension::as_parser<Subject>::value_type> operator[](
      Subject const& inner) const {
    return nesting_directive<typename x3::extension::as_parser<Subject>::value_type>(
        x3::as_parser(inner));
  }
};
inline constexpr nesting_gen nested{};

inline auto const unary_def = nested[negation | power_value];
inline auto const negation_def = x3::char_("+-") > unary;
inline auto const power_value_def = power[collapse_chain];
inline auto const power_def = primary >> x3::repeat(0, 1)[power_operation];
inline auto const power_operation_def = x3::char_('^') > unary;
inline auto const primary_def = quantity | call | identifier | ('(' > expression > group_close);
inline auto const arguments = x3::rule<struct arguments_id, std::vector<ast::Expr>>{"expression"} =
    expression % ',';
inline auto const call_def = identifier >> '(' > arguments > call_close;

// ---- statements -------------------------------------------------------------------

/// Marks where the statement being parsed starts, for "after '...'" messages.
struct statement_start_parser : x3::parser<statement_start_parser> {
  using attribute_type = x3::unused_type;
  static bool const has_attribute = false;

  template <class Iterator, class Context, class RContext, class Attribute>
  bool parse(Iterator& first, Iterator const& last, Context const& context, RContext&,
             Attribute&) const {
    x3::skip_over(first, last, context);
    x3::get<state_tag>(context).statement_start = first;
    return true;
  }
};
inline statement_start_parser const statement_start{};

/// The words that may only appear at the top level of a file.
inline bool is_top_level_only(std::string_view text) {
  for (const char* k : {"title", "include", "ambient", "supply", "model", "block", "spec"}) {
    if (text == k) return true;
  }
  return false;
}

/// Block bodies hold parameters, elements and block instances only.
inline const std::vector<std::string>& block_statement_keywords() {
  static const std::vector<std::string> words = [] {
    std::vector<std::string> out{"param"};
    for (const ElementTraits& row : kElementKinds) out.emplace_back(row.keyword);
    out.emplace_back("use");
    return out;
  }();
  return words;
}

/// The last alternative of a statement: whatever is there is not a statement
/// we know, so say what it is and what it might have been. Fails quietly only
/// at a line end, at the end of the text, or at a block's closing brace.
template <bool InsideBlock>
struct unknown_statement_parser : x3::parser<unknown_statement_parser<InsideBlock>> {
  using attribute_type = x3::unused_type;
  static bool const has_attribute = false;

  template <class Iterator, class Context, class RContext, class Attribute>
  bool parse(Iterator& first, Iterator const& last, Context const& context, RContext&,
             Attribute&) const {
    Iterator at = first;
    x3::skip_over(at, last, context);
    if (at == last || *at == '\n' || *at == '\r' || (InsideBlock && *at == '}')) return false;
    Iterator end = at;
    while (end != last && is_word_byte(*end)) ++end;
    if (end == at) ++end;
    const std::string found(at, end);
    const auto length = static_cast<std::uint32_t>(end - at);
    if (InsideBlock && is_top_level_only(found)) {
      throw syntax_error{at, length, "'" + found + "' is not allowed inside a block", {}};
    }
    if (!is_word_byte(*at) || *at == '.') {
      throw syntax_error{at, length, "unexpected '" + found + "' at the start of a statement", {}};
    }
    const std::string nearest =
        nearest_word(found, InsideBlock ? block_statement_keywords() : statement_keywords());
    throw syntax_error{at, length, "unknown statement '" + found + "'",
                       nearest.empty() ? std::string{} : "did you mean '" + nearest + "'?"};
  }
};
inline unknown_statement_parser<false> const unknown_statement{};
inline unknown_statement_parser<true> const unknown_block_statement{};

inline auto const set_title = [](auto& ctx) { x3::_val(ctx).text = x3::_attr(ctx); };
inline auto const set_include = [](auto& ctx) { x3::_val(ctx).path = x3::_attr(ctx); };

inline auto const no_value = x3::attr(boost::optional<ast::Expr>{});
inline auto const no_polarity = x3::attr('\0');

inline auto const connections_close = token(')', "connections_close");
inline auto const param_equals = token('=', "param_equals");
inline auto const model_open = token('{', "model_open");
inline auto const model_close = token('}', "model_close");
inline auto const block_open = token('{', "block_open");
inline auto const block_close = token('}', "block_close");
inline auto const ports_close = token(')', "ports_close");
inline auto const end_of_statement = x3::rule<token_id>{"end_of_statement"} =
    &(newline | x3::eoi);
inline auto const end_of_block_statement = x3::rule<token_id>{"end_of_statement"} =
    &(newline | x3::lit('}'));

inline auto const title_def = title_text;
inline auto const title_text_def = (keyword_of(x3::lit("title")) > string)[set_title];
inline auto const include_def = include_text;
inline auto const include_text_def = (keyword_of(x3::lit("include")) > string)[set_include];
inline auto const ambient_def = ambient_text;
inline auto const ambient_text_def = keyword_of(x3::lit("ambient")) > term > -(x3::lit("..") > term);
inline auto const supply_def = keyword_of(x3::lit("supply")) > term > term > *option;
inline auto const param_def = keyword_of(x3::lit("param")) > identifier > param_equals > expression;

inline auto const terminal_def = (x3::char_("+-") | no_polarity) >> node;
inline auto const port_def = no_polarity >> node;
inline auto const terminal_list =
    x3::rule<struct terminal_list_id, std::vector<ast::Terminal>>{"terminal"} = terminal % ',';
inline auto const connections_def =
    '(' > terminal_list > ((';' > terminal_list) | x3::attr(std::vector<ast::Terminal>{})) >
    connections_close;
inline auto const value_def = expression >> !x3::lit('=');
inline auto const option_def = identifier >> -('=' > expression);
// Like a value, a model or block name is not an option key: in
// `use F1 (a, b) r=1k` the name is missing, it is not `r`.
inline auto const model_name_def = identifier >> !x3::lit('=');
inline auto const block_name_def = identifier >> !x3::lit('=');

/// The element keywords followed by `syntax`, from the table of kinds.
inline x3::symbols<ElementKind> element_keywords(ValueSyntax syntax) {
  x3::symbols<ElementKind> words;
  for (const ElementTraits& row : kElementKinds)
    if (row.value_syntax == syntax) words.add(row.keyword, row.kind);
  return words;
}

inline auto const element_def = valued | unvalued | modelled;
inline auto const valued_def = keyword_identifier(element_keywords(ValueSyntax::expression)) >
                               identifier > connections > value > *option;
inline auto const unvalued_def = keyword_identifier(element_keywords(ValueSyntax::none)) >
                                 identifier > connections > no_value > *option;
inline auto const modelled_def = keyword_identifier(element_keywords(ValueSyntax::model_name)) >
                                 identifier > connections > model_name > *option;
inline auto const use_def = keyword_identifier(x3::lit("use")) > identifier > connections >
                            block_name > *option;

inline auto const model_def = keyword_of(x3::lit("model")) > identifier > identifier > model_open >
                              x3::skip(model_skipper)[*model_entry > model_close];
inline auto const model_entry_def = identifier > term;

inline auto const spec_kind = x3::rule<struct spec_kind_id, ast::Identifier>{"spec_kind"} =
    identifier;

inline auto const block_def = keyword_of(x3::lit("block")) > identifier > block_ports > *option >
                              block_open > block_body > block_close;
inline auto const port_list =
    x3::rule<struct port_list_id, std::vector<ast::Terminal>>{"node"} = port % ',';
inline auto const block_ports_def = '(' > port_list > ports_close;
inline auto const block_body_def =
    *newline >> *(block_statement > end_of_block_statement >> *newline);
inline auto const block_statement_def =
    statement_start >> (param | element | use | unknown_block_statement);

inline auto const spec_def = keyword_of(x3::lit("spec")) > identifier > spec_kind > -connections >
                             *option;

inline auto const statement_def = title | include | ambient | supply | param | element | use |
                                  model | block | spec | unknown_statement;

template <class Iterator, class Context, class RContext, class Attribute>
bool expression_parser::parse(Iterator& first, Iterator const& last, Context const& context,
                              RContext& rcontext, Attribute& attribute) const {
  if (parse_simple(first, last, context, rcontext, attribute)) return true;
  return expression_long.parse(first, last, context, rcontext, attribute);
}

template <class Iterator, class Context, class RContext, class Attribute>
bool expression_parser::parse_simple(Iterator& first, Iterator const& last, Context const& context,
                                     RContext& rcontext, Attribute& attribute) const {
  if (x3::get<state_tag>(context).nesting >= kDeepestExpression) return false;  // sum reports it
  Iterator at = first;
  x3::skip_over(at, last, context);
  if (at == last) return false;
  const auto c = static_cast<unsigned char>(*at);
  const bool starts_number = (c >= '0' && c <= '9') || c == '.';
  const bool starts_name = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_';
  if (!starts_number && !starts_name) return false;
  auto followed_by_operator = [&](Iterator end) {
    x3::skip_over(end, last, context);
    if (end == last) return false;
    switch (*end) {
      case '+': case '-': case '*': case '/': case '^': case '(': return true;
      default: return false;
    }
  };
  if (starts_number) {
    ast::Quantity q;
    if (!quantity.parse(at, last, context, rcontext, q) || followed_by_operator(at)) return false;
    attribute = std::move(q);
  } else {
    ast::Identifier id;
    if (!identifier.parse(at, last, context, rcontext, id) || followed_by_operator(at)) return false;
    attribute = std::move(id);
  }
  first = at;
  return true;
}

BOOST_SPIRIT_DEFINE(identifier, string, node, numeral, digits, suffix, word, quantity, term,
                    signed_term, expression, expression_long, sum, sum_operation, product, product_value,
                    product_operation, unary, negation, power, power_value, power_operation,
                    primary, call, value, terminal, port, connections, option, title, title_text,
                    include, include_text, ambient, ambient_text, supply, param, element, valued,
                    unvalued, modelled, use, model_name, block_name, model, model_entry,
                    block, block_ports, block_body, block_statement, spec, statement, newline)

/// One statement and the end of its line: what parse_netlist runs per statement.
inline auto const statement_line = statement > end_of_statement;
/// The same for a statement known to start with an element keyword, or `use`:
/// `statement` would reach `element` (or `use`) after its other alternatives
/// fail on the keyword, and then build the instance aside and move it in.
inline auto const element_line = element > end_of_statement;
inline auto const use_line = use > end_of_statement;
/// A value given on its own (a --set value): an expression and nothing after it.
inline auto const lone_expression =
    expression > (x3::rule<token_id>{"end_of_statement"} = x3::eoi);

// ---- error handling -----------------------------------------------------------------

/// What a failed expectation means to someone reading the netlist. `which` is
/// the name of the rule or token that was expected. In the result, {so_far}
/// stands for the statement up to the error and {found} for the token there.
inline std::string reader_message(const std::string& which) {
  struct Entry {
    const char* which;
    const char* message;
  };
  static const Entry table[] = {
      {"identifier", "expected a name after '{so_far}'"},
      {"string", "expected a quoted string after '{so_far}'"},
      {"string_close", "unterminated string: expected '\"' before the end of the line"},
      {"term", "expected a value after '{so_far}'"},
      {"value", "expected a value after '{so_far}'"},
      {"expression", "expected a value after '{so_far}'"},
      {"product", "expected a value after '{so_far}'"},
      {"unary", "expected a value after '{so_far}'"},
      {"connections", "expected the connections in parentheses, like (a, b), after '{so_far}'"},
      {"terminal", "expected a node name after '{so_far}'"},
      {"node", "expected a node name after '{so_far}'"},
      {"connections_close", "expected ')' to close the connections"},
      {"group_close", "expected ')' to close the parenthesis"},
      {"call_close", "expected ')' to close the function call"},
      {"param_equals", "expected '=' after the parameter name"},
      {"model_name", "expected a model name after '{so_far}'"},
      {"block_name", "expected a block name after '{so_far}'"},
      {"model_open", "expected '{' to open the model"},
      {"model_close", "expected a model entry or '}' to close the model"},
      {"model_entry", "expected a value after '{so_far}'"},
      {"block_ports", "expected the block's ports in parentheses, like (in, out), after '{so_far}'"},
      {"ports_close", "expected ')' to close the block's ports"},
      {"block_open", "expected '{' to open the block"},
      {"block_close", "expected '}' to close the block"},
      {"spec_kind", "expected the kind of spec (gain, flatness, phase, upper_corner, ...) after '{so_far}'"},
      {"end_of_statement", "unexpected '{found}' after '{so_far}'"},
  };
  for (const Entry& entry : table) {
    if (which == entry.which) return entry.message;
  }
  return "expected " + which + " after '{so_far}'";
}

}  // namespace tacet::parser
