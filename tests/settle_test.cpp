// The step response against closed forms; each check names its source.

#include "tacet/analysis/settle.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <functional>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/common/errors.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

SettleOptions probing(std::vector<std::string> probes, std::string input = "") {
  SettleOptions o;
  o.probes = std::move(probes);
  o.input = std::move(input);
  return o;
}

// The largest |actual - expected(t)| over the printed points, relative to |scale|.
double worst_error(const SettleResult& r, std::size_t trace, const std::function<double(double)>& expected,
                   double scale) {
  double worst = 0;
  for (std::size_t i = 0; i < r.times.size(); ++i)
    worst = std::max(worst, std::abs(r.traces[trace].values[i] - expected(r.times[i])) / std::abs(scale));
  return worst;
}

// The last time |v(t) - final| = band |final| of a closed-form response whose
// deviation stays below `envelope_end`'s bound after it: scanned back from
// there on a fine grid, then bisected (to 1e-15 s relative).
double last_band_crossing(const std::function<double(double)>& v, double final, double band,
                          double envelope_end) {
  auto outside = [&](double t) { return std::abs(v(t) - final) > band * std::abs(final); };
  const int n = 200000;
  double inside = envelope_end, out = envelope_end;
  for (int k = n; k >= 0; --k) {
    const double t = envelope_end * k / n;
    if (outside(t)) {
      out = t;
      inside = envelope_end * (k + 1) / n;
      break;
    }
  }
  for (int i = 0; i < 200 && inside - out > 1e-15 * inside; ++i) {
    const double mid = 0.5 * (inside + out);
    (outside(mid) ? out : inside) = mid;
  }
  return 0.5 * (inside + out);
}

// Standard underdamped second-order step response K (1 - e^(-zeta w0 t) (cos wd t +
// zeta / sqrt(1 - zeta^2) sin wd t)), wd = w0 sqrt(1 - zeta^2) (e.g. Ogata, Modern
// Control Engineering, section 5-3), and its envelope's bound on |v - K|:
// K e^(-zeta w0 t) / sqrt(1 - zeta^2).
struct SecondOrder {
  double k, w0, zeta;
  double wd() const { return w0 * std::sqrt(1 - zeta * zeta); }
  double operator()(double t) const {
    const double r = std::sqrt(1 - zeta * zeta);
    return k * (1 - std::exp(-zeta * w0 * t) * (std::cos(wd() * t) + zeta / r * std::sin(wd() * t)));
  }
  double overshoot() const { return std::exp(-kPi * zeta / std::sqrt(1 - zeta * zeta)); }
  double envelope_time(double band) const {
    return std::log(1 / (band * std::sqrt(1 - zeta * zeta))) / (zeta * w0);
  }
};

}  // namespace

TEST_CASE("an RC low-pass steps as 1 - exp(-t/RC) at every printed point", "[settle]") {
  // First-order RC network, closed form v(t) = 1 - exp(-t / RC) for a unit step
  // (any circuit theory text: the capacitor charging through R).
  const double r = 1e3, c = 1e-9, tau = r * c;
  const SettleResult result = run_settle(rc_lowpass(r, c), probing({"out"}));
  REQUIRE(result.traces.size() == 1);
  const SettleTrace& t = result.traces[0];
  CHECK(worst_error(result, 0, [&](double time) { return 1 - std::exp(-time / tau); }, 1.0) < 1e-7);
  CHECK_THAT(t.final, IsClose(1.0, 1e-12));
  CHECK(t.overshoot == 0.0);
  // Settled to 0.01 % when exp(-t / RC) = 1e-4: t = RC ln(1e4).
  REQUIRE(t.settling_time);
  CHECK_THAT(*t.settling_time, IsClose(tau * std::log(1e4), 1e-6));
  CHECK(result.settled);
  CHECK_THAT(result.to, IsClose(2 * tau * std::log(1e4), 1e-6));  // default: twice the settling
}

TEST_CASE("the settling time follows the band: 1 % of an RC is RC ln 100", "[settle]") {
  // Same closed form as above, band 1 %.
  const double tau = 10e3 * 47e-9;
  SettleOptions o = probing({"out"});
  o.band = 0.01;
  o.to = 20 * tau;
  const SettleResult result = run_settle(rc_lowpass(10e3, 47e-9), o);
  CHECK_THAT(*result.traces[0].settling_time, IsClose(tau * std::log(100.0), 1e-6));
  CHECK_THAT(result.to, IsClose(20 * tau, 1e-15));
  CHECK_THAT(result.times.back(), IsClose(20 * tau, 1e-15));
  CHECK(worst_error(result, 0, [&](double time) { return 1 - std::exp(-time / tau); }, 1.0) < 1e-7);
}

