// The bias cascade's path (dc_cascade.hpp) against one solve per DC error,
// the definition worst_n = sum_j |S_nj| limit_j itself: both must give the
// same bands, root-sum-squares and largest contributors, to rounding, on
// every circuit the cascade takes, and the cascade must decline the circuits
// it cannot take. The closed forms of tests/bias_test.cpp (textbook DC error
// analysis, from memory, with Black's loop factor) run through this path too.

#include "tacet/analysis/dc_cascade.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "bias_paths.hpp"
#include "reference_circuits.hpp"
#include "tacet/analysis/bias.hpp"

using namespace tacet;
using namespace tacet::testing;

TEST_CASE("a chain of stages takes the cascade's path and gives the bands of one solve per error", "[bias][cascade]") {
  for (unsigned seed = 1; seed <= 20; ++seed) {
    CAPTURE(seed);
    const Circuit circuit = random_chain(seed, 12);
    const BiasResult fast = by(circuit, true), exact = by(circuit, false);
    CHECK(fast.path == BiasPath::cascade);
    CHECK(exact.path == BiasPath::per_error);
    require_same_bands(fast, exact);
  }
}

TEST_CASE("an error with a current at each pin joins the later stage's sums once", "[bias][cascade]") {
  // U2's + pin hangs on U1's output through RS2 and its - pin on its own
  // feedback: its ios and ib sit in two blocks. Counted twice or not at all,
  // U2's output band would differ from the per-error sum by ios RF2 or more.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  b.opamp("U1", "in", "o1", "o1", dc_model(1e-3, 0, 0, 50));
  b.add(ElementKind::resistor, "RS2", {"o1", "p2"}, 100e3);
  b.add(ElementKind::resistor, "RF2", {"o2", "m2"}, 100e3);
  b.add(ElementKind::resistor, "RG2", {"m2", "gnd"}, 10e3);
  b.opamp("U2", "p2", "m2", "o2", dc_model(0, 1e-6, 1e-7, 50));
  const BiasResult fast = by(b.circuit, true), exact = by(b.circuit, false);
  REQUIRE(fast.path == BiasPath::cascade);
  require_same_bands(fast, exact);
  // The largest at U2's output is its ib (the output moves 1 uA x 100k x 11
  // less 1 uA x 100k = 1 V), and the resistor it shows is RF2, 0.91 V across
  // it against 0.1 V across RS2.
  CHECK(fast.opamps[1].largest.front().kind == DcErrorKind::ib);
  CHECK(fast.opamps[1].largest.front().through == "RF2");
}

TEST_CASE("a difference stage fed from two outputs is no cascade and takes the tree's path", "[bias][cascade]") {
  // Without rout the followers' outputs are set by their gain rows alone, so
  // the difference stage is a block of its own reading two outputs, each
  // carrying its follower's offset. Made symmetric, the two followers and
  // the difference stage are one loop: one block of the tree (dc_tree.hpp).
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  b.opamp("UA", "in", "a", "a", dc_model(1e-3, 1e-9, 1e-10, 0));
  b.opamp("UB", "in", "bb", "bb", dc_model(2e-3, 1e-9, 1e-10, 0));
  b.add(ElementKind::resistor, "R1", {"a", "m"}, 10e3);
  b.add(ElementKind::resistor, "R2", {"d", "m"}, 10e3);
  b.add(ElementKind::resistor, "R3", {"bb", "p"}, 10e3);
  b.add(ElementKind::resistor, "R4", {"p", "gnd"}, 10e3);
  b.opamp("UD", "p", "m", "d", dc_model(1e-3, 1e-9, 1e-10, 0));
  const BiasResult fast = by(b.circuit, true);
  CHECK(fast.path == BiasPath::tree);
  require_same_bands(fast, by(b.circuit, false));
}

TEST_CASE("stages that load each other both ways are one block, and past the dense limit the tree's path", "[bias][cascade]") {
  // An inverting stage draws signal current from the output before it; with
  // rout that output moves with it, so the two stages are one strongly
  // connected block. Five such stages are solved as one dense block; forty
  // are more unknowns than kMostBlockUnknowns, no cascade, and a tree of
  // stages joined at their outputs (dc_tree.hpp).
  for (const int stages : {5, 40}) {
    CAPTURE(stages);
    CircuitBuilder b;
    b.vsrc("Vin", "o", "gnd", 0).dc = 0.01;
    std::string from = "o";
    for (int k = 0; k < stages; ++k) {
      const std::string id = std::to_string(k), out = "o" + id;
      b.add(ElementKind::resistor, "RI" + id, {from, "m" + id}, 10e3);
      b.add(ElementKind::resistor, "RF" + id, {out, "m" + id}, 10e3 + 100 * k);
      b.add(ElementKind::resistor, "RC" + id, {"p" + id, "gnd"}, 5e3);
      b.opamp("U" + id, "p" + id, "m" + id, out, dc_model(1e-3 / (k + 1), 1e-9, 1e-10, 30));
      from = out;
    }
    const BiasResult fast = by(b.circuit, true);
    CHECK(fast.path == (stages == 5 ? BiasPath::cascade : BiasPath::tree));
    require_same_bands(fast, by(b.circuit, false));
  }
}

TEST_CASE("the cascade's path is the same on 1 and 2 threads and on a reused system", "[bias][cascade][threads]") {
  Circuit circuit = random_chain(7, 20);
  DcSystem dc(circuit);
  BiasResult one, two;
  run_bias(dc, 1, one);
  run_bias(dc, 2, two);
  REQUIRE(one.path == BiasPath::cascade);
  for (std::size_t k = 0; k < one.nodes.size(); ++k) CHECK(one.nodes[k].worst == two.nodes[k].worst);
  for (auto& e : circuit.elements)
    if (e.kind == ElementKind::resistor) e.value *= 1.5;
  dc.restamp();
  run_bias(dc, 1, one);
  require_same_bands(one, by(circuit, false));
}
