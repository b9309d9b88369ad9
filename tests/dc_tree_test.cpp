// The tree's path of the DC bands (dc_tree.hpp) against one solve per DC
// error, the definition worst_n = sum_j |S_nj| limit_j itself: the same
// bands, root-sum-squares and largest contributors (with the resistor each
// current flows through) to rounding, on chains whose stages load each other,
// on branching trees of stages, on the cascades the other path takes, and
// through held cuts (ideal outputs, source nodes) and stiff parts. A loop of
// stages larger than a block must be declined.

#include "tacet/analysis/dc_tree.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <string>
#include <vector>

#include "bias_paths.hpp"
#include "reference_circuits.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "tacet/solve/mna.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

BiasResult by_tree(const Circuit& circuit) {
  BiasOptions options;
  options.cascade = false;
  options.tree = true;
  return run_bias(circuit, options);
}

// `stages` inverting stages from `from`, each op amp with rout so that each
// stage loads the output before it; returns the last output.
std::string inverting_chain(CircuitBuilder& b, const std::string& tag, std::string from, int stages) {
  for (int k = 0; k < stages; ++k) {
    const std::string id = tag + std::to_string(k), out = "o" + id;
    b.add(ElementKind::resistor, "RI" + id, {from, "m" + id}, 10e3 + 37.0 * k);
    b.add(ElementKind::resistor, "RF" + id, {out, "m" + id}, 20e3 - 53.0 * k);
    b.add(ElementKind::resistor, "RC" + id, {"p" + id, "gnd"}, 6.8e3);
    b.opamp("U" + id, "p" + id, "m" + id, out, dc_model(1e-3 / (k + 1), 2e-9 * (k % 3 - 1), 1e-10, 20 + k % 7));
    from = out;
  }
  return from;
}

// A random tree of stages, each fed from any earlier output: inverting,
// non-inverting, follower, pad, an inductor to a load, AC coupling into a
// follower, a VCVS with an unloaded output, a VCCS into a resistor, a current
// source into a pad; op amps with and without rout.
Circuit random_tree(unsigned seed, int stages) {
  std::mt19937 random(seed);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  auto value = [&](double lo, double hi) { return lo * std::pow(hi / lo, u(random)); };
  CircuitBuilder b;
  b.vsrc("Vin", "n0", "gnd", 0).dc = 0.01;
  std::vector<std::string> outs{"n0"};
  for (int k = 0; k < stages; ++k) {
    const std::string id = std::to_string(k), out = "o" + id;
    const std::string from = outs[random() % outs.size()];
    OpAmpModel m = dc_model(value(1e-6, 5e-3), value(1e-12, 1e-6), value(1e-13, 1e-7), u(random) < 0.3 ? 0.0 : value(1, 100));
    m.ib_max = std::abs(m.ib) * 2;
    switch (random() % 9) {
      case 0:
        b.add(ElementKind::resistor, "RI" + id, {from, "m" + id}, value(1e3, 1e5));
        b.add(ElementKind::resistor, "RF" + id, {out, "m" + id}, value(1e3, 1e6));
        b.add(ElementKind::resistor, "RC" + id, {"p" + id, "gnd"}, value(1e3, 1e5));
        b.opamp("U" + id, "p" + id, "m" + id, out, m);
        break;
      case 1:
        b.add(ElementKind::resistor, "RS" + id, {from, "p" + id}, value(10, 1e6));
        b.add(ElementKind::resistor, "RF" + id, {out, "m" + id}, value(1e3, 1e6));
        b.add(ElementKind::resistor, "RG" + id, {"m" + id, "gnd"}, value(1e3, 1e6));
        b.opamp("U" + id, "p" + id, "m" + id, out, m);
        break;
      case 2:
        b.opamp("U" + id, from, out, out, m);
        break;
      case 3:
        b.add(ElementKind::resistor, "RA" + id, {from, out}, value(100, 1e5));
        b.add(ElementKind::resistor, "RB" + id, {out, "gnd"}, value(100, 1e5));
        break;
      case 4:
        b.add(ElementKind::inductor, "L" + id, {from, "l" + id}, 1e-3);
        b.add(ElementKind::resistor, "RL" + id, {"l" + id, out}, value(10, 1e4));
        b.add(ElementKind::resistor, "RX" + id, {out, "gnd"}, value(1e3, 1e5));
        break;
      case 5:
        b.add(ElementKind::capacitor, "C" + id, {from, "c" + id}, 1e-9);
        b.add(ElementKind::resistor, "RC" + id, {"c" + id, "gnd"}, value(1e3, 1e6));
        b.opamp("U" + id, "c" + id, out, out, m);
        break;
      case 6:
        b.add(ElementKind::vcvs, "E" + id, {out, "gnd", from, "gnd"}, value(0.1, 10));
        break;
      case 7:
        b.add(ElementKind::vccs, "G" + id, {out, "gnd", from, "gnd"}, value(1e-4, 1e-2));
        b.add(ElementKind::resistor, "RG" + id, {out, "gnd"}, value(100, 1e4));
        break;
      default:
        b.isrc("I" + id, "gnd", from, 0).dc = 1e-6;
        b.add(ElementKind::resistor, "RT" + id, {from, out}, value(100, 1e5));
        b.add(ElementKind::resistor, "RU" + id, {out, "gnd"}, value(100, 1e5));
        break;
    }
    outs.push_back(out);
  }
  b.circuit.supply = Rails{15, -15};
  return b.circuit;
}

}  // namespace

