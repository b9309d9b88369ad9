// Probes: from the user's text to a node pair or an element, and from there
// to a linear functional of the MNA unknowns.

#include "tacet/solve/probe.hpp"

#include <algorithm>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "tacet/common/spelling.hpp"
#include "tacet/common/errors.hpp"

namespace tacet {
namespace {

std::string trimmed(const std::string& text) {
  const auto first = text.find_first_not_of(" \t");
  if (first == std::string::npos) return {};
  const auto last = text.find_last_not_of(" \t");
  return text.substr(first, last - first + 1);
}

[[noreturn]] void unknown_name(const char* what, const std::string& name, const std::string& probe,
                               const std::vector<std::string>& candidates) {
  throw InputError::unknown(what, name, fmt::format("probe '{}'", probe),
                           nearest_word(name, candidates));
}

int resolve_node(const std::string& name, const std::string& probe, const Circuit& circuit) {
  if (name.empty())
    throw InputError::usage(fmt::format("probe '{}' has an empty node name", probe));
  if (const auto node = circuit.find_node(name)) return *node;
  unknown_name("node", name, probe, circuit.node_names);
}

std::size_t resolve_element(const std::string& name, const std::string& probe,
                            const Circuit& circuit) {
  if (const auto element = circuit.find_element(name)) return *element;
  std::vector<std::string> names;
  names.reserve(circuit.elements.size());
  for (const auto& e : circuit.elements) names.push_back(e.name);
  unknown_name("element", name, probe, names);
}

}  // namespace

Probe resolve_probe(const std::string& text, const Circuit& circuit) {
  Probe probe;
  probe.text = trimmed(text);
  const std::string& t = probe.text;
  if (t.empty())
    throw InputError::usage(
        "empty probe: name a node ('out'), a pair ('out,ref') or a current ('i(R1)')");
  if (t.size() > 3 && t.rfind("i(", 0) == 0 && t.back() == ')') {
    probe.kind = ProbeKind::current;
    probe.element = resolve_element(trimmed(t.substr(2, t.size() - 3)), t, circuit);
    return probe;
  }
  std::string pair = t;
  if (t.size() > 3 && t.rfind("z(", 0) == 0 && t.back() == ')') {
    probe.kind = ProbeKind::impedance;
    pair = t.substr(2, t.size() - 3);
  }
  const auto comma = pair.find(',');
  probe.plus = resolve_node(trimmed(pair.substr(0, comma)), t, circuit);
  if (comma != std::string::npos)
    probe.minus = resolve_node(trimmed(pair.substr(comma + 1)), t, circuit);
  if (probe.kind == ProbeKind::impedance && probe.plus == probe.minus)
    throw InputError::usage(fmt::format("probe '{}' names the same node twice", t),
                            "z(out) is the impedance from out to gnd; z(a,b) between a and b");
  return probe;
}

std::size_t resolve_source(const std::string& name, const Circuit& circuit, std::string_view flag) {
  std::vector<std::string> sources;
  for (const Element& e : circuit.elements)
    if (traits(e.kind).drive != Drive::none) sources.push_back(e.name);
  const std::string listed = sources.empty() ? "the circuit has none"
                                             : "the sources are " + fmt::format("{}", fmt::join(sources, ", "));
  const auto index = circuit.find_element(name);
  if (index && traits(circuit.elements[*index].kind).drive != Drive::none) return *index;
  if (!index) {
    const std::string near = nearest_word(name, sources);
    throw InputError::usage(fmt::format("{} '{}' is not an element of the circuit", flag, name),
                            near.empty() ? listed : "did you mean '" + near + "'?");
  }
  throw InputError::usage(
      fmt::format("{} '{}' is a {}, not a source", flag, name, to_keyword(circuit.elements[*index].kind)),
      "name a vsrc or isrc; " + listed);
}

const char* probe_unit(const Probe& probe) {
  switch (probe.kind) {
    case ProbeKind::voltage: return "V";
    case ProbeKind::current: return "A";
    case ProbeKind::impedance: return "ohm";
  }
  return "?";
}

std::complex<double> probe_functional(const Probe& probe, const MnaSystem& mna,
                                      std::complex<double> s, std::vector<ProbeTerm>& terms) {
  terms.clear();
  // Terms on one unknown are merged as they come: across a part stamped on
  // voltage differences both nodes share their group's root, whose terms
  // cancel exactly here instead of in a sum of large and small products.
  auto add = [&](int node, std::complex<double> coefficient) {
    const auto voltage = mna.voltage_terms(node);
    for (int k = 0; k < voltage.count; ++k) {
      const auto [unknown, c] = voltage.term[k];
      const auto same = std::find_if(terms.begin(), terms.end(),
                                     [&](const ProbeTerm& t) { return t.unknown == unknown; });
      if (same != terms.end()) same->coefficient += coefficient * c;
      else terms.push_back({unknown, coefficient * c});
    }
  };
  auto across = [&](int a, int b, std::complex<double> y) { add(a, y), add(b, -y); };
  if (probe.kind != ProbeKind::current) {  // an impedance: the voltage its test current makes
    across(probe.plus, probe.minus, 1.0);
    return 0.0;
  }
  const Element& e = mna.circuit().elements[probe.element];
  const auto& n = e.nodes;
  switch (e.kind) {
    case ElementKind::resistor:
      across(n[0], n[1], 1.0 / e.value);
      break;
    case ElementKind::capacitor:
      across(n[0], n[1], s * e.value);
      break;
    case ElementKind::vccs:
      across(n[2], n[3], e.value);
      break;
    case ElementKind::isource:
      return e.ac_phasor();
    case ElementKind::opamp:
      // The branch current flows into the gain source; the pin gets its negative.
      terms.push_back({mna.branch_unknown(probe.element), -1.0});
      break;
    case ElementKind::inductor:
    case ElementKind::vsource:
    case ElementKind::vcvs:
      terms.push_back({mna.branch_unknown(probe.element), 1.0});
      break;
  }
  return 0.0;
}

void probe_functional_derivative(const Probe& probe, const MnaSystem& mna, std::complex<double> s,
                                 const Parameter& p, std::vector<ProbeTerm>& terms) {
  terms.clear();
  if (probe.kind != ProbeKind::current || p.element != probe.element ||
      p.key != ParameterKey::value)
    return;
  auto across = [&](int a, int b, std::complex<double> y) {
    if (const int u = mna.node_unknown(a); u >= 0) terms.push_back({u, y});
    if (const int u = mna.node_unknown(b); u >= 0) terms.push_back({u, -y});
  };
  const Element& e = mna.circuit().elements[probe.element];
  const auto& n = e.nodes;
  switch (e.kind) {
    case ElementKind::resistor: across(n[0], n[1], -1.0 / (e.value * e.value)); break;
    case ElementKind::capacitor: across(n[0], n[1], s); break;
    case ElementKind::vccs: across(n[2], n[3], 1.0); break;
    case ElementKind::inductor:
    case ElementKind::vsource:
    case ElementKind::isource:
    case ElementKind::vcvs:
    case ElementKind::opamp:
      break;
  }
}

std::complex<double> probe_value(const Probe& probe, const MnaSystem& mna, std::complex<double> s,
                                 const std::complex<double>* x, std::vector<ProbeTerm>& scratch) {
  std::complex<double> value = probe_functional(probe, mna, s, scratch);
  for (const auto& term : scratch) value += term.coefficient * x[term.unknown];
  return value;
}

}  // namespace tacet
