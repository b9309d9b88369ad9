// Per-spec sensitivities (run_spec_sensitivities) against closed forms of an
// RC low-pass and a non-inverting stage; each check names its source.

#include <catch2/catch.hpp>
#include <cmath>

#include <fmt/format.h>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "text_circuit.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/analysis/sensitivity.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

constexpr double kR = 1.6e3, kC = 10e-9;
const double kF0 = 1 / (2 * kPi * kR * kC);  // about 9.95 kHz
constexpr double kDbPerNeper = 8.6858896380650365;  // 20/ln 10

Spec spec_of(SpecKind kind, SpecUnit unit) {
  Spec s;
  s.name = "s";
  s.kind = kind;
  s.unit = unit;
  s.probe = "out";
  return s;
}

// The one spec's derivative with respect to element `name`'s value, per +1 %.
double per_percent(const Circuit& circuit, const Spec& spec, const std::string& name,
                   ParameterKey key = ParameterKey::value, SpecMethod* method = nullptr) {
  Circuit c = circuit;
  c.specs = {spec};
  const CheckResult check = run_check(c);
  REQUIRE(check.specs.front().value.has_value());
  const SpecSensitivities s = run_spec_sensitivities(c, check);
  REQUIRE(s.specs.size() == 1);
  if (method) *method = s.specs[0].method;
  for (const SpecDerivative& d : s.specs[0].derivatives)
    if (s.names[d.parameter] == name && s.parameters[d.parameter].key == key) {
      CHECK(d.per_percent == Approx(d.derivative * s.parameters[d.parameter].value / 100));
      return d.per_percent;
    }
  FAIL("no derivative for " << name);
  return 0;
}

}  // namespace

TEST_CASE("a gain spec in dB moves by 20 log10(e) times the magnitude sensitivity per percent",
          "[sensitivity]") {
  // RC low-pass at its corner: (x/|H|) d|H|/dx = -1/2 for R and C (closed form,
  // H = 1/(1 + j w R C)), so dB per +1 % = 8.686 x (-1/2) / 100.
  Spec gain = spec_of(SpecKind::gain, SpecUnit::db);
  gain.at = kF0;
  SpecMethod method{};
  CHECK(per_percent(rc_lowpass(kR, kC), gain, "R1", ParameterKey::value, &method) ==
        Approx(-kDbPerNeper / 2 / 100).epsilon(1e-9));
  CHECK(method == SpecMethod::adjoint);
  CHECK(per_percent(rc_lowpass(kR, kC), gain, "C1") ==
        Approx(-kDbPerNeper / 2 / 100).epsilon(1e-9));
  // As a ratio: d|H| = |H| d ln|H|, |H| = 1/sqrt 2 at the corner.
  gain.unit = SpecUnit::ratio;
  CHECK(per_percent(rc_lowpass(kR, kC), gain, "R1") ==
        Approx(-0.5 / std::sqrt(2.0) / 100).epsilon(1e-9));
}

TEST_CASE("a phase spec moves by -(180/pi) x/(1 + x^2) per unit log of R", "[sensitivity]") {
  // phase = -atan(x), x = f/f0 = 2 pi f R C: d(phase)/d(ln R) = -x/(1 + x^2) rad.
  Spec phase = spec_of(SpecKind::phase, SpecUnit::degrees);
  const double x = 0.4;
  phase.at = x * kF0;
  CHECK(per_percent(rc_lowpass(kR, kC), phase, "R1") ==
        Approx(-180 / kPi * x / (1 + x * x) / 100).epsilon(1e-9));
}

TEST_CASE("an upper corner moves by implicit differentiation, the reference's level included",
          "[sensitivity]") {
  // Half power below |H(ref)|: 1/(1 + xc^2) = 1/(2 (1 + u^2)), u = fref/f0, so
  // fc = f0 sqrt(1 + 2 u^2) and d ln fc/d ln R = -1/(1 + 2 u^2) (closed form; f0 ~ 1/R).
  Spec corner = spec_of(SpecKind::upper_corner, SpecUnit::hertz);
  corner.from = 10, corner.to = 1e6, corner.min = 1;
  for (const double ref : {10.0, 3e3}) {
    corner.ref = ref;
    const double u = ref / kF0, fc = kF0 * std::sqrt(1 + 2 * u * u);
    SpecMethod method{};
    CAPTURE(ref);
    CHECK(per_percent(rc_lowpass(kR, kC), corner, "C1", ParameterKey::value, &method) ==
          Approx(-fc / (1 + 2 * u * u) / 100).epsilon(1e-6));
    CHECK(method == SpecMethod::implicit_corner);
  }
}

