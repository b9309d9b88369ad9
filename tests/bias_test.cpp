// Bias analysis against textbook op-amp DC error analysis. The ideal-op-amp
// forms are from memory (the standard results of any op-amp DC error
// treatment): output offset of a non-inverting stage vos (1 + Rf/Rg); bias
// current terms ib- Rf - ib+ Rs (1 + Rf/Rg); cancellation when Rs = Rf || Rg,
// leaving ios Rf. The model has a finite aol, so each is divided by Black's
// loop factor 1 + (1 + Rf/Rg)/aol (H. S. Black, Bell Syst. Tech. J. 13, 1934),
// which makes the comparison exact to 1e-9.

#include "tacet/analysis/bias.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/common/errors.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

constexpr double kAol = 1e6;

OpAmpModel dc_model(double vos, double ib, double ios) {
  OpAmpModel m = single_pole(10e6, kAol);
  m.vos = vos, m.ib = ib, m.ios = ios;
  return m;
}

// Closed-loop factor of a non-inverting stage with finite aol (Black).
double loop_factor(double rf, double rg) { return 1.0 / (1.0 + (1.0 + rf / rg) / kAol); }

// Vin (dc) -> Rs -> + input; Rf from out to fb, Rg from fb to gnd.
void noninverting_stage(CircuitBuilder& b, const std::string& name, const std::string& in,
                        const std::string& out, double rs, double rf, double rg,
                        const OpAmpModel& model) {
  const std::string plus = name + "_p", fb = name + "_fb";
  b.add(ElementKind::resistor, "Rs" + name, {in, plus}, rs);
  b.add(ElementKind::resistor, "Rf" + name, {out, fb}, rf);
  b.add(ElementKind::resistor, "Rg" + name, {fb, "gnd"}, rg);
  b.opamp(name, plus, fb, out, model);
}

const OpAmpBias& amp(const BiasResult& r, const std::string& name) {
  for (const auto& a : r.opamps)
    if (a.name == name) return a;
  FAIL("no op amp " << name);
  return r.opamps.front();
}

double at(const Circuit& c, const BiasResult& r, const std::string& node) {
  return r.node(*c.find_node(node)).nominal;
}

double worst_at(const Circuit& c, const BiasResult& r, const std::string& node) {
  return r.node(*c.find_node(node)).worst;
}

}  // namespace

TEST_CASE("the output offset of a non-inverting stage is vos (1 + Rf/Rg)", "[bias]") {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  noninverting_stage(b, "U1", "in", "out", 1e3, 100e3, 1e3, dc_model(1e-3, 0, 0));
  const auto r = run_bias(b.circuit);
  // vos (1 + Rf/Rg) from memory; finite-aol factor from Black's formula.
  const double expected = 1e-3 * 101 * loop_factor(100e3, 1e3);
  CHECK_THAT(worst_at(b.circuit, r, "out"), IsClose(expected, 1e-9));
  CHECK_THAT(r.node(*b.circuit.find_node("out")).rss, IsClose(expected, 1e-9));
  CHECK(std::abs(at(b.circuit, r, "out")) < 1e-15);
  REQUIRE(amp(r, "U1").largest.size() == 1);
  CHECK(amp(r, "U1").largest[0].kind == DcErrorKind::vos);
  CHECK_THAT(amp(r, "U1").largest[0].gain, IsClose(101 * loop_factor(100e3, 1e3), 1e-9));
}

TEST_CASE("bias current gives ib Rf minus ib Rs (1 + Rf/Rg) at the output", "[bias]") {
  const double rs = 10e3, rf = 100e3, rg = 1e3, ib = 100e-9;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  noninverting_stage(b, "U1", "in", "out", rs, rf, rg, dc_model(0, ib, 0));
  const auto r = run_bias(b.circuit);
  // ib- Rf - ib+ Rs (1 + Rf/Rg), from memory, times Black's factor.
  const double expected = (ib * rf - ib * rs * (1 + rf / rg)) * loop_factor(rf, rg);
  CHECK_THAT(at(b.circuit, r, "out"), IsClose(expected, 1e-9));
  // The + input sits at -ib Rs: the current flows into the pin out of Rs (Ohm's law).
  CHECK_THAT(at(b.circuit, r, "U1_p"), IsClose(-ib * rs, 1e-9));
  CHECK(worst_at(b.circuit, r, "out") == 0);  // ib is a nominal shift, not a band
  REQUIRE(amp(r, "U1").largest.size() == 1);
  CHECK_THAT(amp(r, "U1").largest[0].volts, IsClose(expected, 1e-9));
  // ib Rf = 10 mV across Rf outweighs ib Rs = 1 mV across Rs (Ohm's law).
  CHECK(amp(r, "U1").largest[0].through == "RfU1");
}

