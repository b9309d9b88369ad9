// AC analysis against closed forms from the literature; each check names its
// source in tests/reference_circuits.hpp or beside it.

#include "tacet/analysis/ac.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/solve/mna.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

AcOptions at_frequencies(std::vector<double> f, std::vector<std::string> probes) {
  AcOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = std::move(f);
  options.probes = std::move(probes);
  return options;
}

// Every point of the single trace against the closed form `expected(f)`.
template <typename Expected>
void check_trace(const AcResult& result, Expected expected, double rel) {
  for (std::size_t k = 0; k < result.frequencies.size(); ++k) {
    INFO("f = " << result.frequencies[k] << " Hz");
    CHECK_THAT(result.traces[0].values[k], IsClose(expected(result.frequencies[k]), rel));
  }
}

const std::vector<double> kSpotFrequencies{1, 37, 159.15494309189535, 1e3, 12345, 1e6, 1e8};

}  // namespace

TEST_CASE("an RC low-pass follows 1/(1 + jwRC) at and around its corner", "[ac]") {
  const double r = 10e3, c = 100e-9;  // corner 1/(2 pi R C) = 159.15 Hz
  const auto result = run_ac(rc_lowpass(r, c), at_frequencies(kSpotFrequencies, {"out"}));
  check_trace(
      result, [&](double f) { return rc_lowpass_h(r, c, f); }, 1e-9);
  // At the corner the magnitude is 1/sqrt(2) and the phase -45 degrees (same closed form).
  CHECK_THAT(result.traces[0].values[2], IsClose(cplx(0.5, -0.5), 1e-9));
}

TEST_CASE("an RC high-pass follows jwRC/(1 + jwRC) at and around its corner", "[ac]") {
  const double r = 10e3, c = 100e-9;
  const auto result = run_ac(rc_highpass(r, c), at_frequencies(kSpotFrequencies, {"out"}));
  check_trace(
      result, [&](double f) { return rc_highpass_h(r, c, f); }, 1e-9);
  CHECK_THAT(result.traces[0].values[2], IsClose(cplx(0.5, 0.5), 1e-9));
}

TEST_CASE("an inverting amplifier matches Black's formula with a single-pole op amp", "[ac]") {
  const double rg = 1e3, rf = 9e3, gbw = 10e6, aol = 1e5;
  const auto freqs = std::vector<double>{1, 100, 1e4, 1e6, 1e7, 1e8};
  const auto result =
      run_ac(inverting_amplifier(rg, rf, single_pole(gbw, aol)), at_frequencies(freqs, {"out"}));
  check_trace(
      result, [&](double f) { return inverting_gain(rg, rf, single_pole_gain(gbw, aol, f)); },
      1e-9);
}

TEST_CASE("a non-inverting amplifier matches Black's formula even with a very large aol", "[ac]") {
  const double rg = 1e3, rf = 99e3, gbw = 1e6;
  const double aol = GENERATE(1e3, 1e6, 1e9);
  const auto freqs = std::vector<double>{1, 1e3, 1e4, 1e5, 1e7};
  const auto result =
      run_ac(noninverting_amplifier(rg, rf, single_pole(gbw, aol)), at_frequencies(freqs, {"out"}));
  check_trace(
      result, [&](double f) { return noninverting_gain(rg, rf, single_pole_gain(gbw, aol, f)); },
      1e-9);
}

TEST_CASE("a second op-amp pole multiplies the open-loop gain by 1/(1 + s/wp2)", "[ac]") {
  // Same Black's formula, A(s) = aol / ((1 + s/wp)(1 + s/wp2)) as in docs/analyses/ac.md.
  const double rg = 1e3, rf = 1e3, gbw = 10e6, aol = 1e5, fp2 = 30e6;
  OpAmpModel model = single_pole(gbw, aol);
  model.fp2 = fp2;
  const auto freqs = std::vector<double>{10, 1e5, 5e6, 3e7};
  const auto result = run_ac(noninverting_amplifier(rg, rf, model), at_frequencies(freqs, {"out"}));
  for (std::size_t k = 0; k < freqs.size(); ++k) {
    const cplx a = single_pole_gain(gbw, aol, freqs[k]) / (1.0 + jw(freqs[k]) / (2 * kPi * fp2));
    CHECK_THAT(result.traces[0].values[k], IsClose(noninverting_gain(rg, rf, a), 1e-9));
  }
}