TEST_CASE("a long chain of stages that load each other takes the tree's path and gives the bands of one solve per error",
          "[bias][tree]") {
  for (const int stages : {40, 300}) {
    CAPTURE(stages);
    CircuitBuilder b;
    b.vsrc("Vin", "in", "gnd", 0).dc = 0.01;
    b.add(ElementKind::resistor, "RL", {inverting_chain(b, "", "in", stages), "gnd"}, 10e3);
    b.circuit.supply = Rails{15, -15};
    const BiasResult fast = by(b.circuit, true);
    CHECK(fast.path == BiasPath::tree);
    require_same_bands(fast, by(b.circuit, false));
  }
}

TEST_CASE("random chains with rout everywhere take the tree's path with the bands of one solve per error",
          "[bias][tree]") {
  for (unsigned seed = 1; seed <= 12; ++seed) {
    CAPTURE(seed);
    const Circuit circuit = random_chain(seed, 40, true);
    const BiasResult fast = by_tree(circuit);
    CHECK(fast.path == BiasPath::tree);
    require_same_bands(fast, by(circuit, false));
  }
}

TEST_CASE("the tree's path gives the cascade's bands on cascades, ideal outputs holding their cuts",
          "[bias][tree]") {
  // Half the op amps have no rout: their outputs are held by the gain row,
  // and a current from the stage after moves nothing before it.
  for (unsigned seed = 1; seed <= 20; ++seed) {
    CAPTURE(seed);
    const Circuit circuit = random_chain(seed, 12);
    const BiasResult tree = by_tree(circuit);
    CHECK(tree.path == BiasPath::tree);
    require_same_bands(tree, by(circuit, false), 1e-9);
  }
}

TEST_CASE("a branching tree of stages with a stiff link takes the tree's path", "[bias][tree]") {
  // One buffer drives three inverting chains; a 1 uohm link (a stiff part:
  // its node voltages are a root and a difference, dc_system's two terms)
  // joins the second chain's start to its own node.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0).dc = 0.02;
  b.opamp("UB", "in", "buf", "buf", dc_model(0.5e-3, 1e-9, 1e-10, 10));
  b.add(ElementKind::resistor, "RS", {"buf", "split"}, 1e-6);
  const std::string a = inverting_chain(b, "a", "buf", 15);
  const std::string c = inverting_chain(b, "c", "split", 15);
  const std::string d = inverting_chain(b, "d", "buf", 15);
  for (const auto& out : {a, c, d}) b.add(ElementKind::resistor, "RL" + out, {out, "gnd"}, 2e3);
  b.circuit.supply = Rails{12, -12};
  const BiasResult fast = by(b.circuit, true);
  CHECK(fast.path == BiasPath::tree);
  require_same_bands(fast, by(b.circuit, false));
}