TEST_CASE("bias currents cancel when Rs equals Rf || Rg, leaving ios Rf", "[bias]") {
  const double rf = 100e3, rg = 1e3, rs = rf * rg / (rf + rg), ib = 100e-9, ios = 10e-9;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  noninverting_stage(b, "U1", "in", "out", rs, rf, rg, dc_model(0, ib, ios));
  const auto r = run_bias(b.circuit);
  // From memory: with Rs = Rf || Rg the ib terms cancel and |ios| Rf remains.
  CHECK(std::abs(at(b.circuit, r, "out")) < 1e-12);
  CHECK_THAT(worst_at(b.circuit, r, "out"), IsClose(ios * rf * loop_factor(rf, rg), 1e-9));
}

TEST_CASE("offsets of two stages in cascade multiply through the later gain", "[bias]") {
  const double vos1 = 1e-3, vos2 = 0.5e-3;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  noninverting_stage(b, "U1", "in", "mid", 1e3, 10e3, 1e3, dc_model(vos1, 0, 0));
  noninverting_stage(b, "U2", "mid", "out", 1e3, 100e3, 1e3, dc_model(vos2, 0, 0));
  const auto r = run_bias(b.circuit);
  // Each stage: vos (1 + Rf/Rg) (from memory); the first is amplified by the second.
  const double g1 = 11 * loop_factor(10e3, 1e3), g2 = 101 * loop_factor(100e3, 1e3);
  const double term1 = vos1 * g1 * g2, term2 = vos2 * g2;
  CHECK_THAT(worst_at(b.circuit, r, "out"), IsClose(term1 + term2, 1e-9));
  CHECK_THAT(r.node(*b.circuit.find_node("out")).rss,
             IsClose(std::sqrt(term1 * term1 + term2 * term2), 1e-9));
  const auto& largest = amp(r, "U2").largest;
  REQUIRE(largest.size() == 2);
  CHECK(largest[0].opamp == "U1");  // 1 mV x 11 x 101 outweighs 0.5 mV x 101
  CHECK_THAT(largest[0].gain, IsClose(g1 * g2, 1e-9));
}

TEST_CASE("the worst-case band is the sum of the single-source magnitudes, the largest "
          "deviation over every sign", "[bias]") {
  // The same two-stage chain with vos and ios of unknown sign, against an
  // explicit circuit for each of the 16 sign choices: a dc vsrc in series with
  // each + input for vos, dc isrcs at the inputs for ios (superposition).
  const double vos[] = {1e-3, 0.4e-3}, ios[] = {20e-9, 50e-9};
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  noninverting_stage(b, "U1", "in", "mid", 10e3, 10e3, 1e3, dc_model(vos[0], 0, ios[0]));
  noninverting_stage(b, "U2", "mid", "out", 22e3, 47e3, 2.2e3, dc_model(vos[1], 0, ios[1]));
  const auto r = run_bias(b.circuit);

  double largest = 0;
  for (int signs = 0; signs < 16; ++signs) {
    auto sign = [&](int bit) { return (signs >> bit & 1) ? 1.0 : -1.0; };
    CircuitBuilder e;
    e.vsrc("Vin", "in", "gnd", 0);
    for (int k = 0; k < 2; ++k) {
      const std::string u = k == 0 ? "U1" : "U2";
      const std::string in = k == 0 ? "in" : "mid", out = k == 0 ? "mid" : "out";
      const double rs = k == 0 ? 10e3 : 22e3, rf = k == 0 ? 10e3 : 47e3, rg = k == 0 ? 1e3 : 2.2e3;
      e.add(ElementKind::resistor, "Rs" + u, {in, u + "_s"}, rs);
      e.add(ElementKind::vsource, "Vos" + u, {u + "_p", u + "_s"}).dc = sign(2 * k) * vos[k];
      e.add(ElementKind::resistor, "Rf" + u, {out, u + "_fb"}, rf);
      e.add(ElementKind::resistor, "Rg" + u, {u + "_fb", "gnd"}, rg);
      // I(+) = s ios/2 into the + pin, I(-) = -s ios/2 into the - pin.
      e.add(ElementKind::isource, "Ip" + u, {u + "_p", "gnd"}).dc = sign(2 * k + 1) * ios[k] / 2;
      e.add(ElementKind::isource, "In" + u, {u + "_fb", "gnd"}).dc = -sign(2 * k + 1) * ios[k] / 2;
      e.opamp(u, u + "_p", u + "_fb", out, single_pole(10e6, kAol));
    }
    const auto explicit_result = run_bias(e.circuit);
    largest = std::max(largest, std::abs(at(e.circuit, explicit_result, "out")));
  }
  CHECK_THAT(worst_at(b.circuit, r, "out"), IsClose(largest, 1e-9));
}

