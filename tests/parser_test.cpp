// The parser against grammar/tacet.ebnf: what each statement form becomes in
// the syntax tree, and what a reader is told about bad input, word for word.
// The reference for the expected trees is the grammar itself; for expression
// precedence it is ordinary algebraic convention (* before +, ^ binds right
// and tightest; common practice, as in most programming languages).
#include <catch2/catch.hpp>

#include <optional>
#include <string>
#include <type_traits>

#include "tacet/language/parser.hpp"

namespace ast = tacet::ast;
namespace x3 = boost::spirit::x3;

namespace {

struct ParseOutcome {
  std::optional<ast::Netlist> netlist;
  std::string diagnostics;  ///< everything reported, rendered
};

ParseOutcome parse_text(const std::string& text, const std::string& file_name = "demo.tacet") {
  tacet::SourceManager sources;
  const int id = sources.add(file_name, text);
  tacet::Diagnostics diagnostics(sources);
  auto netlist = tacet::parse_netlist(sources.file(id).text, id, diagnostics);
  return {std::move(netlist), diagnostics.render_all()};
}

/// The netlist of text that must parse; a failure shows the diagnostics.
ast::Netlist parse_good(const std::string& text) {
  ParseOutcome outcome = parse_text(text);
  INFO(outcome.diagnostics);
  REQUIRE(outcome.netlist.has_value());
  CHECK(outcome.diagnostics.empty());
  return std::move(*outcome.netlist);
}

/// The rendered diagnostics of text that must fail to parse.
std::string parse_bad(const std::string& text) {
  ParseOutcome outcome = parse_text(text);
  CHECK_FALSE(outcome.netlist.has_value());
  return outcome.diagnostics;
}

template <class T, class Variant>
const T& as(const Variant& v) {
  if constexpr (std::is_same_v<T, ast::Quantity> || std::is_same_v<T, ast::Identifier> ||
                !std::is_same_v<Variant, ast::Expr>) {
    return boost::get<T>(v.get());
  } else {
    return boost::get<x3::forward_ast<T>>(v.get()).get();
  }
}

const ast::Instance& instance(const ast::Netlist& n, std::size_t i) {
  return as<ast::Instance>(n.statements.at(i));
}

const ast::Quantity& quantity_of(const std::string& value_text) {
  static ast::Netlist keep;
  keep = parse_good("param p = " + value_text + "\n");
  return as<ast::Quantity>(as<ast::Param>(keep.statements.at(0)).value);
}

}  // namespace

// ---- good input -------------------------------------------------------------

TEST_CASE("title and include keep their strings with escapes resolved", "[parser]") {
  const auto n = parse_good("title \"Phono stage \\\"rev B\\\" a\\\\b\"\ninclude \"parts/opamps.tacet\"\n");
  REQUIRE(n.statements.size() == 2);
  const auto& title = as<ast::Title>(n.statements[0]);
  CHECK(title.text == "Phono stage \"rev B\" a\\b");
  CHECK(title.offset == 0);
  CHECK(title.length == 34);
  const auto& include = as<ast::Include>(n.statements[1]);
  CHECK(include.path == "parts/opamps.tacet");
  CHECK(include.offset == 35);
}

TEST_CASE("ambient takes one term and supply two signed terms", "[parser]") {
  const auto n = parse_good("ambient 25C\nsupply +12 -12\n");
  const auto& ambient = as<ast::Ambient>(n.statements.at(0));
  CHECK(as<ast::Quantity>(ambient.value).digits == "25");
  CHECK(as<ast::Quantity>(ambient.value).suffix == "C");
  const auto& supply = as<ast::Supply>(n.statements.at(1));
  const auto& high = as<ast::Unary>(supply.high);
  const auto& low = as<ast::Unary>(supply.low);
  CHECK(high.op == '+');
  CHECK(as<ast::Quantity>(high.operand).digits == "12");
  CHECK(low.op == '-');
  CHECK(as<ast::Quantity>(low.operand).digits == "12");
  CHECK(low.offset == 23);
  CHECK(low.length == 3);
}

