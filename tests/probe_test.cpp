// Probes: how their text resolves against the circuit, the errors for names
// that do not, and what a probe reads from a solution.

#include "tacet/solve/probe.hpp"

#include <catch2/catch.hpp>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/solve/response.hpp"

using namespace tacet;
using namespace tacet::testing;

TEST_CASE("a probe is a node, a node pair or the current of an element", "[probe]") {
  const Circuit circuit = rc_lowpass(1e3, 1e-9);
  const Probe node = resolve_probe("out", circuit);
  CHECK(node.kind == ProbeKind::voltage);
  CHECK(node.plus == *circuit.find_node("out"));
  CHECK(node.minus == 0);
  const Probe pair = resolve_probe(" in , out ", circuit);
  CHECK(pair.text == "in , out");
  CHECK(pair.plus == *circuit.find_node("in"));
  CHECK(pair.minus == *circuit.find_node("out"));
  const Probe current = resolve_probe("i( R1 )", circuit);
  CHECK(current.kind == ProbeKind::current);
  CHECK(circuit.elements[current.element].name == "R1");
  CHECK(std::string(probe_unit(node)) == "V");
  CHECK(std::string(probe_unit(current)) == "A");
}

TEST_CASE("a probe naming nothing in the circuit is refused with the nearest name", "[probe]") {
  const Circuit circuit = rc_lowpass(1e3, 1e-9);
  CHECK_THROWS_WITH(resolve_probe("otu", circuit),
                    "error: unknown node 'otu' in probe 'otu'\nhint: did you mean 'out'?\n");
  CHECK_THROWS_WITH(resolve_probe("i(C2)", circuit),
                    "error: unknown element 'C2' in probe 'i(C2)'\nhint: did you mean 'C1'?\n");
  CHECK_THROWS_WITH(resolve_probe("out,", circuit),
                    "error: probe 'out,' has an empty node name\n");
  CHECK_THROWS_AS(resolve_probe("  ", circuit), InputError);
}

TEST_CASE("a pair probe reads the difference of its nodes and a resistor's current obeys Ohm's law",
          "[probe]") {
  // RC low-pass: v(out) = 1/(1 + jwRC) (divider rule), so v(in) - v(out) =
  // jwRC/(1 + jwRC) and the current through R1 is that over R (Ohm's law).
  const double r = 1e3, c = 1e-6, f = 300;
  const Circuit circuit = rc_lowpass(r, c);
  FrequencyResponse response(circuit);
  const cplx across = jw(f) * r * c / (1.0 + jw(f) * r * c);
  CHECK_THAT(response.at(resolve_probe("in,out", circuit), f), IsClose(across, 1e-9));
  CHECK_THAT(response.at(resolve_probe("i(R1)", circuit), f), IsClose(across / r, 1e-9));
}

namespace {

constexpr double kF = 1e3;  // Hz, where every value below is read

// One 1 V source driving a divider, a capacitor and an inductor branch; a
// 1 mA current source into a resistor; a vccs into a resistor; a follower.
Circuit probe_bench() {
  CircuitBuilder b;
  b.vsrc("V1", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "mid"}, 1e3);
  b.add(ElementKind::resistor, "R2", {"mid", "gnd"}, 3e3);
  b.add(ElementKind::capacitor, "C1", {"in", "gnd"}, 1e-6);
  b.add(ElementKind::inductor, "L1", {"in", "z"}, 1e-3);
  b.add(ElementKind::resistor, "R6", {"z", "gnd"}, 1e3);
  b.isrc("I1", "gnd", "x", 1e-3);
  b.add(ElementKind::resistor, "R3", {"x", "gnd"}, 1e3);
  b.add(ElementKind::vccs, "G1", {"y", "gnd", "in", "gnd"}, 1e-3);
  b.add(ElementKind::resistor, "R5", {"y", "gnd"}, 1e3);
  b.opamp("U1", "in", "o", "o", single_pole(10e6, 1e6));
  b.add(ElementKind::resistor, "R4", {"o", "gnd"}, 1e3);
  return b.circuit;
}

cplx read(const Circuit& circuit, const std::string& probe) {
  AcOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = {kF};
  options.probes = {probe};
  return run_ac(circuit, options).traces.at(0).values.at(0);
}

}  // namespace

