// Sensitivities by the adjoint method against closed forms (each names its
// source) and, for every parameter of every element kind, against central
// finite differences of the full solve on a re-stamped circuit.

#include "tacet/analysis/sensitivity.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/solve/response.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

SensitivityOptions at(const std::string& probe, double f, const std::string& input = {}) {
  SensitivityOptions o;
  o.probe = probe;
  o.at = f;
  o.input = input;
  return o;
}

const ParameterSensitivity& find(const SensitivityResult& r, const std::string& name,
                                 ParameterKey key = ParameterKey::value) {
  for (const auto& e : r.elements)
    if (e.name == name && e.key == key) return e;
  FAIL("no sensitivity for " << name << " " << to_string(key));
  throw 0;
}

Circuit divider(double r1, double r2) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "out"}, r1);
  b.add(ElementKind::resistor, "R2", {"out", "gnd"}, r2);
  return b.circuit;
}

constexpr double kDeg = 180 / kPi;

}  // namespace

TEST_CASE("a divider's sensitivities are -R1/(R1+R2) and R1/(R1+R2)", "[sensitivity]") {
  // Closed form: H = R2/(R1+R2), so d ln H/d ln R1 = -R1/(R1+R2) and
  // d ln H/d ln R2 = R1/(R1+R2) (differentiating the voltage-divider formula).
  const double r1 = 3e3, r2 = 1e3;
  const SensitivityResult r = run_sensitivity(divider(r1, r2), at("out", 1e3));
  CHECK_THAT(r.value, IsClose(r2 / (r1 + r2), 1e-12));
  CHECK(find(r, "R1").mag == Approx(-r1 / (r1 + r2)).epsilon(1e-12));
  CHECK(find(r, "R2").mag == Approx(r1 / (r1 + r2)).epsilon(1e-12));
  CHECK(std::abs(find(r, "R1").deg) < 1e-12);
  CHECK(r.elements.size() == 2);
}

TEST_CASE("equal sensitivities keep circuit order and larger ones come first", "[sensitivity]") {
  const SensitivityResult equal = run_sensitivity(divider(1e3, 1e3), at("out", 1e3));
  REQUIRE(equal.elements.size() == 2);
  CHECK(equal.elements[0].name == "R1");  // |mag| 1/2 each: circuit order
  CHECK(equal.elements[1].name == "R2");
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "out"}, 1e3);
  b.add(ElementKind::resistor, "R2", {"out", "gnd"}, 9e3);
  b.add(ElementKind::resistor, "Rload", {"out", "gnd"}, 1e6);
  const SensitivityResult r = run_sensitivity(b.circuit, at("out", 1e3));
  for (std::size_t k = 1; k < r.elements.size(); ++k)
    CHECK(std::abs(r.elements[k - 1].mag) >= std::abs(r.elements[k].mag));
}

TEST_CASE("an RC low-pass at its corner has magnitude sensitivity -1/2 for R and C",
          "[sensitivity]") {
  // Closed form: H = 1/(1 + j x), x = 2 pi f R C. |H| = (1 + x^2)^(-1/2) gives
  // (x/|H|) d|H|/dx... = -x^2/(1 + x^2) for R and for C alike: -1/2 at x = 1.
  // Phase = -atan(x), so d(phase)/d(ln R) = -x/(1 + x^2) rad, times 180/pi in degrees.
  const double r = 1.6e3, c = 10e-9, fc = 1 / (2 * kPi * r * c);
  for (const double x : {1.0, 0.3, 2.5}) {
    const SensitivityResult s = run_sensitivity(rc_lowpass(r, c), at("out", x * fc));
    for (const char* name : {"R1", "C1"}) {
      CAPTURE(x, name);
      CHECK(find(s, name).mag == Approx(-x * x / (1 + x * x)).epsilon(1e-10));
      CHECK(find(s, name).deg == Approx(-kDeg * x / (1 + x * x)).epsilon(1e-10));
    }
  }
}