TEST_CASE("a unity-gain Sallen-Key low-pass follows w0^2/(s^2 + s w0/Q + w0^2)", "[ac]") {
  const SallenKey filter{10e3, 22e3, 47e-9, 4.7e-9};
  const auto freqs = std::vector<double>{1, 100, 700, 1e3, 5e3, 1e5};
  const auto result = run_ac(filter.circuit(), at_frequencies(freqs, {"out"}));
  check_trace(
      result, [&](double f) { return filter.h(f); }, 1e-9);
}

TEST_CASE("a Butterworth Sallen-Key is 3.0103 dB down at its corner", "[ac]") {
  const auto filter = butterworth_sallen_key(10e3, 10e-9);
  REQUIRE(filter.q() == Approx(1 / std::sqrt(2.0)).epsilon(1e-15));
  const double f0 = filter.w0() / (2 * kPi);
  const auto result = run_ac(filter.circuit(), at_frequencies({f0}, {"out"}));
  const double magnitude_squared = std::norm(result.traces[0].values[0]);
  CHECK_THAT(magnitude_squared, IsClose(0.5, 1e-9));  // Butterworth 1930: |H(j w0)|^2 = 1/2
  CHECK(10 * std::log10(magnitude_squared) == Approx(-3.0103).margin(5e-5));
  // On the Butterworth curve the phase at w0 is -90 degrees (same H(s)).
  CHECK(std::abs(result.traces[0].values[0].real()) < 1e-9);
}

TEST_CASE("a twin-T notch nulls its input at 1/(2 pi R C)", "[ac]") {
  const double r = 10e3, c = 10e-9;
  const double f0 = 1 / (2 * kPi * r * c);
  const auto freqs = std::vector<double>{1, 100, 0.5 * f0, f0, 2 * f0, 1e5};
  const auto result = run_ac(twin_t_notch(r, c), at_frequencies(freqs, {"out"}));
  const auto& h = result.traces[0].values;
  CHECK(std::abs(h[3]) < 1e-9 * std::abs(h[0]));
  for (std::size_t k = 0; k < freqs.size(); ++k)
    if (k != 3) CHECK_THAT(h[k], IsClose(twin_t_h(r, c, freqs[k]), 1e-9));
}

TEST_CASE("a series RLC carries V/R at its resonance 1/(2 pi sqrt(LC))", "[ac]") {
  const double r = 50, l = 10e-3, c = 100e-9;
  const double f0 = 1 / (2 * kPi * std::sqrt(l * c));
  const auto freqs = std::vector<double>{100, f0, 1e5};
  const auto result =
      run_ac(series_rlc(r, l, c), at_frequencies(freqs, {"i(L1)", "i(R1)", "i(C1)"}));
  CHECK_THAT(result.traces[0].values[1], IsClose(1.0 / r, 1e-9));
  for (std::size_t k = 0; k < freqs.size(); ++k)
    for (const auto& trace : result.traces)
      CHECK_THAT(trace.values[k], IsClose(series_rlc_current(r, l, c, freqs[k]), 1e-9));
}

