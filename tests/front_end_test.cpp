// The shortcuts the front end takes for speed (docs/performance.md, "The front
// end"): an element statement parsed in place, a lone value parsed without the
// chains of the expression grammar, names kept in hashed tables. Each must give
// what the general path gives: the same tree, the same locations, the same
// node ids and the same hints. The expected trees follow grammar/tacet.ebnf.
#include <catch2/catch.hpp>

#include <optional>
#include <string>
#include <type_traits>

#include "tacet/elaborate/elaborate.hpp"
#include "tacet/language/parser.hpp"
#include "text_circuit.hpp"

namespace ast = tacet::ast;
namespace x3 = boost::spirit::x3;

namespace {

struct Parsed {
  std::optional<ast::Netlist> netlist;
  std::string diagnostics;
};

Parsed parse(const std::string& text) {
  tacet::SourceManager sources;
  const int id = sources.add("demo.tacet", text);
  tacet::Diagnostics diagnostics(sources);
  auto netlist = tacet::parse_netlist(sources.file(id).text, id, diagnostics);
  return {std::move(netlist), diagnostics.render_all()};
}

const ast::Instance& only_instance(const Parsed& parsed) {
  REQUIRE(parsed.netlist);
  REQUIRE(parsed.netlist->statements.size() == 1);
  return boost::get<ast::Instance>(parsed.netlist->statements[0]);
}

const ast::Chain& chain_of(const ast::Expr& e) {
  return boost::get<x3::forward_ast<ast::Chain>>(e.get()).get();
}

}  // namespace

TEST_CASE("a lone value has the location it has as the first operand of an expression",
          "[front end]") {
  const Parsed lone = parse("res R1 (a, b) 10k tol=1%\n");
  const Parsed sum = parse("res R1 (a, b) 10k*2 tol=1%\n");
  INFO(lone.diagnostics << sum.diagnostics);
  const auto& q = boost::get<ast::Quantity>(only_instance(lone).value->get());
  const auto& first = boost::get<ast::Quantity>(chain_of(*only_instance(sum).value).first.get());
  CHECK(q.digits == "10");
  CHECK(q.suffix == "k");
  CHECK(q.offset == 14);
  CHECK(q.length == 3);
  CHECK(first.offset == q.offset);
  CHECK(first.length == q.length);
  CHECK(chain_of(*only_instance(sum).value).rest.at(0).op == '*');
  // tol=1% after the value is an option either way.
  CHECK(only_instance(lone).options.at(0).key.text == "tol");
  CHECK(only_instance(sum).options.at(0).key.text == "tol");
}

TEST_CASE("a name followed by an operator or a parenthesis is not a lone value", "[front end]") {
  const Parsed call = parse("param x = sqrt (4)\n");
  const Parsed difference = parse("param x = r -1\n");
  const Parsed power = parse("param x = 2 ^3\n");
  const Parsed name = parse("param x = r\n");
  for (const Parsed* p : {&call, &difference, &power, &name}) {
    INFO(p->diagnostics);
    REQUIRE(p->netlist);
  }
  auto value = [](const Parsed& p) -> const ast::Expr& {
    return boost::get<ast::Param>(p.netlist->statements.at(0)).value;
  };
  CHECK(boost::get<x3::forward_ast<ast::Call>>(value(call).get()).get().function.text == "sqrt");
  CHECK(chain_of(value(difference)).rest.at(0).op == '-');
  CHECK(chain_of(value(power)).rest.at(0).op == '^');
  CHECK(boost::get<ast::Identifier>(value(name).get()).text == "r");
}

TEST_CASE("the nesting bound is the same for a lone number and for a sum at the deepest level",
          "[front end]") {
  auto nested = [](int levels, const std::string& inner) {
    return "param x = " + std::string(static_cast<std::size_t>(levels), '(') + inner +
           std::string(static_cast<std::size_t>(levels), ')') + "\n";
  };
  for (int levels : {98, 99, 100}) {
    INFO(levels);
    CHECK(parse(nested(levels, "1")).netlist.has_value() ==
          parse(nested(levels, "1+1")).netlist.has_value());
  }
}

