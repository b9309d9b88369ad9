#pragma once
// A catalogue of small circuits built directly as tacet::Circuit values (no
// parser), each with the closed-form answer it is checked against and where
// that answer comes from. Component values are round demo numbers.

#include <cmath>
#include <complex>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"

namespace tacet::testing {

constexpr double kPi = 3.14159265358979323846;
using cplx = std::complex<double>;
inline cplx jw(double f) { return {0, 2 * kPi * f}; }

/// Builder: `add(kind, name, {"a", "b"}, value)` with nodes by name.
class CircuitBuilder {
 public:
  Element& add(ElementKind kind, const std::string& name, const std::vector<std::string>& nodes,
               double value = 0) {
    Element e;
    e.kind = kind;
    e.name = name;
    e.value = value;
    for (const auto& node : nodes) e.nodes.push_back(circuit.node(node));
    circuit.elements.push_back(e);
    return circuit.elements.back();
  }
  Element& vsrc(const std::string& name, const std::string& plus, const std::string& minus,
                double ac) {
    Element& e = add(ElementKind::vsource, name, {plus, minus});
    e.ac_magnitude = ac;
    return e;
  }
  Element& isrc(const std::string& name, const std::string& plus, const std::string& minus,
                double ac) {
    Element& e = add(ElementKind::isource, name, {plus, minus});
    e.ac_magnitude = ac;
    return e;
  }
  /// Op amp with nodes {+, -, out} and its own model.
  Element& opamp(const std::string& name, const std::string& plus, const std::string& minus,
                 const std::string& out, OpAmpModel model) {
    model.name = name + "_model";
    circuit.models.push_back(model);
    Element& e = add(ElementKind::opamp, name, {plus, minus, out});
    e.model = static_cast<int>(circuit.models.size()) - 1;
    return e;
  }
  Circuit circuit;
};

inline OpAmpModel single_pole(double gbw, double aol) {
  OpAmpModel m;
  m.gbw = gbw;
  m.aol = aol;
  return m;
}

// --- RC low-pass and high-pass: H = 1/(1 + s R C), H = s R C/(1 + s R C)
// (first-order RC network, closed form from nodal analysis of the divider).
inline Circuit rc_lowpass(double r, double c) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "out"}, r);
  b.add(ElementKind::capacitor, "C1", {"out", "gnd"}, c);
  return b.circuit;
}
inline cplx rc_lowpass_h(double r, double c, double f) { return 1.0 / (1.0 + jw(f) * r * c); }

inline Circuit rc_highpass(double r, double c) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::capacitor, "C1", {"in", "out"}, c);
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, r);
  return b.circuit;
}
inline cplx rc_highpass_h(double r, double c, double f) {
  return jw(f) * r * c / (1.0 + jw(f) * r * c);
}

// --- Inverting and non-inverting amplifiers with A(s) = aol/(1 + s/wp),
// wp = 2 pi gbw/aol. Black's feedback formula (H. S. Black, "Stabilized
// feedback amplifiers", Bell Syst. Tech. J. 13, 1934) with beta = Rg/(Rg+Rf):
//   inverting      G = -Rf/Rg / (1 + (1 + Rf/Rg)/A)
//   non-inverting  G = (1 + Rf/Rg) / (1 + (1 + Rf/Rg)/A)
inline cplx single_pole_gain(double gbw, double aol, double f) {
  return aol / (1.0 + jw(f) / (2 * kPi * gbw / aol));
}
inline Circuit inverting_amplifier(double rg, double rf, OpAmpModel model) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "Rg", {"in", "fb"}, rg);
  b.add(ElementKind::resistor, "Rf", {"fb", "out"}, rf);
  b.opamp("U1", "gnd", "fb", "out", model);
  return b.circuit;
}
inline cplx inverting_gain(double rg, double rf, cplx a) {
  return -rf / rg / (1.0 + (1.0 + rf / rg) / a);
}
inline Circuit noninverting_amplifier(double rg, double rf, OpAmpModel model) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, rg);
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, rf);
  b.opamp("U1", "in", "fb", "out", model);
  return b.circuit;
}
inline cplx noninverting_gain(double rg, double rf, cplx a) {
  return (1.0 + rf / rg) / (1.0 + (1.0 + rf / rg) / a);
}