TEST_CASE("branch currents flow from an element's first connection through it to its second",
          "[ac]") {
  CircuitBuilder b;
  b.vsrc("V1", "a", "gnd", 2.0);
  b.add(ElementKind::resistor, "R1", {"a", "gnd"}, 1e3);
  b.isrc("I1", "c", "gnd", 1e-3);  // draws 1 mA out of c
  b.add(ElementKind::resistor, "R2", {"c", "gnd"}, 1e3);
  b.add(ElementKind::vcvs, "E1", {"d", "gnd", "a", "gnd"}, 3.0);
  b.add(ElementKind::resistor, "R3", {"d", "gnd"}, 2e3);
  b.add(ElementKind::vccs, "G1", {"e", "gnd", "a", "gnd"}, 1e-3);
  b.add(ElementKind::resistor, "R4", {"e", "gnd"}, 1e3);
  b.opamp("U1", "a", "o", "o", single_pole(1e6, 1e9));  // follower
  b.add(ElementKind::resistor, "R5", {"o", "gnd"}, 1e3);
  const auto result = run_ac(b.circuit, at_frequencies({1.0}, {"i(V1)", "i(R1)", "i(I1)", "c",
                                                               "i(E1)", "i(G1)", "e", "i(U1)"}));
  auto value = [&](std::size_t k) { return result.traces[k].values[0]; };
  // Ohm's law and Kirchhoff's current law decide every sign (hand analysis).
  CHECK_THAT(value(0), IsClose(-2e-3, 1e-12));  // the source drives 2 mA out of its + terminal
  CHECK_THAT(value(1), IsClose(2e-3, 1e-12));
  CHECK_THAT(value(2), IsClose(1e-3, 1e-12));
  CHECK_THAT(value(3), IsClose(-1.0, 1e-12));
  CHECK_THAT(value(4), IsClose(-3e-3, 1e-12));  // 6 V across 2k, out of E1's + terminal
  CHECK_THAT(value(5), IsClose(2e-3, 1e-12));   // gm * 2 V from e through G1 to gnd
  CHECK_THAT(value(6), IsClose(-2.0, 1e-12));
  CHECK_THAT(value(7), IsClose(2.0 / (1 + 1e-9) * 1e-3, 1e-6));  // into the 1k load
}

TEST_CASE("a phase on a source rotates every response by that angle", "[ac]") {
  Circuit circuit = rc_lowpass(1e3, 1e-6);
  circuit.elements[0].ac_phase = 90;
  const auto result = run_ac(circuit, at_frequencies({100.0}, {"out"}));
  CHECK_THAT(result.traces[0].values[0], IsClose(cplx(0, 1) * rc_lowpass_h(1e3, 1e-6, 100), 1e-12));
}

TEST_CASE("a differential probe subtracts its second node", "[ac]") {
  const auto result = run_ac(rc_lowpass(1e3, 1e-6), at_frequencies({100.0}, {"in,out", "out, in"}));
  const cplx expected = 1.0 - rc_lowpass_h(1e3, 1e-6, 100);
  CHECK_THAT(result.traces[0].values[0], IsClose(expected, 1e-12));
  CHECK_THAT(result.traces[1].values[0], IsClose(-expected, 1e-12));
}

TEST_CASE("an op amp's rout and rin load the stage as resistors would", "[ac]") {
  // Follower, aol = 1e3, rout = 100, rin = 1k, 1k load; by hand:
  // v_int = A (vin - vo); vo = v_int RL/(RL + rout) + share of rin current,
  // so solve the two node equations symbolically (nodal analysis):
  //   (vo - v_int)/rout + vo/RL + (vo - vin)/rin = 0, v_int = A (vin - vo).
  const double a = 1e3, rout = 100, rin = 1e3, rl = 1e3;
  OpAmpModel model = single_pole(1e9, a);  // pole far above the test frequency
  model.rout = rout;
  model.rin = rin;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "o", "o", model);
  b.add(ElementKind::resistor, "RL", {"o", "gnd"}, rl);
  const auto result = run_ac(b.circuit, at_frequencies({1e-3}, {"o"}));
  const double vo = (a / rout + 1 / rin) / (1 / rout + 1 / rl + 1 / rin + a / rout);
  CHECK_THAT(result.traces[0].values[0], IsClose(vo, 1e-9));
}