TEST_CASE("a node reached only through a capacitor is reported as floating at DC", "[bias]") {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  b.add(ElementKind::capacitor, "C1", {"in", "hp"}, 1e-6);
  b.opamp("U1", "hp", "out", "out", dc_model(1e-3, 1e-9, 0));
  try {
    run_bias(b.circuit);
    FAIL("expected a SolveError");
  } catch (const SolveError& e) {
    CHECK(std::string(e.what()) ==
          "error: circuit cannot be solved at DC: node 'hp' has no DC path to gnd\n"
          "hint: at DC capacitors are open; give the node a resistor to a biased node or to gnd\n");
  }
}

TEST_CASE("an output that can pass its rail less swing is flagged", "[bias]") {
  CircuitBuilder b;
  b.circuit.supply = Rails{5, -5};
  b.vsrc("Vin", "in", "gnd", 0).dc = 0.3;
  OpAmpModel m = dc_model(10e-3, 0, 0);
  m.swing = 1.2;
  noninverting_stage(b, "U1", "in", "out", 1e3, 10e3, 1e3, m);
  const auto r = run_bias(b.circuit);
  const auto& u1 = amp(r, "U1");
  const double gain = 11 * loop_factor(10e3, 1e3);
  CHECK_THAT(u1.high, IsClose((0.3 + 10e-3) * gain, 1e-9));  // (0.3 V + vos) x 11 = 3.41 V
  CHECK_THAT(u1.low, IsClose((0.3 - 10e-3) * gain, 1e-9));
  CHECK_THAT(u1.limit_high, IsClose(3.8, 1e-12));  // 5 V rail less 1.2 V swing
  CHECK_THAT(u1.limit_low, IsClose(-3.8, 1e-12));
  REQUIRE(u1.ok.has_value());
  CHECK(*u1.ok);
  CHECK(r.warnings.empty());

  b.circuit.elements[0].dc = 0.34;  // (0.34 V + 10 mV) x 11 = 3.85 V, past 3.8 V
  const auto flagged = run_bias(b.circuit);
  REQUIRE(amp(flagged, "U1").ok.has_value());
  CHECK_FALSE(*amp(flagged, "U1").ok);
  REQUIRE(flagged.warnings.size() == 1);
  CHECK(flagged.warnings[0] ==
        "U1: output 'out' can reach 3.85V, above 3.8V (rail 5V less swing 1.2V): it can saturate");
}

TEST_CASE("rails= on an instance overrides the supply, and without either nothing is checked",
          "[bias]") {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0).dc = 1;
  noninverting_stage(b, "U1", "in", "out", 1e3, 10e3, 1e3, dc_model(0, 0, 0));
  const auto unchecked = run_bias(b.circuit);
  CHECK_FALSE(amp(unchecked, "U1").ok.has_value());
  CHECK(std::isnan(amp(unchecked, "U1").limit_high));
  REQUIRE(unchecked.warnings.size() == 1);
  CHECK(unchecked.warnings[0] ==
        "U1: no rails (no supply line, no rails= on the instance): output not checked");

  b.circuit.supply = Rails{5, -5};
  b.circuit.elements.back().rails = Rails{15, -15};
  const auto r = run_bias(b.circuit);
  CHECK(amp(r, "U1").limit_high == 15);
  CHECK(*amp(r, "U1").ok);  // 11 V is inside +-15 V, though not inside the +-5 V supply
}

TEST_CASE("at DC capacitors are open and inductors are shorts", "[bias]") {
  // Vin 2 V -> L1 -> out, R1 1k to gnd, C1 in parallel; and a 1k/1k divider
  // through a series capacitor that blocks DC (Ohm's law).
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0).dc = 2;
  b.add(ElementKind::inductor, "L1", {"in", "out"}, 10e-3);
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"out", "gnd"}, 1e-6);
  b.add(ElementKind::capacitor, "C2", {"in", "mid"}, 1e-6);
  b.add(ElementKind::resistor, "R2", {"mid", "gnd"}, 1e3);
  const auto r = run_bias(b.circuit);
  CHECK_THAT(at(b.circuit, r, "out"), IsClose(2.0, 1e-12));
  CHECK(std::abs(at(b.circuit, r, "mid")) < 1e-15);
}

