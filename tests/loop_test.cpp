// Loop gain (Bode's return ratio of each op amp's gain source) against closed
// forms and against an injection test bench built in tacet itself; each check
// names its source.

#include "tacet/analysis/loop.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/analysis/ac.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/solve/search.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

OpAmpModel two_pole(double gbw, double aol, double fp2, double rout = 0) {
  OpAmpModel m = single_pole(gbw, aol);
  m.fp2 = fp2;
  m.rout = rout;
  return m;
}

cplx gain_of(const OpAmpModel& m, double f) {
  return m.aol / ((1.0 + jw(f) * m.aol / (2 * kPi * m.gbw)) *
                  (m.fp2 > 0 ? 1.0 + jw(f) / (2 * kPi * m.fp2) : cplx(1.0)));
}

// Non-inverting stage: in -> +, Rf out -> fb, Rg fb -> gnd.
Circuit noninverting(double rf, double rg, const OpAmpModel& m) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "fb", "out", m);
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, rf);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, rg);
  return b.circuit;
}

// Follower whose output (through the model's rout) drives a capacitor.
Circuit follower_into(double c, const OpAmpModel& m) {
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "out", "out", m);
  b.add(ElementKind::capacitor, "CL", {"out", "gnd"}, c);
  return b.circuit;
}

LoopOptions at_frequencies(std::vector<double> f) {
  LoopOptions options;
  Sweep sweep;
  sweep.kind = SweepKind::list;
  sweep.at = std::move(f);
  options.sweep = sweep;
  return options;
}

}  // namespace

TEST_CASE("the loop gain of a non-inverting stage is A(s) times the feedback fraction",
          "[loop]") {
  // Bode 1945: the return ratio of the gain source is A(s) beta, beta = Rg/(Rf + Rg).
  const OpAmpModel m = two_pole(10e6, 2e5, 30e6);
  const Circuit circuit = noninverting(9e3, 1e3, m);
  const std::vector<double> f{1, 100, 1e4, 1e6, 1e7, 1e8};
  const LoopResult r = run_loop(circuit, at_frequencies(f));
  REQUIRE(r.loops.size() == 1);
  CHECK(r.loops[0].opamp == "U1");
  for (std::size_t k = 0; k < f.size(); ++k)
    CHECK_THAT(r.loops[0].t[k], IsClose(gain_of(m, f[k]) * 0.1, 1e-9));
}

TEST_CASE("the loop gain of a follower into a capacitor is A(s) ZL / (ZL + rout)", "[loop]") {
  // Bode 1945 return ratio; the gain source sees the divider rout, ZL = 1/(sC).
  const OpAmpModel m = two_pole(5e6, 1e6, 0, 50);
  const Circuit circuit = follower_into(10e-9, m);
  const std::vector<double> f{10, 1e4, 1e5, 3e5, 1e6, 1e7};
  const LoopResult r = run_loop(circuit, at_frequencies(f));
  for (std::size_t k = 0; k < f.size(); ++k) {
    const cplx zl = 1.0 / (jw(f[k]) * 10e-9);
    CHECK_THAT(r.loops[0].t[k], IsClose(gain_of(m, f[k]) * zl / (zl + 50.0), 1e-9));
  }
}

TEST_CASE("the phase margin of a two-pole loop matches its closed form", "[loop]") {
  // T = T0 / ((1 + s/w1)(1 + s/w2)): |T| = 1 where x = w^2 solves
  // x^2/(w1 w2)^2 + x (1/w1^2 + 1/w2^2) + 1 - T0^2 = 0, and
  // PM = 180 - atan(w/w1) - atan(w/w2) degrees (textbook closed form).
  const OpAmpModel m = two_pole(10e6, 1e5, 8e6);
  const double beta = 0.5;
  const LoopResult r = run_loop(noninverting(1e3, 1e3, m), LoopOptions{});
  const double w1 = 2 * kPi * m.gbw / m.aol, w2 = 2 * kPi * m.fp2, t0 = m.aol * beta;
  const double a = 1 / (w1 * w1 * w2 * w2), b = 1 / (w1 * w1) + 1 / (w2 * w2), c = 1 - t0 * t0;
  const double w = std::sqrt((-b + std::sqrt(b * b - 4 * a * c)) / (2 * a));
  const double pm = 180 - (std::atan(w / w1) + std::atan(w / w2)) * 180 / kPi;
  REQUIRE(r.loops[0].crossovers.size() == 1);
  CHECK_THAT(r.loops[0].crossovers[0].f, IsClose(w / (2 * kPi), 1e-9));
  REQUIRE(r.loops[0].phase_margin);
  CHECK_THAT(*r.loops[0].phase_margin, IsClose(pm, 1e-9));
  // Two poles never reach -180 degrees: no phase crossover, no gain margin.
  CHECK(r.loops[0].phase_crossovers.empty());
  CHECK_FALSE(r.loops[0].gain_margin);
  // Low-frequency T is real and positive (aol times the feedback fraction).
  CHECK(r.loops[0].t.front().real() > 0);
  const double f0 = r.frequencies.front();
  CHECK_THAT(r.loops[0].deg.front(),
             IsClose(-(std::atan(2 * kPi * f0 / w1) + std::atan(2 * kPi * f0 / w2)) * 180 / kPi,
                     1e-9));
}

