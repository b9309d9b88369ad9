// The bias cascade's path (dc_cascade.hpp) against one solve per DC error,
// the definition worst_n = sum_j |S_nj| limit_j itself: both must give the
// same bands, root-sum-squares and largest contributors, to rounding, on
// every circuit the cascade takes, and the cascade must decline the circuits
// it cannot take. The closed forms of tests/bias_test.cpp (textbook DC error
// analysis, from memory, with Black's loop factor) run through this path too.

#include "tacet/analysis/dc_cascade.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <random>

#include "reference_circuits.hpp"
#include "tacet/analysis/bias.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

OpAmpModel dc_model(double vos, double ib, double ios, double rout) {
  OpAmpModel m = single_pole(10e6, 1e5);
  m.vos = vos, m.ib = ib, m.ios = ios, m.rout = rout;
  return m;
}

bool close(double a, double b) { return std::abs(a - b) <= 1e-12 * std::max(std::abs(a), std::abs(b)) + 1e-30; }

void require_same_bands(const BiasResult& fast, const BiasResult& exact) {
  REQUIRE(fast.nodes.size() == exact.nodes.size());
  for (std::size_t k = 0; k < fast.nodes.size(); ++k) {
    CAPTURE(fast.nodes[k].name, fast.nodes[k].worst, exact.nodes[k].worst);
    CHECK(fast.nodes[k].nominal == exact.nodes[k].nominal);
    CHECK(close(fast.nodes[k].worst, exact.nodes[k].worst));
    CHECK(close(fast.nodes[k].rss, exact.nodes[k].rss));
  }
  REQUIRE(fast.opamps.size() == exact.opamps.size());
  for (std::size_t a = 0; a < fast.opamps.size(); ++a) {
    const OpAmpBias &x = fast.opamps[a], &y = exact.opamps[a];
    CAPTURE(x.name);
    CHECK(close(x.low, y.low));
    CHECK(close(x.high, y.high));
    CHECK(x.ok == y.ok);
    REQUIRE(x.largest.size() == y.largest.size());
    for (std::size_t c = 0; c < x.largest.size(); ++c) {
      CAPTURE(c);
      CHECK(x.largest[c].opamp == y.largest[c].opamp);
      CHECK(x.largest[c].kind == y.largest[c].kind);
      CHECK(close(x.largest[c].gain, y.largest[c].gain));
      CHECK(close(x.largest[c].volts, y.largest[c].volts));
      CHECK(x.largest[c].through == y.largest[c].through);
    }
  }
}

BiasResult by(const Circuit& circuit, bool cascade) {
  BiasOptions options;
  options.cascade = cascade;
  return run_bias(circuit, options);
}