TEST_CASE("a current probe reads the current from the first connection to the second",
          "[probe]") {
  const Circuit c = probe_bench();
  const cplx s = jw(kF);
  CHECK_THAT(read(c, "i(R1)"), IsClose(0.25e-3, 1e-9));                  // (1 - 0.75) V / 1k
  CHECK_THAT(read(c, "i(C1)"), IsClose(s * 1e-6, 1e-9));                  // s C V
  CHECK_THAT(read(c, "i(L1)"), IsClose(1.0 / (1e3 + s * 1e-3), 1e-9));    // V / (R + s L)
  CHECK_THAT(read(c, "i(I1)"), IsClose(1e-3, 1e-9));                      // its own phasor
  CHECK_THAT(read(c, "x"), IsClose(1.0, 1e-9));                           // 1 mA into 1k
  CHECK_THAT(read(c, "i(G1)"), IsClose(1e-3, 1e-9));                      // gm (v(in) - 0)
  CHECK_THAT(read(c, "y"), IsClose(-1.0, 1e-9));                          // drawn out of y
  // The source delivers each branch's current out of its + terminal, so the
  // current through it from + to - is minus their sum (G1 and U1 only sense in).
  CHECK_THAT(read(c, "i(V1)"), IsClose(-(0.25e-3 + s * 1e-6 + 1.0 / (1e3 + s * 1e-3)), 1e-9));
  // Follower (Black's formula): v(o) = A / (1 + A), A = aol / (1 + s aol / (2 pi gbw));
  // i(U1) is what its output delivers into the pin, here into R4.
  const cplx a = 1e6 / (1.0 + s * 1e6 / (2 * kPi * 10e6));
  CHECK_THAT(read(c, "o"), IsClose(a / (1.0 + a), 1e-9));
  CHECK_THAT(read(c, "i(U1)"), IsClose(a / (1.0 + a) / 1e3, 1e-9));
}

// --- impedance probes: driving-point impedances with every independent source
// zeroed, against closed forms.

namespace {

AcResult ac_at(const Circuit& circuit, std::vector<double> f, std::vector<std::string> probes) {
  AcOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = std::move(f);
  options.probes = std::move(probes);
  return run_ac(circuit, options);
}

}  // namespace

TEST_CASE("z of a node is the parallel impedance to gnd with voltage sources shorted",
          "[probe]") {
  // Ohm's law and the parallel combination: Vin shorted, z(out) = R1 || 1/(sC).
  const Circuit circuit = rc_lowpass(10e3, 1e-9);
  const std::vector<double> f{10, 15.9e3, 1e6};
  const AcResult r = ac_at(circuit, f, {"z(out)", "z(in)"});
  for (std::size_t k = 0; k < f.size(); ++k) {
    const cplx zc = 1.0 / (jw(f[k]) * 1e-9);
    CHECK_THAT(r.traces[0].values[k], IsClose(10e3 * zc / (10e3 + zc), 1e-12));
    CHECK(std::abs(r.traces[1].values[k]) == 0.0);  // a node held by a voltage source
  }
  CHECK(std::string(probe_unit(r.traces[0].probe)) == "ohm");
}

TEST_CASE("z between two nodes sees the element between them and the path through gnd",
          "[probe]") {
  // Series-parallel reduction: R between a and b, Ra and Rb from each to gnd:
  // z(a,b) = R || (Ra + Rb). A current source is open and changes nothing.
  CircuitBuilder b;
  b.add(ElementKind::resistor, "R", {"a", "b"}, 1e3);
  b.add(ElementKind::resistor, "Ra", {"a", "gnd"}, 2e3);
  b.add(ElementKind::resistor, "Rb", {"b", "gnd"}, 3e3);
  b.isrc("I1", "gnd", "a", 1.0);
  const AcResult r = ac_at(b.circuit, {100}, {"z(a,b)", "z(b, a)"});
  CHECK_THAT(r.traces[0].values[0], IsClose(1e3 * 5e3 / 6e3, 1e-12));
  CHECK_THAT(r.traces[1].values[0], IsClose(1e3 * 5e3 / 6e3, 1e-12));
}

TEST_CASE("the output impedance of a follower is rout / (1 + A)", "[probe]") {
  // Feedback lowers the open-loop output resistance by the loop gain: with the
  // test current at the pin, v_x = -A v and I = v (1 + A) / rout.
  OpAmpModel m = single_pole(10e6, 1e5);
  m.fp2 = 30e6;
  m.rout = 75;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "out", "out", m);
  const std::vector<double> f{1, 1e3, 1e5, 1e6, 1e7};
  const AcResult r = ac_at(b.circuit, f, {"z(out)"});
  for (std::size_t k = 0; k < f.size(); ++k) {
    const cplx a = m.aol / ((1.0 + jw(f[k]) * m.aol / (2 * kPi * m.gbw)) *
                            (1.0 + jw(f[k]) / (2 * kPi * m.fp2)));
    CHECK_THAT(r.traces[0].values[k], IsClose(75.0 / (1.0 + a), 1e-9));
  }
}

TEST_CASE("z of an unknown node names the nearest node", "[probe]") {
  const Circuit circuit = rc_lowpass(1e3, 1e-9);
  CHECK_THROWS_WITH(resolve_probe("z(outt)", circuit),
                    "error: unknown node 'outt' in probe 'z(outt)'\nhint: did you mean 'out'?\n");
  CHECK_THROWS_AS(resolve_probe("z(out,out)", circuit), InputError);
}

TEST_CASE("noise refuses an impedance probe", "[probe]") {
  NoiseOptions options;
  options.probe = "z(out)";
  options.band = Band{10, 1e3};
  CHECK_THROWS_AS(run_noise(rc_lowpass(1e3, 1e-9), options), InputError);
}