TEST_CASE("param binds a name to an expression", "[parser]") {
  const auto n = parse_good("param rf = 9 * rg\n");
  const auto& param = as<ast::Param>(n.statements.at(0));
  CHECK(param.name.text == "rf");
  CHECK(param.name.offset == 6);
  CHECK(param.name.length == 2);
  const auto& chain = as<ast::Chain>(param.value);
  CHECK(as<ast::Quantity>(chain.first).digits == "9");
  REQUIRE(chain.rest.size() == 1);
  CHECK(chain.rest[0].op == '*');
  CHECK(as<ast::Identifier>(chain.rest[0].operand).text == "rg");
  CHECK(chain.offset == 11);
  CHECK(chain.length == 6);
}

TEST_CASE("a passive element has keyword, name, connections, value and options", "[parser]") {
  const auto n = parse_good("res   R1  (in, a)     10k\xCE\xA9   tol=0.1% noiseless\n");
  const auto& r = instance(n, 0);
  CHECK(r.keyword.text == "res");
  CHECK(r.keyword.offset == 0);
  CHECK(r.name.text == "R1");
  CHECK(r.name.offset == 6);
  CHECK(r.name.length == 2);
  REQUIRE(r.connections.first.size() == 2);
  CHECK(r.connections.first[0].node == "in");
  CHECK(r.connections.first[0].polarity == 0);
  CHECK(r.connections.first[1].node == "a");
  CHECK(r.connections.first[1].offset == 15);
  CHECK(r.connections.second.empty());
  CHECK(r.connections.offset == 10);
  CHECK(r.connections.length == 7);
  REQUIRE(r.value.has_value());
  const auto& value = as<ast::Quantity>(*r.value);
  CHECK(value.digits == "10");
  CHECK(value.suffix == "k\xCE\xA9");
  CHECK(value.offset == 22);
  CHECK(value.length == 5);
  REQUIRE(r.options.size() == 2);
  CHECK(r.options[0].key.text == "tol");
  REQUIRE(r.options[0].value.has_value());
  CHECK(as<ast::Quantity>(*r.options[0].value).digits == "0.1");
  CHECK(as<ast::Quantity>(*r.options[0].value).suffix == "%");
  CHECK(r.options[1].key.text == "noiseless");
  CHECK_FALSE(r.options[1].value.has_value());
  CHECK(r.options[1].offset == 39);
  CHECK(r.offset == 0);
}

TEST_CASE("cap and ind take an expression as their value", "[parser]") {
  const auto n = parse_good("cap C1 (a, gnd) 1/(2*pi*fc*r)\nind L1 (b, c) 10m\n");
  const auto& c = instance(n, 0);
  CHECK(c.keyword.text == "cap");
  const auto& division = as<ast::Chain>(*c.value);
  CHECK(as<ast::Quantity>(division.first).digits == "1");
  CHECK(division.rest.at(0).op == '/');
  const auto& inner = as<ast::Chain>(division.rest.at(0).operand);
  CHECK(inner.rest.size() == 3);
  CHECK(as<ast::Quantity>(inner.first).digits == "2");
  CHECK(as<ast::Identifier>(inner.rest[0].operand).text == "pi");
  CHECK(instance(n, 1).keyword.text == "ind");
  CHECK(as<ast::Quantity>(*instance(n, 1).value).suffix == "m");
}

TEST_CASE("a numeral and its glued suffix are split as written", "[parser]") {
  struct Case {
    const char* text;
    const char* digits;
    const char* suffix;
  };
  const Case cases[] = {
      {"4.7nF", "4.7", "nF"},      {".5", ".5", ""},          {"1e-3", "1e-3", ""},
      {"2.2E+6\xCE\xA9", "2.2E+6", "\xCE\xA9"}, {"10V/us", "10", "V/us"}, {"1mA/V", "1", "mA/V"},
      {"10\xC2\xB5" "F", "10", "\xC2\xB5" "F"}, {"110dB", "110", "dB"},   {"5.", "5.", ""},
      {"3kohm", "3", "kohm"},     {"0.1%", "0.1", "%"},
  };
  for (const Case& c : cases) {
    INFO(c.text);
    const auto& q = quantity_of(c.text);
    CHECK(q.digits == c.digits);
    CHECK(q.suffix == c.suffix);
  }
}