TEST_CASE("the gain margin of a three-pole loop is taken where the phase reaches -180",
          "[loop]") {
  // Follower whose feedback passes an RC low-pass through a unity buffer:
  // T = A(s) / (1 + s R C). The phase sum of three real poles is 180 degrees
  // where tan of the sum is zero: w^2 = w1 w2 + w1 w3 + w2 w3 (closed form).
  const OpAmpModel m = two_pole(1e6, 1e5, 3e6);
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "fb", "out", m);
  b.add(ElementKind::resistor, "R3", {"out", "n"}, 1e3);
  b.add(ElementKind::capacitor, "C3", {"n", "gnd"}, 1e-9 / (2 * kPi));  // 1 MHz pole
  b.add(ElementKind::vcvs, "E1", {"fb", "gnd", "n", "gnd"}, 1.0);
  const LoopResult r = run_loop(b.circuit, LoopOptions{});
  const double w1 = 2 * kPi * 10, w2 = 2 * kPi * 3e6, w3 = 2 * kPi * 1e6;
  const double w = std::sqrt(w1 * w2 + w1 * w3 + w2 * w3);
  const double mag = 1e5 / std::sqrt((1 + std::pow(w / w1, 2)) * (1 + std::pow(w / w2, 2)) *
                                     (1 + std::pow(w / w3, 2)));
  REQUIRE(r.loops[0].phase_crossovers.size() == 1);
  CHECK_THAT(r.loops[0].phase_crossovers[0].f, IsClose(w / (2 * kPi), 1e-9));
  REQUIRE(r.loops[0].gain_margin);
  CHECK_THAT(*r.loops[0].gain_margin, IsClose(-20 * std::log10(mag), 1e-9));
  // |T| is about 0.25 there: a positive gain margin of some 12 dB.
  CHECK(*r.loops[0].gain_margin > 0);
}

TEST_CASE("the loop gain agrees with a double-injection test bench", "[loop]") {
  // Middlebrook's double injection (1975), one of the methods compared by Neag
  // et al., IEEE TCAS-I 62(3), 2015: with a voltage injection Tv = -v(a)/v(b)
  // and a current injection Ti = i(backward)/i(forward) at one break point,
  // T = (Tv Ti - 1) / (Tv + Ti + 2). Exact here: the op amp's input draws no
  // current, so the loop is unilateral at the break. Break at the output pin
  // of a follower with rout = 200 ohm into 2 nF.
  const OpAmpModel m = two_pole(2e6, 3e5, 10e6, 200);
  const std::vector<double> f{100, 1e4, 1e5, 4e5, 1e6, 3e6};
  auto bench = [&](bool voltage) {
    CircuitBuilder b;
    b.vsrc("Vin", "in", "gnd", 0.0);
    b.opamp("U1", "in", "b", "a", m);
    b.vsrc("Vinj", "b", "a", voltage ? 1.0 : 0.0);  // v(b) - v(a) = Vinj
    b.add(ElementKind::capacitor, "CL", {"b", "gnd"}, 2e-9);
    if (!voltage) b.isrc("Iinj", "gnd", "a", 1.0);   // into node a
    AcOptions options;
    options.sweep.kind = SweepKind::list;
    options.sweep.at = f;
    options.probes = {"a", "b", "i(Vinj)"};
    return run_ac(b.circuit, options);
  };
  const AcResult v = bench(true), i = bench(false);
  CircuitBuilder closed;
  closed.vsrc("Vin", "in", "gnd", 1.0);
  closed.opamp("U1", "in", "a", "a", m);
  closed.add(ElementKind::capacitor, "CL", {"a", "gnd"}, 2e-9);
  const LoopResult r = run_loop(closed.circuit, at_frequencies(f));
  for (std::size_t k = 0; k < f.size(); ++k) {
    const cplx tv = -v.traces[0].values[k] / v.traces[1].values[k];
    // i(Vinj) flows from b through Vinj to a, i.e. it is minus the forward
    // current a -> b; the rest of the injected unit goes back into the op amp.
    const cplx forward = -i.traces[2].values[k];
    const cplx ti = (1.0 - forward) / forward;
    const cplx t = (tv * ti - 1.0) / (tv + ti + 2.0);
    CHECK_THAT(r.loops[0].t[k], IsClose(t, 1e-9));
  }
}

