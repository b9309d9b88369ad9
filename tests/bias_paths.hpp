#pragma once
// What the tests of the linear-time DC paths (dc_cascade_test.cpp,
// dc_tree_test.cpp) compare with: one solve per DC error, the definition
// worst_n = sum_j |S_nj| limit_j itself. Both paths must give its bands,
// root-sum-squares and largest contributors to rounding.

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <string>

#include "reference_circuits.hpp"
#include "tacet/analysis/bias.hpp"

namespace tacet::testing {

inline OpAmpModel dc_model(double vos, double ib, double ios, double rout) {
  OpAmpModel m = single_pole(10e6, 1e5);
  m.vos = vos, m.ib = ib, m.ios = ios, m.rout = rout;
  return m;
}


// Equal to rounding: 1e-12 relative unless told otherwise.
inline bool close(double a, double b, double relative = 1e-12) {
  return std::abs(a - b) <= relative * std::max(std::abs(a), std::abs(b)) + 1e-30;
}

inline void require_same_bands(const BiasResult& fast, const BiasResult& exact, double relative = 1e-12) {
  REQUIRE(fast.nodes.size() == exact.nodes.size());
  for (std::size_t k = 0; k < fast.nodes.size(); ++k) {
    CAPTURE(fast.nodes[k].name, fast.nodes[k].worst, exact.nodes[k].worst);
    CHECK(fast.nodes[k].nominal == exact.nodes[k].nominal);
    CHECK(close(fast.nodes[k].worst, exact.nodes[k].worst, relative));
    CHECK(close(fast.nodes[k].rss, exact.nodes[k].rss, relative));
  }
  REQUIRE(fast.opamps.size() == exact.opamps.size());
  for (std::size_t a = 0; a < fast.opamps.size(); ++a) {
    const OpAmpBias &x = fast.opamps[a], &y = exact.opamps[a];
    CAPTURE(x.name);
    CHECK(close(x.low, y.low, relative));
    CHECK(close(x.high, y.high, relative));
    CHECK(x.ok == y.ok);
    REQUIRE(x.largest.size() == y.largest.size());
    for (std::size_t c = 0; c < x.largest.size(); ++c) {
      CAPTURE(c);
      CHECK(x.largest[c].opamp == y.largest[c].opamp);
      CHECK(x.largest[c].kind == y.largest[c].kind);
      CHECK(close(x.largest[c].gain, y.largest[c].gain, relative));
      CHECK(close(x.largest[c].volts, y.largest[c].volts, relative));
      CHECK(x.largest[c].through == y.largest[c].through);
    }
  }
}

/// Bias by the linear-time paths where they apply (`fast`), else one solve per error.
inline BiasResult by(const Circuit& circuit, bool fast) {
  BiasOptions options;
  options.cascade = options.tree = fast;
  return run_bias(circuit, options);
}

// A chain of random stages: non-inverting with a source resistor on its +
// pin, inverting with a compensation resistor from + to gnd, a follower, and
// a resistive pad with a load, each op amp with or without rout; the DC
// errors include ib_max and a temperature range.
inline Circuit random_chain(unsigned seed, int stages, bool always_rout = false) {
  std::mt19937 random(seed);
  std::uniform_real_distribution<double> decade(0.0, 1.0);
  auto value = [&](double low, double high) { return low * std::pow(high / low, decade(random)); };
  CircuitBuilder b;
  b.vsrc("Vin", "n0", "gnd", 0).dc = 0.01;
  std::string from = "n0";
  for (int k = 0; k < stages; ++k) {
    const std::string id = std::to_string(k), out = "o" + id;
    OpAmpModel m = dc_model(value(1e-6, 5e-3), value(1e-12, 1e-6) * (decade(random) < 0.5 ? -1 : 1),
                            value(1e-13, 1e-7), !always_rout && decade(random) < 0.5 ? 0.0 : value(1, 100));
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

}  // namespace tacet::testing