TEST_CASE("flatness moves as the worst point's deviation from the reference", "[sensitivity]") {
  // |dB(f2) - dB(f1)| = 10 log10((1 + x2^2)/(1 + x1^2)) for the low-pass, worst at the
  // band's top f2; d/d(ln R) = (10/ln 10)(2 x2^2/(1 + x2^2) - 2 x1^2/(1 + x1^2)).
  Spec flat = spec_of(SpecKind::flatness, SpecUnit::db);
  flat.from = 20, flat.to = 2e3, flat.ref = 1e3, flat.max = 1;
  const double x1 = 1e3 / kF0, x2 = 2e3 / kF0;
  const double expected =
      kDbPerNeper / 2 * (2 * x2 * x2 / (1 + x2 * x2) - 2 * x1 * x1 / (1 + x1 * x1)) / 100;
  SpecMethod method{};
  CHECK(per_percent(rc_lowpass(kR, kC), flat, "R1", ParameterKey::value, &method) ==
        Approx(expected).epsilon(1e-6));
  CHECK(method == SpecMethod::adjoint_flatness);
}

TEST_CASE("band noise of an RC low-pass moves as the Lorentzian integral of 4kTR", "[sensitivity]") {
  // v^2 = 4 k T R f0 (atan(f2/f0) - atan(f1/f0)) (Johnson-Nyquist density through
  // |H|^2 = 1/(1 + (f/f0)^2), integrated in closed form); dv/dR = (dv^2/dR)/(2v).
  Spec noise = spec_of(SpecKind::noise, SpecUnit::volts);
  noise.from = 20, noise.to = 20e3, noise.max = 1;
  const double t = 298.15, k4t = 4 * kBoltzmann * t;
  auto v2 = [&](double r) {
    const double f0 = 1 / (2 * kPi * r * kC);
    return k4t * r * f0 * (std::atan(noise.to / f0) - std::atan(noise.from / f0));
  };
  const double h = 1e-6;
  const double dv2 = (v2(kR * (1 + h)) - v2(kR * (1 - h))) / (2 * h * kR);  // of the closed form
  const double expected = dv2 / (2 * std::sqrt(v2(kR))) * kR / 100;
  SpecMethod method{};
  CHECK(per_percent(rc_lowpass(kR, kC), noise, "R1", ParameterKey::value, &method) ==
        Approx(expected).epsilon(1e-4));
  CHECK(method == SpecMethod::restamp_difference);
}

TEST_CASE("the gain spec of a non-inverting stage moves with gbw as Black's formula says",
          "[sensitivity]") {
  // H = A/(1 + A beta), A = aol/(1 + u), u = j f aol/gbw: d ln H/d ln gbw =
  // (u/(1 + u))/(1 + A beta) (closed form); dB per +1 % = 8.686 Re(...)/100.
  const double rf = 9e3, rg = 1e3, gbw = 1e6, aol = 1e5, f = 2e5;
  Spec gain = spec_of(SpecKind::gain, SpecUnit::db);
  gain.at = f;
  const cplx a = single_pole_gain(gbw, aol, f), u = jw(f) * aol / (2 * kPi * gbw);
  const cplx s = u / (1.0 + u) / (1.0 + a * rg / (rf + rg));
  CHECK(per_percent(noninverting_amplifier(rg, rf, single_pole(gbw, aol)), gain, "U1",
                    ParameterKey::gbw) == Approx(kDbPerNeper * s.real() / 100).epsilon(1e-8));
}

TEST_CASE("a re-measured spec varies one op amp of a shared model alone", "[sensitivity]") {
  // Two followers in cascade sharing one model: the gbw of each moves the noise
  // spec by its own amount (U2's en reaches the output directly, U1's through U2).
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  OpAmpModel m = single_pole(1e6, 1e5);
  m.en = 10e-9;
  b.opamp("U1", "in", "mid", "mid", m);
  Element& u2 = b.opamp("U2", "mid", "out", "out", m);
  u2.model = 0;  // the same model as U1
  b.circuit.models.pop_back();
  Spec noise = spec_of(SpecKind::noise, SpecUnit::volts);
  noise.from = 1e3, noise.to = 10e6, noise.max = 1;
  const double d1 = per_percent(b.circuit, noise, "U1", ParameterKey::gbw);
  const double d2 = per_percent(b.circuit, noise, "U2", ParameterKey::gbw);
  CHECK(d1 > 0);
  CHECK(d2 > 0);
  // Both en pass the same two unity followers' bandwidths; the sum is the shared model's
  // own derivative, which a re-stamp of the shared model alone would give.
  Circuit both = b.circuit;
  both.specs = {noise};
  auto total = [&](double factor) {
    Circuit c = both;
    c.models[0].gbw *= factor;
    return *run_check(c).specs[0].value;
  };
  const double shared = (total(1 + 1e-3) - total(1 - 1e-3)) / (2e-3) / 100;
  CHECK(d1 + d2 == Approx(shared).epsilon(1e-4));
}

TEST_CASE("an offset spec moves as vos times the noise gain 1 + Rf/Rg", "[sensitivity]") {
  // Worst-case output offset of a non-inverting stage from vos alone (no bias current):
  // vos (1 + Rf/Rg) (the standard offset model of an op amp stage), so per +1 % of Rf it
  // moves by vos Rf/Rg/100 and of Rg by -vos Rf/Rg/100; aol 1e9 makes A's share 1e-8.
  const double rf = 9e3, rg = 1e3, vos = 1e-3;
  OpAmpModel m = single_pole(1e6, 1e9);
  m.vos = vos;
  Spec offset = spec_of(SpecKind::offset, SpecUnit::volts);
  offset.max = 1;
  const Circuit stage = noninverting_amplifier(rg, rf, m);
  SpecMethod method{};
  CHECK(per_percent(stage, offset, "Rf", ParameterKey::value, &method) ==
        Approx(vos * rf / rg / 100).epsilon(1e-5));
  CHECK(per_percent(stage, offset, "Rg") == Approx(-vos * rf / rg / 100).epsilon(1e-5));
  CHECK(method == SpecMethod::restamp_difference);
}

