// Probes: how their text resolves against the circuit, the errors for names
// that do not, and what a probe reads from a solution.

#include "tacet/solve/probe.hpp"

#include <catch2/catch.hpp>

#include "is_close.hpp"
#include "reference_circuits.hpp"
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
