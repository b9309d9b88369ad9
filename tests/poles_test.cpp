// Poles and zeros against closed forms; each check names its source.

#include "tacet/analysis/poles.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/common/errors.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

// Roots of a s^2 + b s + c (quadratic formula), imaginary part ascending.
std::pair<cplx, cplx> quadratic_roots(double a, double b, double c) {
  const cplx root = std::sqrt(cplx(b * b - 4 * a * c));
  cplx r1 = (-b - root) / (2 * a), r2 = (-b + root) / (2 * a);
  if (r1.imag() > r2.imag()) std::swap(r1, r2);
  return {r1, r2};
}

}  // namespace

TEST_CASE("the closed-loop poles of a two-pole amplifier solve (1+s/wp)(1+s/wp2) + aol beta = 0",
          "[poles]") {
  // Characteristic equation 1 + T(s) = 0 with T = aol beta / ((1+s/wp)(1+s/wp2)):
  // s^2/(wp wp2) + s (1/wp + 1/wp2) + 1 + aol beta = 0 (textbook feedback theory).
  OpAmpModel m = single_pole(10e6, 1e5);
  m.fp2 = 15e6;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "fb", "out", m);
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, 1e3);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, 1e3);
  const PolesResult r = run_poles(b.circuit);
  const double wp = 2 * kPi * m.gbw / m.aol, wp2 = 2 * kPi * m.fp2;
  const auto [p1, p2] = quadratic_roots(1 / (wp * wp2), 1 / wp + 1 / wp2, 1 + m.aol * 0.5);
  REQUIRE(r.poles.size() == 2);
  CHECK_THAT(r.poles[0].s, IsClose(p1, 1e-9));
  CHECK_THAT(r.poles[1].s, IsClose(p2, 1e-9));
  CHECK(r.stable);
  // f0 and Q of the pair: s^2 + (w0/Q) s + w0^2 (standard second-order form).
  const double w0 = std::sqrt(wp * wp2 * (1 + m.aol * 0.5));
  CHECK_THAT(r.poles[0].f0(), IsClose(w0 / (2 * kPi), 1e-9));
  CHECK_THAT(r.poles[0].q(), IsClose(w0 / (wp + wp2), 1e-9));
}

TEST_CASE("a series RLC has the poles of L C s^2 + R C s + 1 and the zeros of its transfer",
          "[poles]") {
  // Series RLC driven by a voltage source: poles at the roots of
  // L C s^2 + R C s + 1; v(C) = 1/(LCs^2 + RCs + 1) has no finite zero,
  // v(a,b) across L = L C s^2 / (...) a double zero at 0 and the current
  // s C / (...) one zero at 0 (impedance divider, closed forms).
  const double r = 100, l = 10e-3, c = 100e-9;
  const Circuit circuit = series_rlc(r, l, c);
  const auto [p1, p2] = quadratic_roots(l * c, r * c, 1);
  PolesResult across_c = run_poles(circuit, {"b", "Vin"});
  REQUIRE(across_c.poles.size() == 2);
  CHECK_THAT(across_c.poles[0].s, IsClose(p1, 1e-9));
  CHECK_THAT(across_c.poles[1].s, IsClose(p2, 1e-9));
  CHECK(across_c.zeros.empty());
  const PolesResult across_l = run_poles(circuit, {"a,b", "Vin"});
  REQUIRE(across_l.zeros.size() == 2);
  for (const Root& z : across_l.zeros) CHECK(std::abs(z.s) < 1e-3 * std::abs(p1));
  const PolesResult current = run_poles(circuit, {"i(C1)", "Vin"});
  REQUIRE(current.zeros.size() == 1);
  CHECK(std::abs(current.zeros[0].s) < 1e-6 * std::abs(p1));
}

TEST_CASE("an RC low-pass has one real pole at -1/RC and is stable", "[poles]") {
  // First-order RC: pole s = -1/(RC), Q = 1/2 for a real pole.
  const PolesResult r = run_poles(rc_lowpass(10e3, 1e-9));
  REQUIRE(r.poles.size() == 1);
  CHECK_THAT(r.poles[0].s, IsClose(cplx(-1 / (10e3 * 1e-9), 0), 1e-12));
  CHECK_THAT(r.poles[0].q(), IsClose(0.5, 1e-12));
  CHECK(r.stable);
}