TEST_CASE("a slash after a suffix not ending in V or A divides", "[parser]") {
  const auto n = parse_good("param a = 10k/2\nparam b = 10k/rg\n");
  const auto& a = as<ast::Chain>(as<ast::Param>(n.statements.at(0)).value);
  CHECK(as<ast::Quantity>(a.first).suffix == "k");
  CHECK(a.rest.at(0).op == '/');
  CHECK(as<ast::Quantity>(a.rest.at(0).operand).digits == "2");
  const auto& b = as<ast::Chain>(as<ast::Param>(n.statements.at(1)).value);
  CHECK(as<ast::Identifier>(b.rest.at(0).operand).text == "rg");
}

TEST_CASE("expressions follow the usual precedence and ^ binds to the right", "[parser]") {
  const auto n = parse_good("param x = 1 + 2 * 3 ^ 2 ^ 2 - -sqrt(4, y)\n");
  const auto& sum = as<ast::Chain>(as<ast::Param>(n.statements.at(0)).value);
  REQUIRE(sum.rest.size() == 2);
  CHECK(sum.rest[0].op == '+');
  CHECK(sum.rest[1].op == '-');
  const auto& product = as<ast::Chain>(sum.rest[0].operand);
  CHECK(product.rest.at(0).op == '*');
  const auto& power = as<ast::Chain>(product.rest[0].operand);
  CHECK(as<ast::Quantity>(power.first).digits == "3");
  CHECK(power.rest.at(0).op == '^');
  const auto& inner_power = as<ast::Chain>(power.rest[0].operand);  // 2 ^ 2
  CHECK(as<ast::Quantity>(inner_power.first).digits == "2");
  const auto& negated = as<ast::Unary>(sum.rest[1].operand);
  CHECK(negated.op == '-');
  const auto& call = as<ast::Call>(negated.operand);
  CHECK(call.function.text == "sqrt");
  CHECK(call.args.size() == 2);
}

TEST_CASE("parentheses group a sub-expression", "[parser]") {
  const auto n = parse_good("param x = (1 + 2) * 3\n");
  const auto& product = as<ast::Chain>(as<ast::Param>(n.statements.at(0)).value);
  CHECK(product.rest.at(0).op == '*');
  CHECK(as<ast::Chain>(product.first).rest.at(0).op == '+');
}

TEST_CASE("sources take options only", "[parser]") {
  const auto n = parse_good("vsrc Vin (in, gnd) ac=1 dc=0\nisrc I1 (b, gnd) ac=1u\n");
  const auto& v = instance(n, 0);
  CHECK(v.keyword.text == "vsrc");
  CHECK_FALSE(v.value.has_value());
  REQUIRE(v.options.size() == 2);
  CHECK(v.options[1].key.text == "dc");
  CHECK(instance(n, 1).keyword.text == "isrc");
  CHECK(as<ast::Quantity>(*instance(n, 1).options.at(0).value).suffix == "u");
}

TEST_CASE("controlled sources take an output and a controlling pair", "[parser]") {
  const auto n = parse_good("vcvs E1 (o, gnd; p, n) gain=10\nvccs G1 (o, gnd; p, n) gm=1m\n");
  const auto& e = instance(n, 0);
  CHECK(e.keyword.text == "vcvs");
  REQUIRE(e.connections.first.size() == 2);
  REQUIRE(e.connections.second.size() == 2);
  CHECK(e.connections.second[0].node == "p");
  CHECK(e.connections.second[1].node == "n");
  CHECK(e.options.at(0).key.text == "gain");
  CHECK(instance(n, 1).keyword.text == "vccs");
}

TEST_CASE("an op amp takes marked inputs and a model name", "[parser]") {
  const auto n = parse_good("opamp U1  (+a, -fb, out)  quiet_bipolar rails=15\n");
  const auto& u = instance(n, 0);
  REQUIRE(u.connections.first.size() == 3);
  CHECK(u.connections.first[0].polarity == '+');
  CHECK(u.connections.first[0].node == "a");
  CHECK(u.connections.first[0].offset == 11);
  CHECK(u.connections.first[0].length == 2);
  CHECK(u.connections.first[1].polarity == '-');
  CHECK(u.connections.first[2].polarity == 0);
  const auto& model = as<ast::Identifier>(*u.value);
  CHECK(model.text == "quiet_bipolar");
  CHECK(model.offset == 26);
  CHECK(u.options.at(0).key.text == "rails");
}

