// The spread's language: dist=, matched sets (match= ratio=) and model
// tolerances (KEY_tol, dist), with their errors at their position.

#include <catch2/catch.hpp>

#include <string>

#include "tacet/circuit/circuit_text.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

const Element& element(const Circuit& c, const std::string& name) { return c.elements[*c.find_element(name)]; }

}  // namespace

TEST_CASE("parts carry their distribution and matched set", "[elaborate][tolerance]") {
  auto r = elaborate_text(
      "res R1 (a, b) 10k tol=1%\n"
      "res R2 (b, gnd) 10k tol=1% dist=normal match=RA ratio=0.05%\n"
      "res R3 (a, gnd) 10k tol=1% dist=normal match=RA ratio=0.05%\n"
      "cap C1 (a, gnd) 1n tol=5% dist=normal\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK(element(*r.circuit, "R1").dist == Distribution::uniform);
  CHECK(element(*r.circuit, "R1").match.empty());
  CHECK(element(*r.circuit, "R2").dist == Distribution::normal);
  CHECK(element(*r.circuit, "R2").match == "RA");
  CHECK(element(*r.circuit, "R2").ratio == Approx(0.0005));
  CHECK(element(*r.circuit, "C1").dist == Distribution::normal);
  CHECK(element_value(*r.circuit, element(*r.circuit, "R2")) ==
        "10kohm tol=1% match=RA ratio=0.05% dist=normal");
}

TEST_CASE("an unknown distribution is an error at its value", "[elaborate][tolerance]") {
  auto r = elaborate_text("res R1 (a, b) 1k tol=1% dist=gauss\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:30: error: dist of 'R1' must be uniform or normal\n"
        "res R1 (a, b) 1k tol=1% dist=gauss\n"
        "                             ^~~~~\n"
        "hint: uniform: evenly over +-tol (the default); normal: sigma = tol/3, cut at +-tol\n");
}

TEST_CASE("a ratio tolerance needs a matched set", "[elaborate][tolerance]") {
  auto r = elaborate_text("res R1 (a, b) 1k tol=1% ratio=0.1%\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:5: error: 'R1' has a ratio tolerance but no matched set\n"
        "res R1 (a, b) 1k tol=1% ratio=0.1%\n"
        "    ^~\n"
        "hint: ratio= is a part's own deviation inside a matched set: add match=NAME\n");
}

TEST_CASE("the parts of a matched set spread the same way", "[elaborate][tolerance]") {
  auto r = elaborate_text(
      "res R1 (a, b) 1k tol=1% match=RA\n"
      "res R2 (b, gnd) 1k tol=1% match=RA dist=normal\n");
  CHECK(r.diagnostics ==
        "main.tacet:2:5: error: 'R2' spreads normal but 'R1' of the same matched set 'RA' spreads uniform\n"
        "res R2 (b, gnd) 1k tol=1% match=RA dist=normal\n"
        "    ^\n"
        "hint: the parts of a matched set share one draw: give them the same dist=\n");
}

TEST_CASE("op-amp models carry tolerances on their small-signal keys", "[elaborate][tolerance]") {
  auto r = elaborate_text("model m opamp { gbw 10M gbw_tol 30% en 4n en_tol 10% dist normal }\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  const OpAmpModel& m = r.circuit->models.at(0);
  REQUIRE(m.tolerances.size() == 2);
  CHECK(m.tolerances[0].key == "gbw");
  CHECK(m.tolerances[0].tolerance == Approx(0.3));
  CHECK(m.tolerances[1].key == "en");
  CHECK(m.dist == Distribution::normal);
  CHECK(model_line(m) == "model m opamp { gbw 10MHz aol 120dB en 4nV/rtHz gbw_tol 30% en_tol 10% dist normal }\n");
}

TEST_CASE("a model tolerance on a key that has none is an error at the key", "[elaborate][tolerance]") {
  auto r = elaborate_text("model m opamp { gbw 10M vos 1m vos_tol 20% }\n");
  CHECK(r.diagnostics ==
        "main.tacet:1:32: error: 'vos' of model 'm' takes no tolerance\n"
        "model m opamp { gbw 10M vos 1m vos_tol 20% }\n"
        "                               ^~~~~~~\n"
        "hint: only the small-signal and noise parameters spread: gbw, aol, fp2, rout, rin, en, fce, in, fci\n");
}

TEST_CASE("a model tolerance of 100 % or more is refused", "[elaborate][tolerance]") {
  auto r = elaborate_text("model m opamp { gbw 10M gbw_tol 100% }\n");
  CHECK(r.diagnostics.find("gbw_tol of model 'm' must be from 0 up to 100%") != std::string::npos);
}
