#pragma once
// What a user asks to see: a node voltage (`out`), a node pair (`out,ref`),
// or the current through an element (`i(R1)`, flowing from its first
// connection through it to its second; for an op amp, `i(U1)` is the current
// its output delivers into the output pin), or the driving-point impedance
// at a node (`z(out)`, to gnd) or between two nodes (`z(a,b)`): V/I for a unit
// test current into the first node and out of the second, with every
// independent source zeroed (voltage sources shorted, current sources open).
//
// Every probe is a linear functional of the MNA unknowns x plus a constant:
//   value = constant + sum_k coefficient_k x_k
// (a current source's probe is just its phasor). The noise analysis uses the
// coefficients as the right-hand side of its adjoint (transposed) solve.
// An impedance probe is no functional of the circuit's solution: it needs a
// solve of its own (FrequencyResponse::value does it), so analyses built on
// the functional (noise) refuse it.

#include <complex>
#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/mna.hpp"

namespace tacet {

enum class ProbeKind { voltage, current, impedance };

struct Probe {
  std::string text;  ///< as the user wrote it, for headers and JSON
  ProbeKind kind = ProbeKind::voltage;
  int plus = 0;   ///< voltage, impedance: node ids; gnd is 0
  int minus = 0;
  std::size_t element = 0;  ///< current: index into Circuit::elements
};

/// Resolves a probe's text against the circuit. Throws InputError for an
/// unknown node or element, with the nearest name as a hint.
Probe resolve_probe(const std::string& text, const Circuit& circuit);

/// The element index of the independent source `name`, for `--input` and
/// `input=`. Throws InputError naming the circuit's sources when `name` is
/// not one; `flag` is how the caller's user wrote it ("--input").
std::size_t resolve_source(const std::string& name, const Circuit& circuit, std::string_view flag);

/// The unit a probe's values carry: "V", "A" or "ohm".
const char* probe_unit(const Probe& probe);

/// One term of a probe's functional: coefficient times unknown `unknown`.
struct ProbeTerm {
  int unknown;
  std::complex<double> coefficient;
};

/// Fills `terms` (cleared first; its capacity is reused, so a caller that
/// keeps the vector allocates nothing per point) with the probe's functional
/// at the Laplace variable s, and returns the constant part.
std::complex<double> probe_functional(const Probe& probe, const MnaSystem& mna,
                                      std::complex<double> s, std::vector<ProbeTerm>& terms);

/// The part of d(functional)/dx that comes from the functional itself (its
/// coefficients, not the solution x), into `terms` (cleared first): non-empty
/// only for a current probe of the element p belongs to, i(R) = (va - vb)/R,
/// i(C) = s C (va - vb) and i(G) = gm (vc+ - vc-); every other probe reads
/// unknowns with coefficients that no parameter changes.
void probe_functional_derivative(const Probe& probe, const MnaSystem& mna, std::complex<double> s,
                                 const Parameter& p, std::vector<ProbeTerm>& terms);

/// The probe's value for the solution x (mna.size() values) at s; `scratch`
/// is reused working space.
std::complex<double> probe_value(const Probe& probe, const MnaSystem& mna, std::complex<double> s,
                                 const std::complex<double>* x, std::vector<ProbeTerm>& scratch);

}  // namespace tacet
