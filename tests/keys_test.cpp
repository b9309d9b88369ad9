// The one reader of key tables (src/elaborate/keys.cpp), seen through the
// three statements that use it: element options, model parameters, spec options.

#include <catch2/catch.hpp>

#include <string>

#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

ElaborateOptions with_set(const std::string& name, const std::string& value) {
  ElaborateOptions options;
  options.overrides.push_back({name, value});
  return options;
}

}  // namespace

TEST_CASE("an option given twice is reported at its second key", "[elaborate][keys]") {
  auto r = elaborate_text("res R1 (a, gnd) 1k tol=1% tol=2%\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "main.tacet:1:27: error: option 'tol' is given twice\n"
        "res R1 (a, gnd) 1k tol=1% tol=2%\n"
        "                          ^~~\n");
}

TEST_CASE("a flag given a value and an option without one are both refused", "[elaborate][keys]") {
  auto flag = elaborate_text("res R1 (a, gnd) 1k noiseless=1\n");
  CHECK(flag.diagnostics ==
        "main.tacet:1:20: error: 'noiseless' is a flag and takes no value\n"
        "res R1 (a, gnd) 1k noiseless=1\n"
        "                   ^~~~~~~~~~~\n"
        "hint: write just 'noiseless'\n");
  auto bare = elaborate_text("res R1 (a, gnd) 1k tol\n");
  CHECK(bare.diagnostics ==
        "main.tacet:1:20: error: option 'tol' needs a value\n"
        "res R1 (a, gnd) 1k tol\n"
        "                   ^~~\n"
        "hint: write tol=...\n");
}

TEST_CASE("a required option left out is named with an example", "[elaborate][keys]") {
  auto r = elaborate_text("vccs G1 (a, gnd; a, gnd)\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:6: error: 'G1' needs gm=\n"
        "vccs G1 (a, gnd; a, gnd)\n"
        "     ^~\n"
        "hint: write gm=1m\n");
}

TEST_CASE("an override NAME.key= gives an option the netlist leaves out", "[elaborate][keys]") {
  auto tol = elaborate_text("res R1 (a, gnd) 1k\n", {}, with_set("R1.tol", "2%"));
  INFO(tol.diagnostics);
  REQUIRE(tol.circuit);
  CHECK(tol.circuit->elements[0].tolerance == Approx(0.02));
  auto gain = elaborate_text("vcvs E1 (a, gnd; b, gnd)\nres R1 (b, gnd) 1k\n", {},
                             with_set("E1.gain", "5"));
  INFO(gain.diagnostics);
  REQUIRE(gain.circuit);  // the override counts as the required gain=
  CHECK(gain.circuit->elements[0].value == 5);
}

TEST_CASE("an override NAME.key= wins over the value written", "[elaborate][keys]") {
  auto r = elaborate_text("vsrc V1 (a, gnd) dc=1 ac=1\nres R1 (a, gnd) 1k\n", {},
                          with_set("V1.dc", "2.5"));
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(r.circuit->elements[0].dc == 2.5);
  auto model = elaborate_text("model amp opamp { gbw 1M en 10n }\n", {}, with_set("amp.en", "4n"));
  INFO(model.diagnostics);
  REQUIRE(model.circuit);
  CHECK(model.circuit->models[0].en == Approx(4e-9));
}

TEST_CASE("model parameters are checked by the same reader", "[elaborate][keys]") {
  auto twice = elaborate_text("model amp opamp { gbw 1M gbw 2M }\n");
  CHECK(twice.diagnostics ==
        "main.tacet:1:26: error: 'gbw' is given twice in model 'amp'\n"
        "model amp opamp { gbw 1M gbw 2M }\n"
        "                         ^~~\n");
  auto unknown = elaborate_text("model amp opamp { gwb 1M }\n");
  CHECK(unknown.diagnostics ==
        "main.tacet:1:19: error: unknown op-amp parameter 'gwb'\n"
        "model amp opamp { gwb 1M }\n"
        "                  ^~~\n"
        "hint: did you mean 'gbw'?\n");
  auto range = elaborate_text("model amp opamp { gbw 1M rin 0 }\n");
  CHECK(range.diagnostics.find("main.tacet:1:30: error: rin of model 'amp' must be greater than zero") == 0);
  auto negative_ib = elaborate_text("model amp opamp { gbw 1M ib -2n }\n");
  INFO(negative_ib.diagnostics);
  REQUIRE(negative_ib.circuit);  // a bias current may flow out of the pins
  CHECK(negative_ib.circuit->models[0].ib == Approx(-2e-9));
}

TEST_CASE("spec options are checked by the same reader", "[elaborate][keys]") {
  auto r = elaborate_text("res R1 (a, gnd) 1k\nspec g gain (a) att=1k min=1\n");
  CHECK(r.diagnostics ==
        "main.tacet:2:17: error: a gain spec takes no option 'att'\n"
        "spec g gain (a) att=1k min=1\n"
        "                ^~~\n"
        "hint: did you mean 'at'?\n"
        "main.tacet:2:6: error: spec 'g' needs at=\n"
        "spec g gain (a) att=1k min=1\n"
        "     ^\n");
}

TEST_CASE("block arguments are checked by the same reader", "[elaborate][keys]") {
  const std::string block = "block rc (a, b) r=1k {\n  res R1 (a, b) r\n}\n";
  auto r = elaborate_text(block + "use F1 (x, gnd) rc rr=2k r=1k r=2k\n");
  CHECK(r.diagnostics ==
        "main.tacet:4:20: error: block 'rc' has no parameter 'rr'\n"
        "use F1 (x, gnd) rc rr=2k r=1k r=2k\n"
        "                   ^~\n"
        "hint: did you mean 'r'?\n"
        "main.tacet:4:31: error: argument 'r' is given twice\n"
        "use F1 (x, gnd) rc rr=2k r=1k r=2k\n"
        "                              ^\n");
  auto bare = elaborate_text(block + "use F1 (x, gnd) rc r\n");
  CHECK(bare.diagnostics ==
        "main.tacet:4:20: error: argument 'r' needs a value\n"
        "use F1 (x, gnd) rc r\n"
        "                   ^\n"
        "hint: write r=...\n");
}

TEST_CASE("a malformed key is reported once and does not count as given", "[elaborate][keys]") {
  // `tol` without a value is refused; the `tol=1%` after it is then the first
  // tol, not a second one.
  auto r = elaborate_text("res R1 (a, gnd) 1k tol tol=1%\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:20: error: option 'tol' needs a value\n"
        "res R1 (a, gnd) 1k tol tol=1%\n"
        "                   ^~~\n"
        "hint: write tol=...\n");
}