TEST_CASE("a model's entries may spread over lines with comments", "[parser]") {
  const auto n = parse_good(
      "model quiet_bipolar opamp {   # invented archetype\n"
      "  gbw 10M  aol 110dB  rout 40\n"
      "\n"
      "  vos -250u  slew 10V/us\n"
      "}\n");
  const auto& m = as<ast::Model>(n.statements.at(0));
  CHECK(m.name.text == "quiet_bipolar");
  CHECK(m.kind.text == "opamp");
  REQUIRE(m.entries.size() == 5);
  CHECK(m.entries[0].key.text == "gbw");
  CHECK(as<ast::Quantity>(m.entries[0].value).suffix == "M");
  CHECK(m.entries[1].key.text == "aol");
  CHECK(m.entries[1].offset == 62);
  CHECK(as<ast::Unary>(m.entries[3].value).op == '-');
  CHECK(as<ast::Quantity>(m.entries[4].value).suffix == "V/us");
  CHECK(m.offset == 0);
}

TEST_CASE("a model may be written on one line", "[parser]") {
  const auto n = parse_good("model m opamp { gbw 1M }\n");
  CHECK(as<ast::Model>(n.statements.at(0)).entries.size() == 1);
}

TEST_CASE("a block has ports, parameters and a body of statements", "[parser]") {
  const auto n = parse_good(
      "block lowpass2 (in, out) r=10k c {\n"
      "  param r2 = 2 * r\n"
      "\n"
      "  res R1 (in, x) r\n"
      "  cap C1 (x, out) c\n"
      "  use F1 (x, gnd) other\n"
      "}\n"
      "use F1 (a, b) lowpass2 r=22k c=1n\n");
  REQUIRE(n.statements.size() == 2);
  const auto& b = as<ast::Block>(n.statements[0]);
  CHECK(b.name.text == "lowpass2");
  REQUIRE(b.ports.size() == 2);
  CHECK(b.ports[1].node == "out");
  REQUIRE(b.parameters.size() == 2);
  CHECK(b.parameters[0].value.has_value());
  CHECK_FALSE(b.parameters[1].value.has_value());
  REQUIRE(b.body.size() == 4);
  CHECK(boost::get<ast::Param>(b.body[0].get()).name.text == "r2");
  const auto& r1 = boost::get<ast::Instance>(b.body[1].get());
  CHECK(r1.name.text == "R1");
  CHECK(r1.offset == 57);
  CHECK(boost::get<ast::Instance>(b.body[3].get()).keyword.text == "use");
  const auto& use = instance(n, 1);
  CHECK(use.keyword.text == "use");
  CHECK(as<ast::Identifier>(*use.value).text == "lowpass2");
  CHECK(use.options.size() == 2);
}

TEST_CASE("a block may hold its body on the line of its braces", "[parser]") {
  const auto n = parse_good("block b (p) { res R1 (p, gnd) 1k }\n");
  CHECK(as<ast::Block>(n.statements.at(0)).body.size() == 1);
}

TEST_CASE("comments, blank lines and continuation lines are layout only", "[parser]") {
  const auto n = parse_good(
      "# hydrophone preamp, input stage\n"
      "\n"
      "   \t\n"
      "res R1 (in, a) \\\n"
      "    10k   # the bias resistor\n"
      "# trailing comment");
  REQUIRE(n.statements.size() == 1);
  const auto& r = instance(n, 0);
  CHECK(r.offset == 39);
  CHECK(as<ast::Quantity>(*r.value).offset == 60);
}

TEST_CASE("CRLF line ends are tolerated", "[parser]") {
  const auto n = parse_good("title \"x\"\r\n\r\nres R1 (a, b) 1k\r\nmodel m opamp {\r\n gbw 1M\r\n}\r\n");
  REQUIRE(n.statements.size() == 3);
  CHECK(instance(n, 1).offset == 13);
}