TEST_CASE("each op amp of two cascaded stages gets its own return ratio", "[loop]") {
  // Two independent non-inverting stages in cascade: each loop is A_k beta_k
  // (Bode 1945), unaffected by the other stage.
  const OpAmpModel m1 = two_pole(1e6, 1e5, 0), m2 = two_pole(4e6, 2e5, 20e6);
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "fb1", "mid", m1);
  b.add(ElementKind::resistor, "R1", {"mid", "fb1"}, 3e3);
  b.add(ElementKind::resistor, "R2", {"fb1", "gnd"}, 1e3);
  b.opamp("U2", "mid", "fb2", "out", m2);
  b.add(ElementKind::resistor, "R3", {"out", "fb2"}, 1e3);
  b.add(ElementKind::resistor, "R4", {"fb2", "gnd"}, 1e3);
  const std::vector<double> f{1, 1e3, 1e5, 1e6};
  LoopOptions options = at_frequencies(f);
  options.opamps = {"U2", "U1"};
  const LoopResult r = run_loop(b.circuit, options);
  REQUIRE(r.loops.size() == 2);
  CHECK(r.loops[0].opamp == "U2");
  for (std::size_t k = 0; k < f.size(); ++k) {
    CHECK_THAT(r.loops[0].t[k], IsClose(gain_of(m2, f[k]) * 0.5, 1e-9));
    CHECK_THAT(r.loops[1].t[k], IsClose(gain_of(m1, f[k]) * 0.25, 1e-9));
  }
}

TEST_CASE("an --opamp that is not an op amp is rejected with the nearest op amp as a hint",
          "[loop]") {
  const Circuit circuit = noninverting(1e3, 1e3, two_pole(1e6, 1e5, 0));
  LoopOptions options;
  options.opamps = {"U2"};
  CHECK_THROWS_WITH(run_loop(circuit, options),
                    "error: --opamp 'U2' is not an op amp of the circuit\nhint: did you mean 'U1'?\n");
  options.opamps = {"Rf"};
  CHECK_THROWS_WITH(run_loop(circuit, options),
                    Catch::Contains("'Rf' is not an op amp of the circuit (it is a res)"));
  CHECK_THROWS_AS(run_loop(rc_lowpass(1e3, 1e-9), LoopOptions{}), InputError);
}

TEST_CASE("the default loop sweep spans the dominant pole to well above gbw and fp2", "[loop]") {
  const Sweep s = default_loop_sweep(noninverting(1e3, 1e3, two_pole(10e6, 1e5, 30e6)));
  CHECK_THAT(s.from, IsClose(10.0, 1e-12));    // a decade below gbw/aol = 100 Hz
  CHECK_THAT(s.to, IsClose(1e10, 1e-12));      // two decades above the 30 MHz pole's decade
}

TEST_CASE("a phase crossover is where the lag reaches 180 + 360k degrees, not a lead of 180",
          "[loop]") {
  // brief-2 section 12: a phase crossover is where the unwrapped phase
  // reaches -180 - 360k, k = 0, 1, 2, ... T = 10 (jf)(1 + jf/100)^2 / (1 + jf/1e6)^3
  // starts at +90 degrees and rises through +180 at f = 100 Hz
  // (90 + 2 atan(1) = 180), then falls back through +180: a lead, never a lag
  // of 180 degrees, so it has no phase crossover and no gain margin.
  auto lead = [](double f) {
    const cplx jf(0, f);
    return 10.0 * jf * (1.0 + jf / 100.0) * (1.0 + jf / 100.0) / std::pow(1.0 + jf / 1e6, 3);
  };
  LoopTrace trace;
  find_loop_margins(lead, log_grid(1e-3, 1e9), trace);
  CHECK(trace.phase_crossovers.empty());
  CHECK_FALSE(trace.gain_margin);
  // Three real poles at 1 Hz: the lag reaches 180 degrees where atan f = 60
  // degrees, f = sqrt 3, and |T| = 1000 / (1 + 3)^(3/2) = 125 there (closed form).
  auto lag = [](double f) { return 1000.0 / std::pow(1.0 + cplx(0, f), 3); };
  LoopTrace three;
  find_loop_margins(lag, log_grid(1e-3, 1e3), three);
  REQUIRE(three.phase_crossovers.size() == 1);
  CHECK_THAT(three.phase_crossovers[0].f, IsClose(std::sqrt(3.0), 1e-9));
  REQUIRE(three.gain_margin);
  CHECK_THAT(*three.gain_margin, IsClose(-20 * std::log10(125.0), 1e-9));
}