TEST_CASE("an offset that overflows a double is an error naming the op amp", "[bias][errors]") {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  noninverting_stage(b, "U1", "in", "out", 1e3, 100e3, 1e3, dc_model(1e308, 0, 0));
  CHECK_THROWS_WITH(run_bias(b.circuit),
                    Catch::Matchers::StartsWith("error: circuit cannot be solved at DC: the worst-case offset at node 'out'") &&
                        Catch::Matchers::Contains("vos of 'U1'") &&
                        Catch::Matchers::Contains("overflows a double"));
  CHECK_THROWS_AS(run_bias(b.circuit), SolveError);
}

TEST_CASE("each op amp keeps its three largest contributors, largest first, from a long chain",
          "[bias]") {
  // Five followers in cascade with vos 1, 2, 3, 4, 5 mV: at the last output
  // each vos arrives with unit gain (a follower's gain is 1/(1 + 1/aol),
  // Black 1934), so the three largest are U5, U4, U3 in that order.
  CircuitBuilder b;
  b.vsrc("Vin", "n0", "gnd", 0);
  for (int k = 1; k <= 5; ++k) {
    const std::string out = "n" + std::to_string(k);
    b.opamp("U" + std::to_string(k), "n" + std::to_string(k - 1), out, out, dc_model(1e-3 * k, 0, 0));
  }
  const auto r = run_bias(b.circuit);
  const auto& last = amp(r, "U5").largest;
  REQUIRE(last.size() == 3);
  CHECK(last[0].opamp == "U5");
  CHECK(last[1].opamp == "U4");
  CHECK(last[2].opamp == "U3");
  CHECK_THAT(last[2].volts, IsClose(3e-3 * std::pow(1 / (1 + 1 / kAol), 3), 1e-9));
  CHECK_THAT(worst_at(b.circuit, r, "n5"), IsClose(15e-3, 1e-5));
}

namespace {

void require_same_bias(const BiasResult& a, const BiasResult& b) {
  REQUIRE(a.nodes.size() == b.nodes.size());
  for (std::size_t k = 0; k < a.nodes.size(); ++k) {
    CHECK(a.nodes[k].name == b.nodes[k].name);
    CHECK(a.nodes[k].nominal == b.nodes[k].nominal);
    CHECK(a.nodes[k].worst == b.nodes[k].worst);
    CHECK(a.nodes[k].rss == b.nodes[k].rss);
  }
  REQUIRE(a.opamps.size() == b.opamps.size());
  for (std::size_t k = 0; k < a.opamps.size(); ++k) {
    const OpAmpBias &x = a.opamps[k], &y = b.opamps[k];
    CHECK(x.name == y.name);
    CHECK(x.out == y.out);
    CHECK(x.nominal == y.nominal);
    CHECK(x.low == y.low);
    CHECK(x.high == y.high);
    CHECK(x.ok == y.ok);
    REQUIRE(x.largest.size() == y.largest.size());
    for (std::size_t c = 0; c < x.largest.size(); ++c) {
      CHECK(x.largest[c].opamp == y.largest[c].opamp);
      CHECK(x.largest[c].kind == y.largest[c].kind);
      CHECK(x.largest[c].gain == y.largest[c].gain);
      CHECK(x.largest[c].volts == y.largest[c].volts);
      CHECK(x.largest[c].through == y.largest[c].through);
    }
  }
  CHECK(a.warnings == b.warnings);
}

}  // namespace

// The reused tables must hold exactly what a fresh run computes, when the
// values move the largest contributors around between runs (here the source
// resistors grow until the bias currents outweigh the offsets).
TEST_CASE("a bias run into the tables of an earlier run on restamped values equals a fresh run",
          "[bias][threads]") {
  for (const int threads : {1, 2}) {
    CAPTURE(threads);
    CircuitBuilder b;
    b.vsrc("Vin", "in", "gnd", 0);
    std::string from = "in";
    for (int k = 0; k < 8; ++k) {  // 24 error columns: two blocks, so two workers on two threads
      const std::string name = "U" + std::to_string(k), out = "o" + std::to_string(k);
      noninverting_stage(b, name, from, out, 1e3, 10e3, 10e3, dc_model(1e-3, 50e-9, 5e-9));
      from = out;
    }
    b.circuit.supply = Rails{15, -15};
    Circuit& circuit = b.circuit;
    DcSystem dc(circuit);
    BiasResult reused;
    for (const double rs : {1e3, 300e3, 30e6}) {
      CAPTURE(rs);
      for (auto& e : circuit.elements)
        if (e.name.rfind("RsU", 0) == 0) e.value = rs;
      dc.restamp();
      run_bias(dc, threads, reused);
      require_same_bias(reused, run_bias(circuit));
    }
    CHECK(reused.opamps.back().largest.front().kind != DcErrorKind::vos);  // the order did change
  }
}