TEST_CASE("the Eigen backend gives the same sweep as KLU", "[ac]") {
  AcOptions options;
  options.sweep = Sweep{SweepKind::log, 1, 1e6, 10, 0, {}};
  options.probes = {"out"};
  const SallenKey filter{10e3, 22e3, 47e-9, 4.7e-9};
  const auto klu = run_ac(filter.circuit(), options);
  options.solver = SolverKind::eigen;
  const auto eigen = run_ac(filter.circuit(), options);
  for (std::size_t k = 0; k < klu.frequencies.size(); ++k)
    CHECK_THAT(eigen.traces[0].values[k], IsClose(klu.traces[0].values[k], 1e-12));
}

TEST_CASE("a circuit with no node but gnd solves to zero on both backends", "[ac]") {
  auto options = at_frequencies({1.0, 2.0}, {"gnd"});
  options.solver = GENERATE(SolverKind::klu, SolverKind::eigen);
  const auto result = run_ac(Circuit{}, options);
  CHECK(result.traces[0].values == std::vector<cplx>{0.0, 0.0});
}

TEST_CASE("a log sweep lands on every decade and ends exactly at --to", "[ac]") {
  Sweep sweep{SweepKind::log, 1, 1e3, 10, 0, {}};
  const auto f = sweep.frequencies();
  REQUIRE(f.size() == 31);
  CHECK(f.front() == 1);
  CHECK_THAT(f[10], IsClose(10, 1e-15));
  CHECK_THAT(f[20], IsClose(100, 1e-14));
  CHECK(f.back() == 1e3);
  for (std::size_t k = 1; k < f.size(); ++k)
    CHECK_THAT(f[k] / f[k - 1], IsClose(std::pow(10, 0.1), 1e-13));
}

TEST_CASE("a log sweep includes --to even when it is off the grid", "[ac]") {
  Sweep sweep{SweepKind::log, 10, 150, 1, 0, {}};
  CHECK(sweep.frequencies() == std::vector<double>{10, 100, 150});
}

TEST_CASE("a linear sweep spaces its points evenly, both ends included", "[ac]") {
  Sweep sweep{SweepKind::linear, 100, 200, 1, 5, {}};
  CHECK(sweep.frequencies() == std::vector<double>{100, 125, 150, 175, 200});
}

TEST_CASE("sweep validation names the option, its value and the rule", "[ac]") {
  CHECK(Sweep{SweepKind::log, 20e3, 10e3, 10, 0, {}}.validate() ==
        "--from 20k must be below --to 10k");
  CHECK(Sweep{SweepKind::log, 0, 10e3, 10, 0, {}}.validate() ==
        "--from 0 must be a finite frequency above 0 Hz");
  CHECK(Sweep{SweepKind::log, 1, INFINITY, 10, 0, {}}.validate() ==
        "--to inf must be a finite frequency above 0 Hz");
  CHECK(Sweep{SweepKind::log, 1, 10, 0, 0, {}}.validate() == "--per-decade 0 must be at least 1");
  CHECK(Sweep{SweepKind::linear, 1, 10, 1, 1, {}}.validate() == "--points 1 must be at least 2");
  CHECK(Sweep{SweepKind::list, 1, 10, 1, 1, {}}.validate() ==
        "--at must list at least one frequency");
  CHECK(Sweep{SweepKind::list, 1, 10, 1, 1, {1e3, -2.2e-3}}.validate() ==
        "--at -2.2m: every frequency must be finite and above 0 Hz");
  CHECK(Sweep{}.validate().empty());
}

TEST_CASE("run_ac rejects a bad sweep with InputError", "[ac]") {
  AcOptions options;
  options.sweep = Sweep{SweepKind::log, 20e3, 10e3, 10, 0, {}};
  CHECK_THROWS_MATCHES(run_ac(rc_lowpass(1, 1), options), InputError,
                       Catch::Message("error: --from 20k must be below --to 10k\n"));
}