// --- Unity-gain Sallen-Key low-pass (R. P. Sallen and E. L. Key, "A practical
// method of designing RC active filters", IRE Trans. Circuit Theory CT-2,
// 1955): C1 is the feedback capacitor (from the R1-R2 junction to the
// output), C2 from the buffer input to gnd, and an ideal gain-1 buffer (vcvs).
//   H(s) = w0^2 / (s^2 + s w0/Q + w0^2), w0 = 1/sqrt(R1 R2 C1 C2),
//   Q = sqrt(R1 R2 C1 C2) / (C2 (R1 + R2)).
struct SallenKey {
  double r1, r2, c1, c2;
  double w0() const { return 1 / std::sqrt(r1 * r2 * c1 * c2); }
  double q() const { return std::sqrt(r1 * r2 * c1 * c2) / (c2 * (r1 + r2)); }
  cplx h(double f) const {
    const cplx s = jw(f);
    return w0() * w0() / (s * s + s * w0() / q() + w0() * w0());
  }
  Circuit circuit() const {
    CircuitBuilder b;
    b.vsrc("Vin", "in", "gnd", 1.0);
    b.add(ElementKind::resistor, "R1", {"in", "a"}, r1);
    b.add(ElementKind::resistor, "R2", {"a", "b"}, r2);
    b.add(ElementKind::capacitor, "C1", {"a", "out"}, c1);
    b.add(ElementKind::capacitor, "C2", {"b", "gnd"}, c2);
    b.add(ElementKind::vcvs, "E1", {"out", "gnd", "b", "gnd"}, 1.0);
    return b.circuit;
  }
};
/// Butterworth (S. Butterworth, "On the theory of filter amplifiers",
/// Wireless Engineer 7, 1930): Q = 1/sqrt(2), |H(j w0)|^2 = 1/2 (-3.0103 dB).
/// With R1 = R2 = R that needs C1 = 2 C2.
inline SallenKey butterworth_sallen_key(double r, double c2) { return {r, r, 2 * c2, c2}; }

// --- Twin-T notch: R, R with 2C to gnd from their junction; C, C with R/2 to
// gnd from theirs; output unloaded. Null at f0 = 1/(2 pi R C), and
//   H(s) = (1 + (s R C)^2) / (1 + 4 s R C + (s R C)^2)
// (standard result for the symmetric twin-T, from memory; the check against
// the nodal solution below confirms it independently).
inline Circuit twin_t_notch(double r, double c) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "Ra", {"in", "m"}, r);
  b.add(ElementKind::resistor, "Rb", {"m", "out"}, r);
  b.add(ElementKind::capacitor, "Cm", {"m", "gnd"}, 2 * c);
  b.add(ElementKind::capacitor, "Ca", {"in", "n"}, c);
  b.add(ElementKind::capacitor, "Cb", {"n", "out"}, c);
  b.add(ElementKind::resistor, "Rn", {"n", "gnd"}, r / 2);
  return b.circuit;
}
inline cplx twin_t_h(double r, double c, double f) {
  const cplx x = jw(f) * r * c;
  return (1.0 + x * x) / (1.0 + 4.0 * x + x * x);
}

// --- Series RLC driven by a voltage source: resonance at f0 = 1/(2 pi
// sqrt(L C)) where the reactances cancel and the current is V/R (any circuit
// theory text, e.g. the impedance Z = R + sL + 1/(sC)).
inline Circuit series_rlc(double r, double l, double c) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "a"}, r);
  b.add(ElementKind::inductor, "L1", {"a", "b"}, l);
  b.add(ElementKind::capacitor, "C1", {"b", "gnd"}, c);
  return b.circuit;
}
inline cplx series_rlc_current(double r, double l, double c, double f) {
  return 1.0 / (r + jw(f) * l + 1.0 / (jw(f) * c));
}

}  // namespace tacet::testing