TEST_CASE("a large circuit re-measures only its toleranced parts", "[sensitivity]") {
  // Past kMostRestampedParameters, the re-measured kinds differentiate the parts with
  // tol= alone (the note says so); the adjoint kinds still cover every parameter.
  CircuitBuilder b;
  b.vsrc("Vin", "n0", "gnd", 1.0);
  const int sections = static_cast<int>(kMostRestampedParameters);  // 2 parameters each
  for (int k = 1; k <= sections; ++k) {
    const std::string from = "n" + std::to_string(k - 1), to = "n" + std::to_string(k);
    b.add(ElementKind::resistor, "R" + std::to_string(k), {from, to}, 10.0);
    b.add(ElementKind::capacitor, "C" + std::to_string(k), {to, "gnd"}, 1e-12);
  }
  b.circuit.elements[1].tolerance = 0.01;  // R1
  Spec noise = spec_of(SpecKind::noise, SpecUnit::volts);
  noise.probe = "n" + std::to_string(sections);
  noise.from = 20, noise.to = 20e3, noise.max = 1;
  Spec gain = spec_of(SpecKind::gain, SpecUnit::db);
  gain.probe = noise.probe;
  gain.at = 1e3;
  Circuit c = b.circuit;
  c.specs = {noise, gain};
  const CheckResult check = run_check(c);
  const SpecSensitivities s = run_spec_sensitivities(c, check);
  REQUIRE(s.specs.size() == 2);
  REQUIRE(s.specs[0].derivatives.size() == 1);
  CHECK(s.names[s.specs[0].derivatives[0].parameter] == "R1");
  CHECK(s.specs[0].note == fmt::format("{} parameters: only those with tol= are differentiated",
                                       2 * sections));
  CHECK(s.specs[1].derivatives.size() == s.parameters.size());
}

TEST_CASE("a circuit check cannot solve has specs without sensitivities, not an error",
          "[sensitivity]") {
  // A node with no path to gnd: check reports the spec unsolved (exit 3 after the
  // report); the sensitivities say the same instead of stopping the report.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "out"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"float", "gnd"}, 1e-9);
  b.add(ElementKind::capacitor, "C2", {"float", "x"}, 1e-9);
  b.isrc("I1", "x", "y", 1.0);
  Spec gain = spec_of(SpecKind::gain, SpecUnit::db);
  gain.at = 1e3;
  Circuit c = b.circuit;
  c.specs = {gain};
  const CheckResult check = run_check(c);
  REQUIRE(check.unsolved() == 1);
  const SpecSensitivities s = run_spec_sensitivities(c, check);
  REQUIRE(s.specs.size() == 1);
  CHECK(s.specs[0].method == SpecMethod::none);
  CHECK(s.specs[0].derivatives.empty());
  CHECK_FALSE(s.specs[0].note.empty());
}

TEST_CASE("a gain spec with input= moves as the transfer from that source alone", "[sensitivity]") {
  // Two sources summed at one node through R1 and R2, R3 to gnd: from V1 alone
  // H1 = G1 / (G1 + G2 + G3) (superposition, Ohm's law), so
  // (R1/H1) dH1/dR1 = -(G2 + G3) / (G1 + G2 + G3) and (R2/H1) dH1/dR2 = G2 / (G1 + G2 + G3).
  // With both sources driving, R2 would move the gain the other way: the
  // derivative must be of the transfer the spec measures.
  const std::string text =
      "vsrc V1 (a, gnd) ac=1\n"
      "vsrc V2 (b, gnd) ac=3\n"
      "res R1 (a, out) 1k\n"
      "res R2 (b, out) 2k\n"
      "res R3 (out, gnd) 4k\n";
  const auto elaborated = tacet::testing::elaborate_text(text);
  REQUIRE(elaborated.circuit);
  Spec gain = spec_of(SpecKind::gain, SpecUnit::ratio);
  gain.at = 1e3;
  gain.min = 0.1;
  gain.input = "V1";
  const double g1 = 1e-3, g2 = 0.5e-3, g3 = 0.25e-3, gt = g1 + g2 + g3;
  const double h1 = g1 / gt;
  // A ratio spec moves by |H| x (relative sensitivity) per unit log, / 100 per percent.
  CHECK_THAT(per_percent(*elaborated.circuit, gain, "R1"), IsClose(h1 * -(g2 + g3) / gt / 100, 1e-9));
  CHECK_THAT(per_percent(*elaborated.circuit, gain, "R2"), IsClose(h1 * g2 / gt / 100, 1e-9));
}