// A chain of random stages: non-inverting with a source resistor on its +
// pin, inverting with a compensation resistor from + to gnd, a follower, and
// a resistive pad with a load, each op amp with or without rout; the DC
// errors include ib_max and a temperature range.
Circuit random_chain(unsigned seed, int stages) {
  std::mt19937 random(seed);
  std::uniform_real_distribution<double> decade(0.0, 1.0);
  auto value = [&](double low, double high) { return low * std::pow(high / low, decade(random)); };
  CircuitBuilder b;
  b.vsrc("Vin", "n0", "gnd", 0).dc = 0.01;
  std::string from = "n0";
  for (int k = 0; k < stages; ++k) {
    const std::string id = std::to_string(k), out = "o" + id;
    OpAmpModel m = dc_model(value(1e-6, 5e-3), value(1e-12, 1e-6) * (decade(random) < 0.5 ? -1 : 1),
                            value(1e-13, 1e-7), decade(random) < 0.5 ? 0.0 : value(1, 100));
    m.ib_max = std::abs(m.ib) * 3;
    m.ib_double = 10;
    m.vos_drift = 5e-6;
    switch (random() % 4) {
      case 0:  // non-inverting
        b.add(ElementKind::resistor, "RS" + id, {from, "p" + id}, value(10, 1e6));
        b.add(ElementKind::resistor, "RF" + id, {out, "m" + id}, value(1e3, 1e6));
        b.add(ElementKind::resistor, "RG" + id, {"m" + id, "gnd"}, value(1e3, 1e6));
        b.opamp("U" + id, "p" + id, "m" + id, out, m);
        break;
      case 1:  // inverting
        b.add(ElementKind::resistor, "RI" + id, {from, "m" + id}, value(1e3, 1e5));
        b.add(ElementKind::resistor, "RF" + id, {out, "m" + id}, value(1e3, 1e6));
        b.add(ElementKind::resistor, "RC" + id, {"p" + id, "gnd"}, value(1e3, 1e5));
        b.opamp("U" + id, "p" + id, "m" + id, out, m);
        break;
      case 2:  // follower
        b.opamp("U" + id, from, out, out, m);
        break;
      default:  // a pad between two followers' worth of stage
        b.add(ElementKind::resistor, "RA" + id, {from, "d" + id}, value(100, 1e5));
        b.add(ElementKind::resistor, "RB" + id, {"d" + id, "gnd"}, value(100, 1e5));
        b.opamp("U" + id, "d" + id, out, out, m);
        break;
    }
    from = out;
  }
  b.add(ElementKind::resistor, "RL", {from, "gnd"}, 10e3);
  b.circuit.supply = Rails{15, -15};
  b.circuit.ambient_range = AmbientRange{-20, 70};
  return b.circuit;
}

}  // namespace

TEST_CASE("a chain of stages takes the cascade's path and gives the bands of one solve per error", "[bias][cascade]") {
  for (unsigned seed = 1; seed <= 20; ++seed) {
    CAPTURE(seed);
    const Circuit circuit = random_chain(seed, 12);
    const BiasResult fast = by(circuit, true), exact = by(circuit, false);
    CHECK(fast.cascade);
    CHECK_FALSE(exact.cascade);
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
  REQUIRE(fast.cascade);
  require_same_bands(fast, exact);
  // The largest at U2's output is its ib (the output moves 1 uA x 100k x 11
  // less 1 uA x 100k = 1 V), and the resistor it shows is RF2, 0.91 V across
  // it against 0.1 V across RS2.
  CHECK(fast.opamps[1].largest.front().kind == DcErrorKind::ib);
  CHECK(fast.opamps[1].largest.front().through == "RF2");
}

TEST_CASE("a difference stage fed from two outputs is no cascade and takes one solve per error", "[bias][cascade]") {
  // Without rout the followers' outputs are set by their gain rows alone, so
  // the difference stage is a block of its own reading two outputs, each
  // carrying its follower's offset.
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
  CHECK_FALSE(fast.cascade);
  require_same_bands(fast, by(b.circuit, false));
}

TEST_CASE("stages that load each other both ways are one block, and past the dense limit no cascade", "[bias][cascade]") {
  // An inverting stage draws signal current from the output before it; with
  // rout that output moves with it, so the two stages are one strongly
  // connected block. Five such stages are solved as one dense block; forty
  // are more unknowns than kMostBlockUnknowns and take the per-error path.
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
    CHECK(fast.cascade == (stages == 5));
    require_same_bands(fast, by(b.circuit, false));
  }
}

TEST_CASE("the cascade's path is the same on 1 and 2 threads and on a reused system", "[bias][cascade][threads]") {
  Circuit circuit = random_chain(7, 20);
  DcSystem dc(circuit);
  BiasResult one, two;
  run_bias(dc, 1, one);
  run_bias(dc, 2, two);
  REQUIRE(one.cascade);
  for (std::size_t k = 0; k < one.nodes.size(); ++k) CHECK(one.nodes[k].worst == two.nodes[k].worst);
  for (auto& e : circuit.elements)
    if (e.kind == ElementKind::resistor) e.value *= 1.5;
  dc.restamp();
  run_bias(dc, 1, one);
  require_same_bands(one, by(circuit, false));
}