TEST_CASE("positive feedback gives a right-half-plane pole and names the op amp", "[poles]") {
  // Inputs swapped: 1 - aol beta/(1 + s/wp) = 0 puts s = wp (aol beta - 1) > 0.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "fb", "in", "out", single_pole(1e6, 1e5));
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, 1e3);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, 1e3);
  const PolesResult r = run_poles(b.circuit);
  REQUIRE(r.poles.size() == 1);
  const double wp = 2 * kPi * 1e6 / 1e5;
  CHECK_THAT(r.poles[0].s, IsClose(cplx(wp * (1e5 * 0.5 - 1), 0), 1e-9));
  CHECK_FALSE(r.stable);
  // Its margins read fine (a crossover at +90 degrees: "270 degrees"), but T
  // starts at -aol beta = -5e4, left of -1: the latch is named all the same.
  CHECK(r.unstable_loops == std::vector<std::string>{"U1"});
}

TEST_CASE("poles refuse a circuit with one block too large for the dense method", "[poles]") {
  // A passive ladder is one strongly connected block: kMaxPoleUnknowns + 1 nodes.
  CircuitBuilder b;
  b.vsrc("Vin", "n0", "gnd", 1.0);
  for (int k = 0; k <= kMaxPoleUnknowns; ++k) {
    b.add(ElementKind::resistor, "R" + std::to_string(k),
          {"n" + std::to_string(k), "n" + std::to_string(k + 1)}, 1e3);
    b.add(ElementKind::capacitor, "C" + std::to_string(k), {"n" + std::to_string(k + 1), "gnd"},
          1e-9);
  }
  CHECK_THROWS_AS(run_poles(b.circuit), InputError);
  CHECK_THROWS_WITH(run_poles(b.circuit), Catch::Matchers::Contains("601 of them in one block"));
}

TEST_CASE("the poles of a buffered RC cascade beyond the dense limit are those of its stages", "[poles]") {
  // 250 sections of R_k into C to gnd, buffered by a follower: a pencil of
  // 752 unknowns, more than the dense method takes whole, but each section
  // is a block of its own (the follower's output is a source to the next).
  // Closed forms (from memory): the RC pole s = -1/(R_k C); a single-pole op
  // amp A = aol/(1 + s/wp) as a follower closes its loop at s = -wp (1 + aol).
  const int sections = 250;
  const double c = 1e-9;
  OpAmpModel m = single_pole(10e6, 1e5);
  CircuitBuilder b;
  b.vsrc("Vin", "o0", "gnd", 1.0);
  std::vector<double> expected;
  const double wp = 2 * kPi * m.gbw / m.aol;
  for (int k = 1; k <= sections; ++k) {
    const std::string id = std::to_string(k), from = "o" + std::to_string(k - 1);
    const double r = 1e3 * (1 + 0.01 * k);
    b.add(ElementKind::resistor, "R" + id, {from, "c" + id}, r);
    b.add(ElementKind::capacitor, "C" + id, {"c" + id, "gnd"}, c);
    b.opamp("U" + id, "c" + id, "o" + id, "o" + id, m);
    expected.push_back(1 / (r * c));
    expected.push_back(wp * (1 + m.aol));
  }
  const PolesResult r = run_poles(b.circuit);
  CHECK(r.unknowns > kMaxPoleUnknowns);
  CHECK(r.stable);
  REQUIRE(r.poles.size() == expected.size());
  std::sort(expected.begin(), expected.end());
  for (std::size_t k = 0; k < expected.size(); ++k) {
    CAPTURE(k);
    CHECK(r.poles[k].s.imag() == 0);
    CHECK_THAT(-r.poles[k].s.real(), IsClose(expected[k], 1e-9));
  }
  // Zeros need the whole bordered pencil: still refused at this size.
  CHECK_THROWS_AS(run_poles(b.circuit, {"o250", "Vin"}), InputError);
}

TEST_CASE("zeros need an input that is a source", "[poles]") {
  const Circuit circuit = rc_lowpass(1e3, 1e-9);
  CHECK_THROWS_WITH(run_poles(circuit, {"out", "R1"}),
                    "error: --input 'R1' is a res, not a source\nhint: name a vsrc or isrc; the sources are Vin\n");
  CHECK_THROWS_AS(run_poles(circuit, {"out", "Vinn"}), InputError);
  CHECK_THROWS_AS(run_poles(circuit, {"out", ""}), InputError);
}