TEST_CASE("a current step into R parallel C rises to R volts per ampere", "[settle]") {
  // Norton form of the RC network: v(t) = I R (1 - exp(-t / RC)), closed form.
  const double r = 2e3, c = 10e-9;
  CircuitBuilder b;
  b.isrc("Iin", "gnd", "out", 1.0);  // drawn out of gnd, into out
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, r);
  b.add(ElementKind::capacitor, "C1", {"out", "gnd"}, c);
  const SettleResult result = run_settle(b.circuit, probing({"out", "i(R1)"}));
  CHECK(std::string(result.input_unit) == "A");
  CHECK_THAT(result.traces[0].final, IsClose(r, 1e-12));
  CHECK(worst_error(result, 0, [&](double t) { return r * (1 - std::exp(-t / (r * c))); }, r) < 1e-7);
  CHECK(worst_error(result, 1, [&](double t) { return 1 - std::exp(-t / (r * c)); }, 1.0) < 1e-7);
  CHECK(std::string(result.traces[1].unit) == "A");
}

TEST_CASE("a series RLC overshoots by exp(-pi zeta / sqrt(1 - zeta^2)) and settles inside its "
          "envelope", "[settle]") {
  // v(C) of a series RLC: 1 / (L C s^2 + R C s + 1), w0 = 1/sqrt(LC),
  // zeta = (R/2) sqrt(C/L); the underdamped step response and its overshoot
  // (Ogata, section 5-3). Here zeta = 0.1581.
  const double r = 100, l = 10e-3, c = 100e-9;
  const SecondOrder expected{1.0, 1 / std::sqrt(l * c), r / 2 * std::sqrt(c / l)};
  const SettleResult result = run_settle(series_rlc(r, l, c), probing({"b"}));
  const SettleTrace& t = result.traces[0];
  CHECK(worst_error(result, 0, expected, 1.0) < 1e-7);
  REQUIRE(t.overshoot);
  CHECK_THAT(*t.overshoot, IsClose(expected.overshoot(), 1e-7));
  CHECK_THAT(t.peak, IsClose(1 + expected.overshoot(), 1e-7));
  const double settling =
      last_band_crossing(expected, 1.0, 1e-4, expected.envelope_time(1e-4));
  REQUIRE(t.settling_time);
  CHECK_THAT(*t.settling_time, IsClose(settling, 1e-6));
}

TEST_CASE("a two-pole op-amp follower rings as its closed-loop quadratic", "[settle]") {
  // Follower: H = A / (1 + A), A = aol / ((1 + s/wp)(1 + s/wp2)), so
  // H = aol / (s^2/(wp wp2) + s (1/wp + 1/wp2) + 1 + aol): w0^2 = wp wp2 (1 + aol),
  // 2 zeta w0 = wp + wp2, K = aol / (1 + aol) (feedback theory); the step response
  // is the standard second-order one (Ogata, section 5-3). Without the op amp's
  // second pole as a state there would be no overshoot at all.
  OpAmpModel m = single_pole(10e6, 1e5);
  m.fp2 = 8e6;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "out", "out", m);
  b.add(ElementKind::resistor, "RL", {"out", "gnd"}, 10e3);
  const double wp = 2 * kPi * m.gbw / m.aol, wp2 = 2 * kPi * m.fp2;
  const double w0 = std::sqrt(wp * wp2 * (1 + m.aol));
  const SecondOrder expected{m.aol / (1 + m.aol), w0, (wp + wp2) / (2 * w0)};
  const SettleResult result = run_settle(b.circuit, probing({"out"}));
  const SettleTrace& t = result.traces[0];
  CHECK_THAT(t.final, IsClose(expected.k, 1e-12));
  CHECK(worst_error(result, 0, expected, expected.k) < 1e-7);
  REQUIRE(t.overshoot);
  CHECK(*t.overshoot > 0.1);
  CHECK_THAT(*t.overshoot, IsClose(expected.overshoot(), 1e-7));
  CHECK_THAT(*t.settling_time,
             IsClose(last_band_crossing(expected, expected.k, 1e-4, expected.envelope_time(1e-4)),
                     1e-6));
  CHECK(result.unknowns == 5);  // in, out, two branch currents and the second pole's state
}

TEST_CASE("a high-pass has no final value: no overshoot, no settling time, its peak at once",
          "[settle]") {
  // RC high-pass: v(t) = exp(-t / RC), closed form; v(0+) = 1, final 0.
  const double tau = 1e3 * 1e-6;
  SettleOptions o = probing({"out"});
  o.to = 10 * tau;
  const SettleResult result = run_settle(rc_highpass(1e3, 1e-6), o);
  const SettleTrace& t = result.traces[0];
  CHECK(!t.overshoot);
  CHECK(!t.settling_time);
  CHECK_THAT(t.peak, IsClose(1.0, 1e-6));
  CHECK(worst_error(result, 0, [&](double time) { return std::exp(-time / tau); }, 1.0) < 1e-6);
}