TEST_CASE("a loop of stages larger than a block takes one solve per error", "[bias][tree]") {
  // A difference stage fed from the ends of two long chains on one source:
  // made symmetric, the two chains and the difference stage are one
  // biconnected component of far more than kMostBlockUnknowns unknowns.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0).dc = 0.01;
  const std::string a = inverting_chain(b, "a", "in", 12), c = inverting_chain(b, "c", "in", 12);
  b.add(ElementKind::resistor, "R1", {a, "dm"}, 10e3);
  b.add(ElementKind::resistor, "R2", {"dout", "dm"}, 10e3);
  b.add(ElementKind::resistor, "R3", {c, "dp"}, 10e3);
  b.add(ElementKind::resistor, "R4", {"dp", "gnd"}, 10e3);
  b.opamp("UD", "dp", "dm", "dout", dc_model(1e-3, 1e-9, 1e-10, 10));
  const BiasResult fast = by(b.circuit, true);
  CHECK(fast.path == BiasPath::per_error);
  require_same_bands(fast, by(b.circuit, false));
}

TEST_CASE("the tree's path is the same on 1 and 2 threads and on a reused system, restamped", "[bias][tree][threads]") {
  Circuit circuit = random_chain(11, 30, true);
  DcSystem dc(circuit);
  BiasResult one, two;
  run_bias(dc, 1, one, false, true);
  run_bias(dc, 2, two, false, true);
  REQUIRE(one.path == BiasPath::tree);
  for (std::size_t k = 0; k < one.nodes.size(); ++k) CHECK(one.nodes[k].worst == two.nodes[k].worst);
  for (auto& e : circuit.elements)
    if (e.kind == ElementKind::resistor) e.value *= 1.5;
  dc.restamp();
  run_bias(dc, 1, one, false, true);
  CHECK(one.path == BiasPath::tree);
  require_same_bands(one, by(circuit, false));
}

TEST_CASE("the tree's path on every bundled netlist gives the bands of one solve per error", "[bias][tree]") {
  // The demo chains and the examples: AC coupling, a JFET-input buffer,
  // Sallen-Key and twin-T sections, a differential driver, RIAA networks.
  // To 1e-9: the charge amplifier (100 Mohm of feedback, its input open at
  // DC) is ill-conditioned enough that the sparse per-error solve is off by
  // 9e-11 in U1's vos gain, 1.0000032217250307 by a long-double Gaussian
  // elimination of the same matrix, which the tree gives to 16 digits.
  for (const char* file : {"vibration_logger.tacet", "vibration_logger_rev_b.tacet", "examples/hydrophone_preamp.tacet",
                           "examples/inverting_amp.tacet", "examples/noninverting_amp.tacet",
                           "examples/phono_stage.tacet", "examples/sallen_key_lowpass.tacet",
                           "examples/turbidity_frontend.tacet", "examples/twin_t_notch.tacet"}) {
    CAPTURE(file);
    const Circuit circuit = load_circuit(std::string(TACET_SOURCE_DIR) + "/netlists/" + file, {});
    const BiasResult tree = by_tree(circuit);
    CHECK(tree.path == BiasPath::tree);
    require_same_bands(tree, by(circuit, false), 1e-9);
  }
}