TEST_CASE("a UTF-8 byte order mark before the first statement is ignored", "[parser]") {
  // EF BB BF is U+FEFF encoded in UTF-8 (RFC 3629, section 6).
  const auto n = parse_good("\xEF\xBB\xBFtitle \"x\"\n");
  REQUIRE(n.statements.size() == 1);
  CHECK(as<ast::Title>(n.statements[0]).offset == 3);
}

TEST_CASE("an empty text is an empty netlist", "[parser]") {
  CHECK(parse_good("").statements.empty());
  CHECK(parse_good("\n# only a comment\n\n").statements.empty());
}

TEST_CASE("keywords match whole words only", "[parser]") {
  CHECK(parse_bad("resistor R1 (a, b) 1k\n") ==
        "demo.tacet:1:1: error: unknown statement 'resistor'\n"
        "resistor R1 (a, b) 1k\n"
        "^~~~~~~~\n"
        "hint: did you mean 'res'?\n");
}

// ---- bad input ----------------------------------------------------------------

TEST_CASE("an unknown statement is reported at its word with the nearest keyword", "[parser]") {
  CHECK(parse_text("title \"x\"\ncapp C1 (a, gnd) 1n\n", "netlists/demo.tacet").diagnostics ==
        "netlists/demo.tacet:2:1: error: unknown statement 'capp'\n"
        "capp C1 (a, gnd) 1n\n"
        "^~~~\n"
        "hint: did you mean 'cap'?\n");
}

TEST_CASE("a missing ')' is reported where the connections should close", "[parser]") {
  CHECK(parse_bad("res R1 (a, b 10k\n") ==
        "demo.tacet:1:14: error: expected ')' to close the connections\n"
        "res R1 (a, b 10k\n"
        "             ^~~\n");
  CHECK(parse_bad("res R1 (a, b\n") ==
        "demo.tacet:1:13: error: expected ')' to close the connections\n"
        "res R1 (a, b\n"
        "            ^\n");
}

TEST_CASE("a missing value names the statement so far", "[parser]") {
  CHECK(parse_bad("res   R1 (a, b)\n") ==
        "demo.tacet:1:16: error: expected a value after 'res R1 (a, b)'\n"
        "res   R1 (a, b)\n"
        "               ^\n");
  CHECK(parse_bad("res R1 (a, b) tol=1%\n") ==
        "demo.tacet:1:15: error: expected a value after 'res R1 (a, b)'\n"
        "res R1 (a, b) tol=1%\n"
        "              ^~~\n");
}

TEST_CASE("a malformed number is reported as one token", "[parser]") {
  CHECK(parse_bad("cap C1 (a, gnd) 1.2.3\n") ==
        "demo.tacet:1:17: error: malformed number '1.2.3'\n"
        "cap C1 (a, gnd) 1.2.3\n"
        "                ^~~~~\n");
}

TEST_CASE("an unterminated string is reported at the end of its line", "[parser]") {
  CHECK(parse_bad("title \"Phono stage\nres R1 (a, b) 1k\n") ==
        "demo.tacet:1:19: error: unterminated string: expected '\"' before the end of the line\n"
        "title \"Phono stage\n"
        "                  ^\n");
}

TEST_CASE("a block missing its '}' is reported at the end of the text", "[parser]") {
  CHECK(parse_bad("block b (p) {\n  res R1 (p, gnd) 1k\n\n") ==
        "demo.tacet:2:21: error: expected '}' to close the block\n"
        "  res R1 (p, gnd) 1k\n"
        "                    ^\n");
}

TEST_CASE("a model missing its '}' is reported at the end of the text", "[parser]") {
  CHECK(parse_bad("model m opamp {\n  gbw 1M") ==
        "demo.tacet:2:9: error: expected a model entry or '}' to close the model\n"
        "  gbw 1M\n"
        "        ^\n");
}

TEST_CASE("a param without '=' is reported at what came instead", "[parser]") {
  CHECK(parse_bad("param rg 1k\n") ==
        "demo.tacet:1:10: error: expected '=' after the parameter name\n"
        "param rg 1k\n"
        "         ^~\n");
}