TEST_CASE("run_ac rejects an unknown probe with a hint, before any solve", "[ac]") {
  CHECK_THROWS_MATCHES(
      run_ac(rc_lowpass(1, 1), at_frequencies({1.0}, {"oit"})), InputError,
      Catch::Message("error: unknown node 'oit' in probe 'oit'\nhint: did you mean 'out'?\n"));
  CHECK_THROWS_MATCHES(
      run_ac(rc_lowpass(1, 1), at_frequencies({1.0}, {"otu"})), InputError,
      Catch::Message("error: unknown node 'otu' in probe 'otu'\nhint: did you mean 'out'?\n"));
  CHECK_THROWS_MATCHES(
      run_ac(rc_lowpass(1, 1), at_frequencies({1.0}, {"i(R2)"})), InputError,
      Catch::Message("error: unknown element 'R2' in probe 'i(R2)'\nhint: did you mean 'R1'?\n"));
  CHECK_THROWS_MATCHES(run_ac(rc_lowpass(1, 1), at_frequencies({1.0}, {"out,zzzzzz"})), InputError,
                       Catch::Message("error: unknown node 'zzzzzz' in probe 'out,zzzzzz'\n"));
}

TEST_CASE("a numerically singular circuit names the unknown and the frequency", "[ac]") {
  // A vccs wired as -1 mS cancels R1's +1 mS at node a: no unique voltage there.
  CircuitBuilder b;
  b.isrc("I1", "a", "gnd", 1e-3);
  b.add(ElementKind::resistor, "R1", {"a", "gnd"}, 1e3);
  b.add(ElementKind::vccs, "G1", {"a", "gnd", "a", "gnd"}, -1e-3);
  CHECK_THROWS_MATCHES(
      run_ac(b.circuit, at_frequencies({1e3}, {"a"})), SolveError,
      Catch::Message("error: circuit cannot be solved at 1kHz: the equations do not "
                     "determine node a (singular matrix)\n"));
}

TEST_CASE("hierarchical node and element names are probed as plain names", "[ac]") {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "F1.R1", {"in", "F1.x"}, 1e3);
  b.add(ElementKind::resistor, "F1.R2", {"F1.x", "gnd"}, 3e3);
  const auto result = run_ac(b.circuit, at_frequencies({1.0}, {"F1.x", "i(F1.R1)"}));
  CHECK_THAT(result.traces[0].values[0], IsClose(0.75, 1e-12));  // divider 3k/(1k + 3k)
  CHECK_THAT(result.traces[1].values[0], IsClose(0.25e-3, 1e-12));
}

TEST_CASE("a probe's functional, solved transposed, gives the probe's value", "[ac]") {
  // value = c^T x with A x = b equals (A^-T c)^T b: the adjoint identity the
  // noise analysis rests on (any linear algebra text).
  const SallenKey filter{10e3, 22e3, 47e-9, 4.7e-9};
  const Circuit circuit = filter.circuit();
  const MnaSystem mna(circuit);
  const cplx s = jw(700);
  std::vector<cplx> values(static_cast<std::size_t>(mna.pattern().nonzeros()));
  std::vector<cplx> b(static_cast<std::size_t>(mna.size())), adjoint(b.size());
  mna.assemble(s, values.data());
  mna.excitation(b.data());
  auto lu = make_sparse_lu();
  lu->analyse(mna.pattern());
  REQUIRE(lu->factor(values.data()) == FactorStatus::ok);
  for (const char* text : {"out", "i(C1)", "a,b"}) {
    INFO(text);
    const Probe probe = resolve_probe(text, circuit);
    std::vector<ProbeTerm> terms;
    const cplx constant = probe_functional(probe, mna, s, terms);
    std::fill(adjoint.begin(), adjoint.end(), cplx{});
    for (const auto& t : terms) adjoint[static_cast<std::size_t>(t.unknown)] += t.coefficient;
    lu->solve_transposed(adjoint.data());
    cplx through_adjoint = constant;
    for (std::size_t k = 0; k < b.size(); ++k) through_adjoint += adjoint[k] * b[k];
    std::vector<cplx> x = b;
    lu->solve(x.data());
    CHECK_THAT(through_adjoint, IsClose(probe_value(probe, mna, s, x.data(), terms), 1e-12));
  }
  CHECK_THAT(run_ac(circuit, at_frequencies({700.0}, {"out"})).traces[0].values[0],
             IsClose(filter.h(700), 1e-9));
}
