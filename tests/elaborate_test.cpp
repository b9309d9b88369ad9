#include <catch2/catch.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "tacet/elaborate/elaborate.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

const Element& element(const Circuit& c, const std::string& name) {
  auto index = c.find_element(name);
  REQUIRE(index);
  return c.elements[*index];
}

std::string node_of(const Circuit& c, const Element& e, std::size_t terminal) {
  return c.node_names[static_cast<std::size_t>(e.nodes[terminal])];
}

const char* kOpAmp = "model amp opamp { gbw 10MHz aol 120dB }\n";

}  // namespace

TEST_CASE("values reach the circuit in SI units", "[elaborate]") {
  auto r = elaborate_text(
      "res R1 (a, b) 10k tol=1%\n"
      "cap C1 (b, gnd) 100nF\n"
      "ind L1 (b, c) 10mH\n"
      "res R2 (c, gnd) 4.7kohm noiseless\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "R1").value == Approx(10e3));
  CHECK(element(*r.circuit, "R1").tolerance == Approx(0.01));
  CHECK(element(*r.circuit, "C1").value == Approx(100e-9));
  CHECK(element(*r.circuit, "L1").value == Approx(10e-3));
  CHECK(element(*r.circuit, "R2").noiseless);
  CHECK(node_of(*r.circuit, element(*r.circuit, "C1"), 1) == "gnd");
}

TEST_CASE("params are expressions over earlier params", "[elaborate]") {
  auto r = elaborate_text(
      "param rg = 1k\n"
      "param rf = 9 * rg\n"
      "param fc = 1 / (2 * pi * rg * 10n)\n"
      "res Rf (out, fb) rf\n"
      "res Rx (out, gnd) sqrt(rf * rg) + 2^3\n"
      "cap C1 (fb, gnd) 1 / (2 * pi * fc * rg)\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "Rf").value == Approx(9000));
  CHECK(element(*r.circuit, "Rx").value == Approx(3000 + 8));
  CHECK(element(*r.circuit, "C1").value == Approx(10e-9));
}

TEST_CASE("rejects a unit that does not fit the element", "[elaborate]") {
  auto r = elaborate_text("res R1 (a, b) 10nF\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "main.tacet:1:15: error: unit 'nF' is a capacitance; a resistance is wanted here\n"
        "res R1 (a, b) 10nF\n"
        "              ^~~~\n");
}

TEST_CASE("a meg-style prefix gets the mega hint", "[elaborate]") {
  auto r = elaborate_text("res R1 (a, b) 1meg\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:15: error: unknown unit or prefix 'meg'\n"
        "res R1 (a, b) 1meg\n"
        "              ^~~~\n"
        "hint: M is mega; write m for milli\n");
}

TEST_CASE("an upper-case K on a resistor gets the kilo hint", "[elaborate]") {
  auto r = elaborate_text("res R1 (a, b) 10K\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:15: error: unit 'K' is a temperature; a resistance is wanted here\n"
        "res R1 (a, b) 10K\n"
        "              ^~~\n"
        "hint: K is kelvin; write k for kilo\n");
}

TEST_CASE("a zero-ohm resistor is an error at its value", "[elaborate]") {
  auto r = elaborate_text("res R1 (a, b) 0\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:15: error: resistance of 'R1' must be greater than zero, not 0\n"
        "res R1 (a, b) 0\n"
        "              ^\n"
        "hint: for a short, connect the nodes directly\n");
}

TEST_CASE("a negative capacitance is an error", "[elaborate]") {
  auto r = elaborate_text("cap C1 (a, b) -1n\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics.find("main.tacet:1:15: error: capacitance of 'C1' must be greater than zero") == 0);
}

TEST_CASE("a value that overflows is an error", "[elaborate]") {
  auto r = elaborate_text("res R1 (a, b) 1e300 * 1e300\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics.find("main.tacet:1:15: error: value overflows") == 0);
}

TEST_CASE("an unknown name in an expression suggests the nearest param", "[elaborate]") {
  auto r = elaborate_text("param rgain = 1k\nres R1 (a, b) rgian\n");
  CHECK(r.diagnostics ==
        "main.tacet:2:15: error: unknown name 'rgian'\n"
        "res R1 (a, b) rgian\n"
        "              ^~~~~\n"
        "hint: did you mean 'rgain'?\n");
}

TEST_CASE("a duplicate element name is reported with the first definition", "[elaborate]") {
  auto r = elaborate_text("res R1 (a, b) 1k\nres R1 (b, gnd) 2k\n");
  CHECK(r.diagnostics ==
        "main.tacet:2:5: error: element 'R1' is already defined\n"
        "res R1 (b, gnd) 2k\n"
        "    ^~\n"
        "main.tacet:1:5: note: 'R1' was first defined here\n"
        "res R1 (a, b) 1k\n"
        "    ^~\n");
}

TEST_CASE("op amps resolve their model and inputs by polarity", "[elaborate]") {
  auto r = elaborate_text(std::string(kOpAmp) +
                          "opamp U1 (out, -fb, +in) amp rails=+15/-15\n"
                          "res Rf (out, fb) 10k\nres Rg (fb, gnd) 1k\nvsrc V1 (in, gnd) ac=1\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  const auto& u = element(*r.circuit, "U1");
  CHECK(node_of(*r.circuit, u, 0) == "in");
  CHECK(node_of(*r.circuit, u, 1) == "fb");
  CHECK(node_of(*r.circuit, u, 2) == "out");
  const auto& m = r.circuit->models[static_cast<std::size_t>(u.model)];
  CHECK(m.gbw == Approx(10e6));
  CHECK(m.aol == Approx(1e6));
  REQUIRE(u.rails);
  CHECK(u.rails->high == 15);
  CHECK(u.rails->low == -15);
}

TEST_CASE("a missing model names the nearest one", "[elaborate]") {
  auto r = elaborate_text(std::string(kOpAmp) + "opamp U1 (+a, -b, c) amq\n");
  CHECK(r.diagnostics ==
        "main.tacet:2:22: error: no model named 'amq'\n"
        "opamp U1 (+a, -b, c) amq\n"
        "                     ^~~\n"
        "hint: did you mean 'amp'?\n");
}

TEST_CASE("a model without a gain-bandwidth product is refused", "[elaborate]") {
  auto r = elaborate_text("model slow opamp { aol 100dB }\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics.find("main.tacet:1:7: error: model 'slow' needs a gain-bandwidth product") == 0);
}

TEST_CASE("model parameters take their units and reject others", "[elaborate]") {
  auto ok = elaborate_text("model m opamp { gbw 8MHz aol 110dB en 3.2nV/rtHz in 0.5pA/rtHz slew 10V/us rout 40ohm }\n"
                           "opamp U1 (+a, -o, o) m\nres R (a, gnd) 1k\n");
  INFO(ok.diagnostics);
  REQUIRE(ok.circuit);
  const auto& m = ok.circuit->models.at(0);
  CHECK(m.en == Approx(3.2e-9));
  CHECK(m.in == Approx(0.5e-12));
  CHECK(m.slew == Approx(10e6));
  CHECK(m.rout == Approx(40));
  auto bad = elaborate_text("model m opamp { gbw 8MHz en 3nA }\n");
  CHECK(bad.diagnostics.find("error: unit 'nA' is a current; a voltage noise density is wanted here") !=
        std::string::npos);
}

TEST_CASE("an op amp needs one + input, one - input and an output", "[elaborate]") {
  auto r = elaborate_text(std::string(kOpAmp) + "opamp U1 (a, -b, c) amp\n");
  CHECK(r.diagnostics.find("error: op amp 'U1' needs three connections: +input, -input and output") !=
        std::string::npos);
}

TEST_CASE("an override of U1.rails replaces rails written on the instance", "[elaborate]") {
  ElaborateOptions options;
  options.overrides.push_back({"U1.rails", "+5/-5"});
  auto r = elaborate_text(std::string(kOpAmp) + "opamp U1 (+a, -b, b) amp rails=+15/-15\n"
                                                "res R1 (a, gnd) 1k\n",
                          {}, options);
  REQUIRE(r.circuit);
  const auto& u = element(*r.circuit, "U1");
  REQUIRE(u.rails);
  CHECK(u.rails->high == 5);
  CHECK(u.rails->low == -5);
}

TEST_CASE("inverted rails are an error", "[elaborate]") {
  auto r = elaborate_text(std::string(kOpAmp) + "opamp U1 (+a, -b, b) amp rails=-15/+15\n");
  CHECK(r.diagnostics.find("error: rails inverted: high -15 V is not above low 15 V") != std::string::npos);
  auto s = elaborate_text("supply -12 +12\n");
  CHECK(s.diagnostics.find("main.tacet:1:8: error: supply rails inverted") == 0);
}

TEST_CASE("supply and ambient set the circuit defaults", "[elaborate]") {
  auto r = elaborate_text("supply +12 -12\nambient 300K\nres R (a, gnd) 1k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  REQUIRE(r.circuit->supply);
  CHECK(r.circuit->supply->high == 12);
  CHECK(r.circuit->supply->low == -12);
  CHECK(r.circuit->ambient_celsius == Approx(26.85));
}

TEST_CASE("controlled sources need their gain", "[elaborate]") {
  auto r = elaborate_text("vcvs E1 (o, gnd; p, n) gain=20dB\nvccs G1 (o, gnd; p, n) gm=2mS\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "E1").value == Approx(10));
  CHECK(element(*r.circuit, "G1").value == Approx(2e-3));
  auto missing = elaborate_text("vcvs E1 (o, gnd; p, n)\n");
  CHECK(missing.diagnostics.find("main.tacet:1:6: error: 'E1' needs gain=") == 0);
}

TEST_CASE("sources carry dc, ac magnitude and phase", "[elaborate]") {
  auto r = elaborate_text("vsrc V1 (in, gnd) dc=1.5 ac=1 phase=90deg\nisrc I1 (a, gnd) ac=1uA\n"
                          "res R (in, a) 1k\nres R2 (a, gnd) 1k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  const auto& v = element(*r.circuit, "V1");
  CHECK(v.dc == 1.5);
  CHECK(v.ac_magnitude == 1);
  CHECK(v.ac_phase == 90);
  CHECK(element(*r.circuit, "I1").ac_magnitude == Approx(1e-6));
}

TEST_CASE("an unknown option suggests the nearest", "[elaborate]") {
  auto r = elaborate_text("res R1 (a, b) 1k tole=1%\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:18: error: 'res' takes no option 'tole'\n"
        "res R1 (a, b) 1k tole=1%\n"
        "                 ^~~~\n"
        "hint: did you mean 'tol'?\n");
}

TEST_CASE("blocks expand into dotted names with their parameters", "[elaborate]") {
  auto r = elaborate_text(
      "block rc (in, out) r=10k c {\n"
      "  param tau = r * c\n"
      "  res R1 (in, x) r\n"
      "  res R2 (x, out) tau * 1e9\n"
      "  cap C1 (out, gnd) c\n"
      "}\n"
      "use F1 (a, b) rc c=1n\n"
      "use F2 (b, d) rc r=22k c=2n\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  const Circuit& c = *r.circuit;
  CHECK(element(c, "F1.R1").value == Approx(10e3));
  CHECK(element(c, "F1.R2").value == Approx(10e3 * 1e-9 * 1e9));
  CHECK(element(c, "F2.R1").value == Approx(22e3));
  CHECK(element(c, "F2.C1").value == Approx(2e-9));
  CHECK(node_of(c, element(c, "F1.R1"), 0) == "a");
  CHECK(node_of(c, element(c, "F1.R1"), 1) == "F1.x");
  CHECK(node_of(c, element(c, "F1.C1"), 0) == "b");
  CHECK(node_of(c, element(c, "F2.R1"), 0) == "b");
  CHECK(node_of(c, element(c, "F2.C1"), 1) == "gnd");
}

TEST_CASE("blocks may use other blocks", "[elaborate]") {
  auto r = elaborate_text(
      "block half (a, b) r=1k {\n  res R (a, b) r\n}\n"
      "block full (a, b) r=1k {\n  use H1 (a, m) half r=r\n  use H2 (m, b) half r=2*r\n}\n"
      "use X (p, gnd) full r=5k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "X.H1.R").value == Approx(5e3));
  CHECK(element(*r.circuit, "X.H2.R").value == Approx(10e3));
  CHECK(node_of(*r.circuit, element(*r.circuit, "X.H2.R"), 0) == "X.m");
}

TEST_CASE("a block parameter without a default must be given", "[elaborate]") {
  auto r = elaborate_text("block rc (in, out) r c=1n {\n  res R1 (in, out) r\n}\nuse F1 (a, b) rc\n");
  CHECK(r.diagnostics ==
        "main.tacet:4:5: error: 'F1' needs a value for parameter 'r' of block 'rc'\n"
        "use F1 (a, b) rc\n"
        "    ^~\n"
        "hint: write r=...\n");
}

TEST_CASE("an unknown block argument suggests the parameter", "[elaborate]") {
  auto r = elaborate_text("block rc (in, out) res=1k {\n  res R1 (in, out) res\n}\nuse F1 (a, b) rc rse=2k\n");
  CHECK(r.diagnostics.find("main.tacet:4:18: error: block 'rc' has no parameter 'rse'") == 0);
  CHECK(r.diagnostics.find("hint: did you mean 'res'?") != std::string::npos);
}

TEST_CASE("a block that uses itself is reported", "[elaborate]") {
  auto r = elaborate_text("block loop (a, b) {\n  use L (a, b) loop\n}\nuse X (p, q) loop\n");
  CHECK(r.diagnostics.find("error: block 'loop' uses itself") != std::string::npos);
}

TEST_CASE("a block instance must connect every port", "[elaborate]") {
  auto r = elaborate_text("block rc (in, out) {\n  res R1 (in, out) 1k\n}\nuse F1 (a) rc\n");
  CHECK(r.diagnostics.find("main.tacet:4:8: error: block 'rc' has 2 ports, but 'F1' connects 1") == 0);
}

TEST_CASE("include reads files relative to the including file", "[elaborate][include]") {
  auto r = elaborate_text("include \"parts/lib.tacet\"\nopamp U1 (+a, -o, o) deep\nres R (a, gnd) 1k\n",
                          {{"parts/lib.tacet", "include \"more.tacet\"\n"},
                           {"parts/more.tacet", "model deep opamp { gbw 1M }\n"}});
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(r.circuit->models.at(0).name == "deep");
}

TEST_CASE("an include cycle is reported with the chain", "[elaborate][include]") {
  auto r = elaborate_text("include \"a.tacet\"\n", {{"a.tacet", "include \"main.tacet\"\n"}});
  CHECK(r.diagnostics ==
        "a.tacet:1:1: error: include cycle: main.tacet -> a.tacet -> main.tacet\n"
        "include \"main.tacet\"\n"
        "^\n"
        "hint: a file may not include itself, directly or through others\n");
}

TEST_CASE("a missing include file is reported at the include", "[elaborate][include]") {
  auto r = elaborate_text("include \"nowhere.tacet\"\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:1: error: cannot read 'nowhere.tacet'\n"
        "include \"nowhere.tacet\"\n"
        "^\n"
        "hint: include paths are relative to the including file\n");
}

TEST_CASE("a library included twice is read once", "[elaborate][include]") {
  auto r = elaborate_text("include \"lib.tacet\"\ninclude \"lib.tacet\"\n",
                          {{"lib.tacet", "model deep opamp { gbw 1M }\n"}});
  INFO(r.diagnostics);
  CHECK(r.circuit);
}

TEST_CASE("command-line overrides reach params, element values, options and model parameters", "[elaborate][set]") {
  ElaborateOptions options;
  options.overrides = {{"rg", "2k"}, {"R2", "12k"}, {"V1.ac", "2"}, {"amp.gbw", "1MHz"}, {"F1.r", "22k"},
                       {"F1.R1.tol", "5%"}};
  auto r = elaborate_text(std::string(kOpAmp) +
                              "param rg = 1k\nparam rf = 9 * rg\n"
                              "res R1 (a, b) rf\nres R2 (b, gnd) 1k\nvsrc V1 (a, gnd) ac=1\n"
                              "opamp U1 (+b, -c, c) amp\n"
                              "block one (x, y) r=1k {\n  res R1 (x, y) r tol=1%\n}\nuse F1 (c, gnd) one\n",
                          {}, options);
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "R1").value == Approx(18e3));
  CHECK(element(*r.circuit, "R2").value == Approx(12e3));
  CHECK(element(*r.circuit, "V1").ac_magnitude == 2);
  CHECK(r.circuit->models.at(0).gbw == Approx(1e6));
  CHECK(element(*r.circuit, "F1.R1").value == Approx(22e3));
  CHECK(element(*r.circuit, "F1.R1").tolerance == Approx(0.05));
}

TEST_CASE("an override of a name that does not exist is an error with a hint", "[elaborate][set]") {
  ElaborateOptions options;
  options.overrides = {{"R3", "1k"}};
  auto r = elaborate_text("res R1 (a, gnd) 1k\nres R2 (a, gnd) 1k\n", {}, options);
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "error: --set R3: no param, element or model parameter of that name\n"
        "hint: did you mean 'R1'?\n");
}

TEST_CASE("override values are checked like netlist values", "[elaborate][set]") {
  ElaborateOptions options;
  options.overrides = {{"R1", "10nF"}};
  auto r = elaborate_text("res R1 (a, gnd) 1k\n", {}, options);
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "--set R1:1:1: error: unit 'nF' is a capacitance; a resistance is wanted here\n"
        "10nF\n"
        "^~~~\n");
}

TEST_CASE("the command-line ambient wins over the netlist", "[elaborate]") {
  ElaborateOptions options;
  options.ambient_celsius = 40;
  auto r = elaborate_text("ambient 25C\nres R (a, gnd) 1k\n", {}, options);
  REQUIRE(r.circuit);
  CHECK(r.circuit->ambient_celsius == 40);
}

TEST_CASE("a block default may use the parameters before it", "[elaborate]") {
  auto r = elaborate_text("block div (a, b) r=1k r2=2*r {\n  res R1 (a, b) r2\n}\nuse D (p, gnd) div r=3k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "D.R1").value == Approx(6e3));
}

TEST_CASE("the top file's title names the circuit, not a library's", "[elaborate][include]") {
  auto r = elaborate_text("include \"lib.tacet\"\ntitle \"Phono stage\"\nres R (a, gnd) 1k\n",
                          {{"lib.tacet", "title \"Library\"\nmodel deep opamp { gbw 1M }\n"}});
  REQUIRE(r.circuit);
  CHECK(r.circuit->title == "Phono stage");
}

TEST_CASE("a negative decibel value is a ratio below one", "[elaborate]") {
  // -6.0206 dB is a voltage ratio of 1/2 (20 log10 0.5).
  auto r = elaborate_text("vcvs E1 (o, gnd; p, gnd) gain=-6.020599913279624dB\nres R (p, gnd) 1k\nres R2 (o, gnd) 1k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "E1").value == Approx(0.5).epsilon(1e-12));
}

TEST_CASE("a node named 0 is warned about once: the reference is gnd", "[elaborate]") {
  auto r = elaborate_text("vsrc V1 (a, 0) ac=1\nres R1 (a, 0) 1k\n");
  REQUIRE(r.circuit);  // a warning, not an error
  CHECK(r.diagnostics ==
        "main.tacet:1:13: warning: node '0' is an ordinary node here, not the reference\n"
        "vsrc V1 (a, 0) ac=1\n"
        "            ^\n"
        "hint: the reference node is called gnd\n");
}

TEST_CASE("the Greek mu is a micro prefix like the micro sign", "[elaborate]") {
  auto r = elaborate_text("cap C1 (a, gnd) 10\xCE\xBC" "F\ncap C2 (a, gnd) 10\xC2\xB5" "F\nres R (a, gnd) 1k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(r.circuit->elements[0].value == Approx(10e-6));
  CHECK(r.circuit->elements[1].value == Approx(10e-6));
}

TEST_CASE("blocks nested beyond 64 levels are refused before the stack is exhausted", "[elaborate]") {
  std::string text = "vsrc V (in, gnd) ac=1\nuse top (in, gnd) b0\n";
  for (int i = 0; i < 10000; ++i)
    text += "block b" + std::to_string(i) + " (a, b) {\n  use X (a, b) b" + std::to_string(i + 1) + "\n}\n";
  text += "block b10000 (a, b) {\n  res R (a, b) 1k\n}\n";
  const auto result = testing::elaborate_text(text);
  CHECK_FALSE(result.circuit);
  CHECK(result.diagnostics.find("error: blocks nested more than 64 deep") != std::string::npos);
}

TEST_CASE("a byte that is not UTF-8 is reported at its line and column, unquoted", "[elaborate]") {
  // UTF-8 is RFC 3629; 0xFF never occurs in it.
  const auto result = testing::elaborate_text("title \"x\"\nres R1 (a, gnd) 1k\xFF\n");
  CHECK_FALSE(result.circuit);
  CHECK(result.diagnostics ==
        "main.tacet:2:19: error: byte 0xFF is not UTF-8 (netlists are read as UTF-8)\n"
        "hint: save the file as UTF-8 text\n");
}

TEST_CASE("a NUL byte is an error, not the end of every message after it", "[elaborate]") {
  const auto result = testing::elaborate_text(std::string("res R1 (a, gnd) 1k\nres R2") + '\0' + " (a, gnd) 1k\n");
  CHECK_FALSE(result.circuit);
  CHECK(result.diagnostics.find("main.tacet:2:7: error: a NUL byte: a netlist is text") == 0);
}

TEST_CASE("an included file that is not a .tacet netlist is never quoted", "[elaborate]") {
  const auto result =
      testing::elaborate_text("include \"secrets.txt\"\n", {{"secrets.txt", "password hunter2\n"}});
  CHECK_FALSE(result.circuit);
  CHECK(result.diagnostics.find("secrets.txt:1:1: error:") != std::string::npos);
  CHECK(result.diagnostics.find("hunter2") == std::string::npos);
}