TEST_CASE("something left after a complete statement is reported", "[parser]") {
  CHECK(parse_bad("res R1 (a, b) 10k 5\n") ==
        "demo.tacet:1:19: error: unexpected '5' after 'res R1 (a, b) 10k'\n"
        "res R1 (a, b) 10k 5\n"
        "                  ^\n");
}

TEST_CASE("a spec has a name, a kind, an optional probe and options", "[parser][spec]") {
  auto netlist = parse_good("spec flat_band flatness (adc_p, adc_n) from=2Hz to=4kHz max=0.1dB\n"
                            "spec rails_ok rails margin=1V\n");
  REQUIRE(netlist.statements.size() == 2);
  const auto& flat = boost::get<tacet::ast::Spec>(netlist.statements[0]);
  CHECK(flat.name.text == "flat_band");
  CHECK(flat.kind.text == "flatness");
  REQUIRE(flat.probe.has_value());
  CHECK(flat.probe->first.size() == 2);
  CHECK(flat.probe->first[1].node == "adc_n");
  REQUIRE(flat.options.size() == 3);
  CHECK(flat.options[2].key.text == "max");
  CHECK(flat.name.offset == 5);
  const auto& rails = boost::get<tacet::ast::Spec>(netlist.statements[1]);
  CHECK_FALSE(rails.probe.has_value());
  CHECK(rails.options.size() == 1);
}

TEST_CASE("a spec without its kind is an error after its name", "[parser][spec]") {
  CHECK(parse_bad("spec gain\n") ==
        "demo.tacet:1:10: error: expected the kind of spec (gain, flatness, phase, upper_corner, ...) "
        "after 'spec gain'\n"
        "spec gain\n"
        "         ^\n");
}

TEST_CASE("a block body takes only params, elements and uses", "[parser]") {
  CHECK(parse_bad("block b (p) {\n  title \"x\"\n}\n") ==
        "demo.tacet:2:3: error: 'title' is not allowed inside a block\n"
        "  title \"x\"\n"
        "  ^~~~~\n");
  CHECK(parse_bad("block b (p) {\n  capp C1 (p, gnd) 1n\n}\n") ==
        "demo.tacet:2:3: error: unknown statement 'capp'\n"
        "  capp C1 (p, gnd) 1n\n"
        "  ^~~~\n"
        "hint: did you mean 'cap'?\n");
}

TEST_CASE("a line that does not start with a word is not a statement", "[parser]") {
  CHECK(parse_bad("}\n") ==
        "demo.tacet:1:1: error: unexpected '}' at the start of a statement\n"
        "}\n"
        "^\n");
}

TEST_CASE("after an error parsing resumes at the next statement", "[parser]") {
  const std::string text =
      "capp C1 (a, gnd) 1n\n"
      "res R1 (a, b)\n"
      "    continued junk (\n"
      "block b (p) {\n"
      "  res R2 (p, q) 1..2\n"
      "  res R3 (p, q) 1k\n"
      "}\n"
      "res R4 (a, gnd) 1k\n"
      "param x 3\n";
  const std::string all = parse_bad(text);
  CHECK(all ==
        "demo.tacet:1:1: error: unknown statement 'capp'\n"
        "capp C1 (a, gnd) 1n\n"
        "^~~~\n"
        "hint: did you mean 'cap'?\n"
        "demo.tacet:2:14: error: expected a value after 'res R1 (a, b)'\n"
        "res R1 (a, b)\n"
        "             ^\n"
        "demo.tacet:5:17: error: malformed number '1..2'\n"
        "  res R2 (p, q) 1..2\n"
        "                ^~~~\n"
        "demo.tacet:9:9: error: expected '=' after the parameter name\n"
        "param x 3\n"
        "        ^\n");
}

TEST_CASE("after twenty errors parsing stops with a note", "[parser]") {
  std::string text;
  for (int i = 0; i < 25; ++i) text += "res R1 (a, b)\n";
  const ParseOutcome outcome = parse_text(text);
  CHECK_FALSE(outcome.netlist.has_value());
  std::size_t errors = 0;
  for (auto at = outcome.diagnostics.find(": error: "); at != std::string::npos;
       at = outcome.diagnostics.find(": error: ", at + 1)) {
    ++errors;
  }
  CHECK(errors == 20);
  CHECK(outcome.diagnostics.find("demo.tacet:21:1: note: too many errors; stopping here\n") !=
        std::string::npos);
}