TEST_CASE("the gbw sensitivity of a non-inverting stage follows Black's feedback formula",
          "[sensitivity]") {
  // Black's formula H = A/(1 + A beta), beta = Rg/(Rf + Rg): d ln H/d ln A = 1/(1 + A beta).
  // Single-pole A = aol/(1 + u), u = j f aol/gbw, so d ln A/d ln gbw = u/(1 + u) (-> 1 for
  // A = gbw/(j f) when aol is large) and d ln A/d ln aol = 1/(1 + u). Closed forms.
  const double rf = 9e3, rg = 1e3, gbw = 1e6, aol = 1e5, beta = rg / (rf + rg);
  const Circuit circuit = noninverting_amplifier(rg, rf, single_pole(gbw, aol));
  for (const double f : {1e3, 1e5, 3e5}) {
    const SensitivityResult s = run_sensitivity(circuit, at("out", f));
    const cplx a = single_pole_gain(gbw, aol, f), u = jw(f) * aol / (2 * kPi * gbw);
    const cplx s_a = 1.0 / (1.0 + a * beta);
    const cplx s_gbw = s_a * u / (1.0 + u), s_aol = s_a / (1.0 + u);
    CAPTURE(f);
    CHECK_THAT(s.value, IsClose(a / (1.0 + a * beta), 1e-10));
    CHECK(find(s, "U1", ParameterKey::gbw).mag == Approx(s_gbw.real()).epsilon(1e-8));
    CHECK(find(s, "U1", ParameterKey::gbw).deg == Approx(kDeg * s_gbw.imag()).epsilon(1e-8));
    CHECK(find(s, "U1", ParameterKey::aol).mag == Approx(s_aol.real()).epsilon(1e-8));
    CHECK(find(s, "U1", ParameterKey::aol).deg == Approx(kDeg * s_aol.imag()).epsilon(1e-8));
  }
}

namespace {

// Every element kind and every op-amp entry with a derivative: a ladder into a
// vcvs, a vccs, and a non-inverting op amp with fp2, rout and rin, loaded by a
// capacitor. Each op amp has its own model (CircuitBuilder), so re-stamping one
// model entry changes one instance.
Circuit every_kind() {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.isrc("Iin", "gnd", "n2", 1e-4);
  b.add(ElementKind::resistor, "R1", {"in", "n1"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"n1", "gnd"}, 10e-9);
  b.add(ElementKind::inductor, "L1", {"n1", "n2"}, 10e-3);
  b.add(ElementKind::resistor, "R2", {"n2", "gnd"}, 2.2e3);
  b.add(ElementKind::vcvs, "E1", {"n3", "gnd", "n2", "gnd"}, 1.5);
  b.add(ElementKind::resistor, "R3", {"n3", "n4"}, 4.7e3);
  b.add(ElementKind::vccs, "G1", {"n4", "gnd", "n3", "n2"}, 2e-4);
  b.add(ElementKind::resistor, "R4", {"n4", "gnd"}, 3.3e3);
  OpAmpModel m = single_pole(2e6, 2e5);
  m.fp2 = 8e6;
  m.rout = 60;
  m.rin = 1e6;
  b.opamp("U1", "n4", "fb", "out", m);
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, 10e3);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, 2.2e3);
  b.add(ElementKind::capacitor, "CL", {"out", "gnd"}, 1e-9);
  return b.circuit;
}

double& parameter_in(Circuit& circuit, const Parameter& p) {
  Element& e = circuit.elements[p.element];
  OpAmpModel* m = e.kind == ElementKind::opamp ? &circuit.models[static_cast<std::size_t>(e.model)]
                                               : nullptr;
  switch (p.key) {
    case ParameterKey::value: return e.value;
    case ParameterKey::gbw: return m->gbw;
    case ParameterKey::aol: return m->aol;
    case ParameterKey::fp2: return m->fp2;
    case ParameterKey::rout: return m->rout;
    case ParameterKey::rin: return m->rin;
  }
  throw 0;
}

// H with one parameter scaled by (1 + relative), the whole circuit solved again.
cplx restamped(const Circuit& nominal, const Parameter& p, double relative, const Probe& probe,
               const TransferDrive& drive, double f) {
  Circuit changed = nominal;
  parameter_in(changed, p) *= 1 + relative;
  FrequencyResponse response(changed);
  TransferDerivatives transfer(response);
  std::vector<cplx> unused;
  return transfer.at(resolve_probe(probe.text, changed), drive, f, unused);
}