TEST_CASE("an inverting stage's overshoot is measured towards its negative final value",
          "[settle]") {
  // Inverting RLC: a vcvs of gain -2 after the series RLC: v = -2 x the
  // second-order response (Ogata, section 5-3), overshoot the same fraction.
  const double r = 100, l = 10e-3, c = 100e-9;
  Circuit circuit = series_rlc(r, l, c);
  CircuitBuilder b;
  b.circuit = circuit;
  b.add(ElementKind::vcvs, "E1", {"inv", "gnd", "b", "gnd"}, -2.0);
  b.add(ElementKind::resistor, "RL", {"inv", "gnd"}, 1e3);
  const SecondOrder expected{-2.0, 1 / std::sqrt(l * c), r / 2 * std::sqrt(c / l)};
  const SettleResult result = run_settle(b.circuit, probing({"inv"}));
  const SettleTrace& t = result.traces[0];
  CHECK_THAT(t.final, IsClose(-2.0, 1e-12));
  CHECK_THAT(*t.overshoot, IsClose(expected.overshoot(), 1e-7));
  CHECK(t.peak < -2.0);
}

TEST_CASE("settle names the input source and the probe it cannot use", "[settle]") {
  const Circuit circuit = rc_lowpass(1e3, 1e-9);
  auto message = [&](const SettleOptions& o) {
    try {
      run_settle(circuit, o);
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  CHECK(message(probing({"out"}, "R1")) ==
        "error: --input 'R1' is a res, not a source\nhint: sources: Vin\n");
  CHECK(message(probing({"out"}, "Vn")) ==
        "error: unknown source 'Vn' in --input\nhint: did you mean 'Vin'?\n");
  CHECK(message(probing({"otu"})) ==
        "error: unknown node 'otu' in probe 'otu'\nhint: did you mean 'out'?\n");
  CHECK(message(probing({"i(C1)"})).rfind(
            "error: settle: probe 'i(C1)' is a capacitor's current", 0) == 0);
  CHECK(message(probing({"z(out)"})).rfind("error: settle: probe 'z(out)' is an impedance", 0) ==
        0);
  SettleOptions band = probing({"out"});
  band.band = 0;
  CHECK(message(band) ==
        "error: --band must be a positive fraction, such as 0.01% or 1e-4\n");
  band.band = -0.01;
  CHECK(message(band) ==
        "error: --band must be a positive fraction, such as 0.01% or 1e-4\n");
  SettleOptions to = probing({"out"});
  to.to = 0.0;
  CHECK(message(to) == "error: --to must be a positive time, such as 10us\n");
}

TEST_CASE("settle refuses an unstable circuit without --to", "[settle]") {
  // Positive feedback around a vcvs of gain 2 through an RC: one pole in the
  // right half-plane at s = (gain - 1) / RC (nodal analysis).
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "x"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"x", "gnd"}, 1e-9);
  b.add(ElementKind::resistor, "R2", {"x", "out"}, 1e3);
  b.add(ElementKind::vcvs, "E1", {"out", "gnd", "x", "gnd"}, 3.0);
  CHECK_THROWS_AS(run_settle(b.circuit, probing({"out"})), SolveError);
}

TEST_CASE("settle steps the only source with an ac value, and asks when there are several",
          "[settle]") {
  // Two RC low-passes from two sources; the second source has no ac value, so
  // the first steps by default (same closed form as above, RC = 1 us).
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "out"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"out", "gnd"}, 1e-9);
  b.vsrc("Vref", "ref", "gnd", 0.0);
  b.add(ElementKind::resistor, "R2", {"ref", "gnd"}, 1e3);
  const SettleResult r = run_settle(b.circuit, probing({"out"}));
  CHECK(r.input == "Vin");
  CHECK_THAT(*r.traces[0].settling_time, IsClose(1e-6 * std::log(1e4), 1e-6));
  b.circuit.elements[3].ac_magnitude = 1.0;  // now Vref has an ac value too
  try {
    run_settle(b.circuit, probing({"out"}));
    FAIL("no error for two candidate sources");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()) ==
          "error: settle: which source steps? the circuit has 2 sources with an ac value\n"
          "hint: name one with --input; sources: Vin Vref\n");
  }
}

TEST_CASE("with --to an unstable circuit's window is printed without a settling time",
          "[settle]") {
  // The positive-feedback RC of the test above: it grows as exp(t / RC).
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "x"}, 1e3);
  b.add(ElementKind::capacitor, "C1", {"x", "gnd"}, 1e-9);
  b.add(ElementKind::resistor, "R2", {"x", "out"}, 1e3);
  b.add(ElementKind::vcvs, "E1", {"out", "gnd", "x", "gnd"}, 3.0);
  SettleOptions o = probing({"x"});
  o.to = 5e-6;
  const SettleResult r = run_settle(b.circuit, o);
  CHECK_FALSE(r.settled);
  CHECK_FALSE(r.traces[0].settling_time);
  // Nodal analysis: C x' = (1 + x) / R from x(0) = 0, so x = exp(t / RC) - 1.
  CHECK_THAT(r.traces[0].values.back(), IsClose(std::exp(5.0) - 1, 1e-6));
}