TEST_CASE("nodes may start with a digit, names may not", "[parser]") {
  const auto n = parse_good("res R1 (1, 2_b) 1k\n");
  CHECK(instance(n, 0).connections.first.at(0).node == "1");
  CHECK(instance(n, 0).connections.first.at(1).node == "2_b");
  CHECK(parse_bad("res 1R (a, b) 1k\n") ==
        "demo.tacet:1:5: error: expected a name after 'res'\n"
        "res 1R (a, b) 1k\n"
        "    ^~\n");
}

TEST_CASE("missing connections are asked for by example", "[parser]") {
  CHECK(parse_bad("res R1 a b 1k\n") ==
        "demo.tacet:1:8: error: expected the connections in parentheses, like (a, b), after "
        "'res R1'\n"
        "res R1 a b 1k\n"
        "       ^\n");
}

TEST_CASE("an op amp or a use without its model or block name is reported", "[parser]") {
  CHECK(parse_bad("opamp U1 (+a, -b, out)\n") ==
        "demo.tacet:1:23: error: expected a model name after 'opamp U1 (+a, -b, out)'\n"
        "opamp U1 (+a, -b, out)\n"
        "                      ^\n");
  CHECK(parse_bad("use F1 (a, b) r=1k\n") ==
        "demo.tacet:1:15: error: expected a block name after 'use F1 (a, b)'\n"
        "use F1 (a, b) r=1k\n"
        "              ^\n");
}

TEST_CASE("an expression cut short is reported at the gap", "[parser]") {
  CHECK(parse_bad("param x = 1 +\n") ==
        "demo.tacet:1:14: error: expected a value after 'param x = 1 +'\n"
        "param x = 1 +\n"
        "             ^\n");
  CHECK(parse_bad("param x = (1 + 2\n") ==
        "demo.tacet:1:17: error: expected ')' to close the parenthesis\n"
        "param x = (1 + 2\n"
        "                ^\n");
  CHECK(parse_bad("res R1 (a, b) 1k tol=\n") ==
        "demo.tacet:1:22: error: expected a value after 'res R1 (a, b) 1k tol='\n"
        "res R1 (a, b) 1k tol=\n"
        "                     ^\n");
  CHECK(parse_bad("supply 12\n") ==
        "demo.tacet:1:10: error: expected a value after 'supply 12'\n"
        "supply 12\n"
        "         ^\n");
}

TEST_CASE("a number glued to a digit after its suffix is malformed", "[parser]") {
  CHECK(parse_bad("res R1 (a, b) 10k5\n") ==
        "demo.tacet:1:15: error: malformed number '10k5'\n"
        "res R1 (a, b) 10k5\n"
        "              ^~~~\n");
}

TEST_CASE("a statement in a block is quoted from its own start", "[parser]") {
  CHECK(parse_bad("block b (p) {\n  res R1 (p, q)\n}\n") ==
        "demo.tacet:2:16: error: expected a value after 'res R1 (p, q)'\n"
        "  res R1 (p, q)\n"
        "               ^\n");
}

TEST_CASE("a keyword in the wrong case gets the right spelling as a hint", "[parser]") {
  CHECK(parse_bad("Res R1 (a, b) 1k\n") ==
        "demo.tacet:1:1: error: unknown statement 'Res'\n"
        "Res R1 (a, b) 1k\n"
        "^~~\n"
        "hint: did you mean 'res'?\n");
}

TEST_CASE("an unclosed block does not hide errors in the model after it", "[parser]") {
  CHECK(parse_bad("block b (p) {\n  res R1 (p, q) 1.2.3\n"
                  "model m opamp { gbw }\n") ==
        "demo.tacet:2:17: error: malformed number '1.2.3'\n"
        "  res R1 (p, q) 1.2.3\n"
        "                ^~~~~\n"
        "demo.tacet:3:21: error: expected a value after 'model m opamp { gbw'\n"
        "model m opamp { gbw }\n"
        "                    ^\n");
}