TEST_CASE("the tree's offset gains on an ill-conditioned charge amplifier match a long-double elimination",
          "[bias][tree]") {
  // The reference: Gaussian elimination with partial pivoting of the same DC
  // matrix in 80-bit long double (64-bit significand), 2^-11 more precise
  // than the double solves it checks.
  const Circuit circuit =
      load_circuit(std::string(TACET_SOURCE_DIR) + "/netlists/examples/hydrophone_preamp.tacet", {});
  const DcSystem dc(circuit);
  const MnaSystem& mna = dc.mna();
  const CscPattern& p = mna.pattern();
  const auto n = static_cast<std::size_t>(p.n);
  std::vector<long double> a(n * n, 0);
  for (std::size_t j = 0; j < n; ++j)
    for (int k = p.col_ptr[j]; k < p.col_ptr[j + 1]; ++k)
      a[static_cast<std::size_t>(p.row_index[static_cast<std::size_t>(k)]) * n + j] = dc.values()[k];
  auto solve = [&](std::vector<long double> b) {
    std::vector<long double> m = a;
    for (std::size_t c = 0; c < n; ++c) {
      std::size_t pivot = c;
      for (std::size_t r = c + 1; r < n; ++r)
        if (std::fabs(m[r * n + c]) > std::fabs(m[pivot * n + c])) pivot = r;
      for (std::size_t k = 0; k < n; ++k) std::swap(m[c * n + k], m[pivot * n + k]);
      std::swap(b[c], b[pivot]);
      for (std::size_t r = c + 1; r < n; ++r) {
        const long double l = m[r * n + c] / m[c * n + c];
        for (std::size_t k = c; k < n; ++k) m[r * n + k] -= l * m[c * n + k];
        b[r] -= l * b[c];
      }
    }
    for (std::size_t r = n; r-- > 0;) {
      for (std::size_t k = r + 1; k < n; ++k) b[r] -= m[r * n + k] * b[k];
      b[r] /= m[r * n + r];
    }
    return b;
  };
  const std::size_t u1 = *circuit.find_element("U1");
  const auto out = static_cast<std::size_t>(mna.node_unknown(circuit.elements[u1].nodes[2]));
  const auto minus = static_cast<std::size_t>(mna.node_unknown(circuit.elements[u1].nodes[1]));
  std::vector<long double> vos(n, 0), ib(n, 0);
  vos[static_cast<std::size_t>(mna.opamp_gain_row(u1))] = 1;
  ib[minus] = -1;  // the + pin is gnd: ib is the - pin's current alone
  const double vos_gain = static_cast<double>(solve(vos)[out]), ib_gain = static_cast<double>(solve(ib)[out]);
  const BiasResult tree = by_tree(circuit);
  REQUIRE(tree.path == BiasPath::tree);
  int seen = 0;
  for (const auto& c : tree.opamps[0].largest) {
    CAPTURE(to_string(c.kind), c.gain, vos_gain, ib_gain);
    if (c.kind == DcErrorKind::vos) {
      CHECK(close(c.gain, vos_gain, 1e-14));
      ++seen;
    }
    if (c.kind == DcErrorKind::ib) {
      CHECK(close(c.gain, std::abs(ib_gain), 1e-14));
      ++seen;
    }
  }
  CHECK(seen == 2);
}

TEST_CASE("random trees of stages give the bands of one solve per error on both linear paths", "[bias][tree]") {
  // To 1e-9, as on the bundled netlists: some draws are ill-conditioned.
  int on_tree = 0;
  for (unsigned seed = 1; seed <= 120; ++seed) {
    CAPTURE(seed);
    const Circuit circuit = random_tree(seed, 30);
    BiasResult exact;
    try {
      exact = by(circuit, false);
    } catch (const SolveError&) {
      continue;  // a draw with a node the DC solution cannot set
    }
    const BiasResult tree = by_tree(circuit);
    on_tree += tree.path == BiasPath::tree;
    require_same_bands(tree, exact, 1e-9);
    require_same_bands(by(circuit, true), exact, 1e-9);
  }
  CHECK(on_tree >= 30);  // the tree takes a good share of them (40 when written)
}

TEST_CASE("an unloaded controlled source's output is not cut off by the current it holds", "[bias][tree]") {
  // E1's output node has no conductance: its voltage is set through E1's
  // branch row by o1, the far side of E1's current unknown. That current is
  // a held cut (nothing moves it), yet o2 follows o1: the tree must not pass
  // zero through it.
  for (const bool loaded : {false, true}) {
    CAPTURE(loaded);
    CircuitBuilder b;
    b.vsrc("Vin", "n0", "gnd", 0).dc = 0.01;
    b.add(ElementKind::resistor, "RS", {"n0", "p1"}, 1e3);
    b.opamp("U1", "p1", "o1", "o1", dc_model(1e-3, 1e-9, 1e-10, 0));
    b.add(ElementKind::vcvs, "E1", {"o2", "gnd", "o1", "gnd"}, 0.5);
    if (loaded) b.add(ElementKind::resistor, "RL", {"o2", "gnd"}, 1e3);
    const BiasResult tree = by_tree(b.circuit);
    CHECK(tree.path == BiasPath::tree);
    require_same_bands(tree, by(b.circuit, false));
    CHECK(tree.node(*b.circuit.find_node("o2")).worst > 0);
  }
}