void check_against_differences(const Circuit& circuit, const std::string& probe_text,
                               const TransferDrive& drive, double f) {
  FrequencyResponse response(circuit);
  TransferDerivatives transfer(response);
  const Probe probe = resolve_probe(probe_text, circuit);
  std::vector<cplx> derivatives;
  const cplx h = transfer.at(probe, drive, f, derivatives);
  REQUIRE(std::abs(h) > 0);
  REQUIRE(derivatives.size() == transfer.parameters().size());
  for (std::size_t k = 0; k < derivatives.size(); ++k) {
    const Parameter& p = transfer.parameters()[k];
    // Central difference with relative step 1e-5: truncation ~1e-10, rounding ~1e-11.
    constexpr double kStep = 1e-5;
    const cplx difference = (restamped(circuit, p, kStep, probe, drive, f) -
                             restamped(circuit, p, -kStep, probe, drive, f)) /
                            (2 * kStep * p.value);
    CAPTURE(probe_text, f, circuit.elements[p.element].name, to_string(p.key));
    // Compared normalised (x/H dH/dx), so a parameter that barely matters is held to
    // the same absolute 1e-7 as one that matters a lot.
    CHECK(std::abs(p.value * (derivatives[k] - difference) / h) < 1e-7);
  }
}

}  // namespace

TEST_CASE("every stamp derivative agrees with a central difference of the full solve",
          "[sensitivity]") {
  const Circuit circuit = every_kind();
  const auto parameters = MnaSystem(circuit).parameters();
  CHECK(parameters.size() == 16);  // 11 element values, U1's gbw, aol, fp2, rout, rin
  for (const double f : {50.0, 20e3, 3e6})
    for (const char* probe : {"out", "n4,n2", "i(R1)", "i(C1)", "i(G1)", "i(L1)", "i(U1)", "z(n1)"})
      check_against_differences(circuit, probe, TransferDrive{}, f);
}

TEST_CASE("with --input the transfer is taken from that source alone", "[sensitivity]") {
  const Circuit circuit = every_kind();
  const std::size_t iin = *circuit.find_element("Iin");
  check_against_differences(circuit, "out", TransferDrive{iin}, 20e3);
  // Closed form for the drive itself: from Vin alone, the divider of R1 into the rest.
  const SensitivityResult both = run_sensitivity(circuit, at("n1", 1e3));
  const SensitivityResult vin = run_sensitivity(circuit, at("n1", 1e3, "Vin"));
  const SensitivityResult iin_only = run_sensitivity(circuit, at("n1", 1e3, "Iin"));
  CHECK_THAT(both.value, IsClose(vin.value + 1e-4 * iin_only.value, 1e-12));  // superposition
  CHECK(vin.input == "Vin");
}

TEST_CASE("the parameters are element values and each op amp's set model entries",
          "[sensitivity]") {
  const Circuit circuit = noninverting_amplifier(1e3, 9e3, single_pole(1e6, 1e5));
  const auto parameters = MnaSystem(circuit).parameters();
  std::vector<std::string> seen;
  for (const auto& p : parameters)
    seen.push_back(circuit.elements[p.element].name + "." + to_string(p.key));
  // No source (its phasor is the drive), and no fp2, rout, rin when the model leaves them 0.
  CHECK(seen == std::vector<std::string>{"Rg.value", "Rf.value", "U1.gbw", "U1.aol"});
}

TEST_CASE("bad sensitivity options are refused with the reason", "[sensitivity]") {
  const Circuit circuit = rc_lowpass(1e3, 1e-9);
  CHECK_THROWS_WITH(run_sensitivity(circuit, at("otu", 1e3)),
                    "error: unknown node 'otu' in probe 'otu'\nhint: did you mean 'out'?\n");
  // The words of tacet noise --input, so the flag reads alike in both commands.
  CHECK_THROWS_WITH(run_sensitivity(circuit, at("out", 1e3, "R1")),
                    "error: --input 'R1' is a res, not a source\n"
                    "hint: name a vsrc or isrc; the sources are Vin\n");
  CHECK_THROWS_WITH(run_sensitivity(circuit, at("out", 1e3, "Vim")),
                    "error: --input 'Vim' is not an element of the circuit\n"
                    "hint: did you mean 'Vin'?\n");
  CHECK_THROWS_AS(run_sensitivity(circuit, at("out", 0)), InputError);
  CHECK_THROWS_AS(run_sensitivity(circuit, at("out", -1e3)), InputError);
  CHECK_THROWS_AS(run_sensitivity(circuit, at("z(out)", 1e3, "Vin")), InputError);
}

TEST_CASE("a probe the drive does not reach has no relative sensitivity", "[sensitivity]") {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0.0);  // no ac=
  b.add(ElementKind::resistor, "R1", {"in", "out"}, 1e3);
  b.add(ElementKind::resistor, "R2", {"out", "gnd"}, 1e3);
  CHECK_THROWS_AS(run_sensitivity(b.circuit, at("out", 1e3)), SolveError);
  CHECK_THAT(run_sensitivity(b.circuit, at("out", 1e3, "Vin")).value, IsClose(0.5, 1e-12));
}