TEST_CASE("the statement quoted in a message leaves out comments and line ends", "[parser]") {
  CHECK(parse_bad("model m opamp {  # invented archetype\n  gbw\n}\n") ==
        "demo.tacet:2:6: error: expected a value after 'model m opamp { gbw'\n"
        "  gbw\n"
        "     ^\n");
}

// ---- a lone expression (--set values) -----------------------------------------

namespace {

struct ExpressionOutcome {
  std::optional<ast::Expr> expression;
  std::string diagnostics;
};

ExpressionOutcome parse_expression_text(const std::string& text) {
  tacet::SourceManager sources;
  const int id = sources.add("--set R1", text);
  tacet::Diagnostics diagnostics(sources);
  auto expression = tacet::parse_expression(sources.file(id).text, id, diagnostics);
  return {std::move(expression), diagnostics.render_all()};
}

}  // namespace

TEST_CASE("a lone expression parses like a value in a netlist", "[parser]") {
  const auto outcome = parse_expression_text(" 2 * rg + 1k\xCE\xA9 ");
  INFO(outcome.diagnostics);
  REQUIRE(outcome.expression.has_value());
  const auto& sum = as<ast::Chain>(*outcome.expression);
  CHECK(sum.offset == 1);
  CHECK(sum.rest.at(0).op == '+');
  CHECK(as<ast::Quantity>(sum.rest[0].operand).suffix == "k\xCE\xA9");
  CHECK(as<ast::Quantity>(*parse_expression_text("12k").expression).digits == "12");
}

TEST_CASE("a lone expression must be the whole text", "[parser]") {
  CHECK(parse_expression_text("12k 5").diagnostics ==
        "--set R1:1:5: error: unexpected '5' after '12k'\n"
        "12k 5\n"
        "    ^\n");
  CHECK(parse_expression_text("").diagnostics ==
        "--set R1:1:1: error: expected a value\n"
        "\n"
        "^\n");
  CHECK(parse_expression_text("=3").diagnostics ==
        "--set R1:1:1: error: expected a value\n"
        "=3\n"
        "^\n");
  CHECK(parse_expression_text("1.2.3").diagnostics ==
        "--set R1:1:1: error: malformed number '1.2.3'\n"
        "1.2.3\n"
        "^~~~~\n");
  CHECK_FALSE(parse_expression_text("(1 +").expression.has_value());
}

// ---- bounded depth: no input may exhaust the parser's stack ------------------

TEST_CASE("an expression nested a hundred levels parses, one level more is refused", "[parser]") {
  auto nested = [](int levels) {
    return "param x = " + std::string(static_cast<std::size_t>(levels - 1), '(') + "1" +
           std::string(static_cast<std::size_t>(levels - 1), ')') + "\n";
  };
  parse_good(nested(100));
  const auto outcome = parse_text(nested(101));
  CHECK_FALSE(outcome.netlist);
  CHECK(outcome.diagnostics.find("error: expression nested more than 100 levels deep") !=
        std::string::npos);
}

TEST_CASE("ten thousand nested parentheses, signs, powers or calls are an error, not a crash",
          "[parser]") {
  const std::size_t n = 10000;
  for (const std::string& text :
       {"param x = " + std::string(n, '(') + "1" + std::string(n, ')') + "\n",
        "param x = " + std::string(n, '-') + "1\n",
        "param x = " + [&] { std::string s; for (std::size_t i = 0; i < n; ++i) s += "2^"; return s; }() + "1\n",
        "param x = " + [&] { std::string s; for (std::size_t i = 0; i < n; ++i) s += "sqrt("; return s; }() + "1" + std::string(n, ')') + "\n"}) {
    const auto outcome = parse_text(text);
    CHECK_FALSE(outcome.netlist);
    CHECK(outcome.diagnostics.find("levels deep") != std::string::npos);
  }
}

TEST_CASE("a line of a megabyte is quoted as a window around the error", "[parser]") {
  const std::string text = "res R1 (a, b) 1k" + std::string(1 << 20, ' ') + "bogus=\n";
  const auto outcome = parse_text(text);
  CHECK_FALSE(outcome.netlist);
  CHECK(outcome.diagnostics.size() < 1000);
  CHECK(outcome.diagnostics.find("...") != std::string::npos);
}
