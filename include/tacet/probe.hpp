#pragma once
// What a user asks to see: a node voltage (`out`), a node pair (`out,ref`),
// or the current through an element (`i(R1)`, flowing from its first
// connection through it to its second).

#include <complex>
#include <cstddef>
#include <string>
#include <vector>

#include "tacet/circuit.hpp"

namespace tacet {

enum class ProbeKind { voltage, current };

struct Probe {
  std::string text;  ///< as the user wrote it, for headers and JSON
  ProbeKind kind = ProbeKind::voltage;
  int plus = 0;   ///< voltage: node ids; gnd is 0
  int minus = 0;
  std::size_t element = 0;  ///< current: index into Circuit::elements
};

/// Resolves a probe's text against the circuit. Throws InputError for an
/// unknown node or element, with the nearest name as a hint.
Probe resolve_probe(const std::string& text, const Circuit& circuit);

/// The unit a probe's values carry: "V" or "A".
const char* probe_unit(const Probe& probe);

}  // namespace tacet
