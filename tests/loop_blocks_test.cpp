// The loop gain from the op amp's own block (LoopGain, solve/block_form.hpp)
// against the one from the whole closed-loop matrix: Bode's return ratio is
// the same number either way, to rounding. The closed forms of
// tests/loop_test.cpp (Bode 1945, Middlebrook's double injection) run through
// the block path too; here the generated chain of bench/gen_chain.py (a
// non-inverting stage, a pad, a Sallen-Key low-pass, whose capacitor to the
// follower's output makes the pair of op amps one block in AC) and a
// composite stage whose two op amps share one loop.

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/analysis/loop.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

OpAmpModel model(double gbw, double aol, double rout) {
  OpAmpModel m = single_pole(gbw, aol);
  m.rout = rout;
  m.fp2 = 4 * gbw;
  return m;
}

Circuit sallen_key_chain(int sections) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  std::string from = "in";
  for (int k = 0; k < sections; ++k) {
    const std::string id = std::to_string(k);
    const OpAmpModel m = model(20e6 * (1 + 0.1 * k), 1e6, 20);
    b.opamp("UA" + id, from, "fb" + id, "a" + id, m);
    b.add(ElementKind::resistor, "RF" + id, {"a" + id, "fb" + id}, 10e3);
    b.add(ElementKind::resistor, "RG" + id, {"fb" + id, "gnd"}, 10e3);
    b.add(ElementKind::resistor, "RP" + id, {"a" + id, "b" + id}, 4.7e3);
    b.add(ElementKind::resistor, "RQ" + id, {"b" + id, "gnd"}, 4.7e3);
    b.add(ElementKind::resistor, "RS" + id, {"b" + id, "s" + id}, 1e3);
    b.add(ElementKind::resistor, "RT" + id, {"s" + id, "t" + id}, 1e3);
    b.add(ElementKind::capacitor, "CS" + id, {"s" + id, "o" + id}, 200e-12);
    b.add(ElementKind::capacitor, "CT" + id, {"t" + id, "gnd"}, 100e-12);
    b.opamp("UB" + id, "t" + id, "o" + id, "o" + id, m);
    from = "o" + id;
  }
  b.add(ElementKind::resistor, "RL", {from, "gnd"}, 10e3);
  return b.circuit;
}

void require_same_loops(const Circuit& circuit) {
  LoopGain blocks(circuit), whole(circuit, SolverKind::klu, false);
  for (std::size_t e = 0; e < circuit.elements.size(); ++e) {
    if (circuit.elements[e].kind != ElementKind::opamp) continue;
    CAPTURE(circuit.elements[e].name);
    for (const double f : {1.0, 1e3, 1e5, 1e6, 2e7, 3e8}) {
      CAPTURE(f);
      const cplx fast = blocks.at(e, f);
      CHECK(blocks.last_on_block());
      const cplx exact = whole.at(e, f);
      CHECK_FALSE(whole.last_on_block());
      CHECK_THAT(fast, IsClose(exact, 1e-10));
    }
  }
}

}  // namespace

TEST_CASE("each op amp's loop gain from its own block equals the whole matrix's", "[loop][blocks]") {
  require_same_loops(sallen_key_chain(6));
}

TEST_CASE("two op amps in one loop get their return ratios from their shared block", "[loop][blocks]") {
  // A composite stage: U2 inside U1's loop (U1 drives U2's +, U2's output
  // closes U1's feedback), then a follower on its own.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "fb", "x", model(1e6, 1e5, 50));
  b.add(ElementKind::resistor, "Rx", {"x", "xp"}, 1e3);
  b.add(ElementKind::capacitor, "Cx", {"xp", "gnd"}, 1e-9);
  b.opamp("U2", "xp", "out", "out", model(50e6, 1e5, 10));
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, 9e3);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, 1e3);
  b.opamp("U3", "out", "y", "y", model(5e6, 2e5, 30));
  b.add(ElementKind::capacitor, "CL", {"y", "gnd"}, 1e-9);
  require_same_loops(b.circuit);
}

TEST_CASE("a loop gain after a restamp is taken at the new values", "[loop][blocks]") {
  Circuit circuit = sallen_key_chain(2);
  FrequencyResponse response(circuit);
  LoopGain gain(response);
  const std::size_t ub0 = *circuit.find_element("UB0");
  const cplx before = gain.at(ub0, 1e6);
  for (auto& e : circuit.elements)
    if (e.name == "CS0") e.value *= 10;
  response.restamp();
  const cplx after = gain.at(ub0, 1e6);
  CHECK(std::abs(after - before) > 1e-3 * std::abs(before));
  LoopGain fresh(circuit, SolverKind::klu, false);
  CHECK_THAT(after, IsClose(fresh.at(ub0, 1e6), 1e-10));
}