TEST_CASE("statements keep the order written when elements and other statements alternate",
          "[front end]") {
  const Parsed p = parse(
      "param a = 1\n"
      "res R1 (x, y) 1k\n"
      "supply +5V -5V\n"
      "use F1 (x, y) filter\n"
      "cap C1 (y, gnd) 1n\n");
  INFO(p.diagnostics);
  REQUIRE(p.netlist);
  const auto& s = p.netlist->statements;
  REQUIRE(s.size() == 5);
  CHECK(boost::get<ast::Param>(&s[0]) != nullptr);
  CHECK(boost::get<ast::Instance>(s[1]).name.text == "R1");
  CHECK(boost::get<ast::Supply>(&s[2]) != nullptr);
  CHECK(boost::get<ast::Instance>(s[3]).keyword.text == "use");
  CHECK(boost::get<ast::Instance>(s[4]).name.text == "C1");
}

TEST_CASE("a word that only starts with an element keyword is an unknown statement",
          "[front end]") {
  const Parsed p = parse("resx R1 (a, b) 1k\nres R2 (a, b) 1k\n");
  CHECK_FALSE(p.netlist);
  CHECK(p.diagnostics.find("demo.tacet:1:1: error: unknown statement 'resx'") == 0);
  CHECK(p.diagnostics.find("hint: did you mean 'res'?") != std::string::npos);
}

TEST_CASE("an element that fails after its keyword is reported once and the next line is read",
          "[front end]") {
  const Parsed p = parse("res R1 (a, b\nres R2 a, b) 1k\ncap C1 (a, gnd) 1n\n");
  CHECK_FALSE(p.netlist);
  CHECK(p.diagnostics.find("demo.tacet:1:13: error: expected ')' to close the connections") == 0);
  CHECK(p.diagnostics.find("demo.tacet:2:8: error: expected the connections in parentheses") !=
        std::string::npos);
  CHECK(p.diagnostics.find("demo.tacet:3:") == std::string::npos);
}

TEST_CASE("equal node names map to one node, however long the name", "[front end]") {
  const std::string long_name(200000, 'n');
  const auto r = tacet::testing::elaborate_text("res R1 (" + long_name + ", b) 1k\n" +
                                                "res R2 (b, " + long_name + ") 2k\n" +
                                                "cap C1 (" + long_name + ", gnd) 1n\n");
  INFO(r.diagnostics.substr(0, 300));
  REQUIRE(r.circuit);
  const auto& c = *r.circuit;
  CHECK(c.node_count() == 3);  // gnd, the long one, b
  CHECK(c.elements.at(0).nodes.at(0) == c.elements.at(1).nodes.at(1));
  CHECK(c.elements.at(0).nodes.at(0) == c.elements.at(2).nodes.at(0));
  CHECK(c.node_names.at(static_cast<std::size_t>(c.elements.at(0).nodes.at(0))) == long_name);
}

TEST_CASE("an element name defined twice is reported with its first definition",
          "[front end]") {
  const auto r = tacet::testing::elaborate_text("res R1 (a, b) 1k\nres R2 (b, gnd) 1k\nres R1 (a, gnd) 2k\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics.find("main.tacet:3:5: error: element 'R1' is already defined") == 0);
  CHECK(r.diagnostics.find("main.tacet:1:5: note: 'R1' was first defined here") != std::string::npos);
}

TEST_CASE("a misspelled --set name is hinted with the first nearest name in sorted order",
          "[front end]") {
  // RA and RB are both one edit from RC; the names are offered sorted, so RA,
  // whatever order the netlist writes them in or a hashed table keeps them.
  tacet::ElaborateOptions options;
  options.overrides = {{"RC", "1k"}};
  const auto r = tacet::testing::elaborate_text(
      "res RB (a, b) 1k\nres RZ (b, c) 1k\nres RA (c, gnd) 1k\nres RY (a, gnd) 1k\n", {}, options);
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics.find("--set RC: no param, element or model parameter of that name") !=
        std::string::npos);
  CHECK(r.diagnostics.find("hint: did you mean 'RA'?") != std::string::npos);
}
