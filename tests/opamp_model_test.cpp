// The fuller op-amp model (cmrr, fcmrr, cin_diff, cin_cm, ib_max, vos_drift,
// ib_double, iout_max) in every analysis that reads it: AC, noise, loop gain,
// poles, bias and headroom. Each check names its closed form.

#include <catch2/catch.hpp>

#include <cmath>
#include <complex>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/headroom.hpp"
#include "tacet/analysis/loop.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/analysis/poles.hpp"
#include "tacet/solve/probe.hpp"
#include "tacet/solve/response.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

std::complex<double> response_at(const Circuit& circuit, const std::string& probe, double f) {
  FrequencyResponse response(circuit);
  return response.at(resolve_probe(probe, circuit), f);
}

// Difference amplifier, matched: R1 = R3 = r, R2 = R4 = k r.
//   V1 -> R1 -> m (the - input), R2 from out to m;
//   V2 -> R3 -> p (the + input), R4 from p to gnd.
Circuit difference_amplifier(double r, double k, double v1, double v2, const OpAmpModel& model) {
  CircuitBuilder b;
  b.vsrc("V1", "in1", "gnd", v1);
  b.vsrc("V2", "in2", "gnd", v2);
  b.add(ElementKind::resistor, "R1", {"in1", "m"}, r);
  b.add(ElementKind::resistor, "R2", {"out", "m"}, k * r);
  b.add(ElementKind::resistor, "R3", {"in2", "p"}, r);
  b.add(ElementKind::resistor, "R4", {"p", "gnd"}, k * r);
  b.opamp("U1", "p", "m", "out", model);
  return b.circuit;
}

// The difference amplifier by hand. Nodal equations, with the op amp's
// gain source seeing d = (1 + e) v+ - (1 - e) v-, e(s) = (1 + j f/fcmrr)/(2 CMRR0)
// (the brief's model: v+ + ((v+ + v-)/2)/CMRR at the + input):
//   v+ = v2 k/(1 + k)                    (divider R3, R4)
//   v- = (k v1 + vo)/(1 + k)             (KCL at m: (v1 - v-)/r + (vo - v-)/(k r) = 0)
//   vo = A d
// so vo (1 + k + A (1 - e)) = A k ((1 + e) v2 - (1 - e) v1), i.e.
//   vo = A k ((1 + e) v2 - (1 - e) v1) / (1 + k + A (1 - e)).
// As A -> oo the common-mode gain (v1 = v2 = 1) is 2 k e/(1 - e), the
// differential gain (v2 = -v1 = 1/2) k/(1 - e): their ratio is 1/(2 e) = CMRR(f),
// the op amp's own (matched resistors add no common-mode error of their own).
std::complex<double> difference_output(double k, double v1, double v2, const OpAmpModel& m,
                                       double f) {
  const std::complex<double> s(0, 2 * kPi * f);
  const std::complex<double> a = opamp_gain(m, s);
  std::complex<double> e = 1 / (2 * m.cmrr);
  if (m.fcmrr > 0) e *= 1.0 + std::complex<double>(0, f / m.fcmrr);
  return a * k * ((1.0 + e) * v2 - (1.0 - e) * v1) / (1 + k + a * (1.0 - e));
}

}  // namespace

TEST_CASE("a matched difference amplifier's common-mode gain follows the op amp's CMRR",
          "[opamp][ac]") {
  auto model = single_pole(10e6, 1e6);
  model.cmrr = std::pow(10.0, 90 / 20.0);  // 90 dB
  for (double f : {1.0, 100.0, 10e3}) {
    INFO("f = " << f);
    const auto common = response_at(difference_amplifier(10e3, 10, 1, 1, model), "out", f);
    CHECK_THAT(std::abs(common), IsClose(std::abs(difference_output(10, 1, 1, model, f)), 1e-9));
    const auto differential = response_at(difference_amplifier(10e3, 10, -0.5, 0.5, model), "out", f);
    CHECK_THAT(std::abs(differential),
               IsClose(std::abs(difference_output(10, -0.5, 0.5, model, f)), 1e-9));
  }
  // At low frequency, where A is near aol, the stage's CMRR is the op amp's to 0.1 %.
  const double cm = std::abs(response_at(difference_amplifier(10e3, 10, 1, 1, model), "out", 1));
  const double dm = std::abs(response_at(difference_amplifier(10e3, 10, -0.5, 0.5, model), "out", 1));
  CHECK_THAT(dm / cm, IsClose(model.cmrr, 1e-3));
  // Without cmrr the matched stage rejects the common mode (it is 0 up to rounding).
  const auto ideal = single_pole(10e6, 1e6);
  CHECK(std::abs(response_at(difference_amplifier(10e3, 10, 1, 1, ideal), "out", 1)) < 1e-12);
}

TEST_CASE("the CMRR falls 20 dB a decade above fcmrr", "[opamp][ac]") {
  auto model = single_pole(100e6, 1e7);
  model.cmrr = 1e5;   // 100 dB
  model.fcmrr = 1e3;  // falling from 1 kHz
  for (double f : {10.0, 1e3, 10e3, 100e3}) {
    INFO("f = " << f);
    const auto common = response_at(difference_amplifier(1e3, 1, 1, 1, model), "out", f);
    CHECK_THAT(std::abs(common), IsClose(std::abs(difference_output(1, 1, 1, model, f)), 1e-9));
  }
  const double at_10k = std::abs(response_at(difference_amplifier(1e3, 1, 1, 1, model), "out", 10e3));
  const double at_100k = std::abs(response_at(difference_amplifier(1e3, 1, 1, 1, model), "out", 100e3));
  CHECK(20 * std::log10(at_100k / at_10k) == Approx(20).margin(0.2));
}

TEST_CASE("a follower's loop gain carries the common-mode error", "[opamp][loop]") {
  // Follower: v+ is the (zeroed) source, v- = v_x, so the gain source sees
  // d = -v_x + k (0 + v_x) = -(1 - k) v_x and T = A (1 - k), k = 1/(2 CMRR)
  // (Bode's return ratio of the gain source; mna.hpp for d).
  auto model = single_pole(1e6, 1e5);
  model.cmrr = 100;  // 40 dB, large enough an error to see
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1);
  b.opamp("U1", "in", "out", "out", model);
  LoopOptions options;
  Sweep sweep;
  sweep.kind = SweepKind::list;
  sweep.at = {1.0, 1e3, 1e5};
  options.sweep = sweep;
  const auto result = run_loop(b.circuit, options);
  for (std::size_t i = 0; i < sweep.at.size(); ++i) {
    const std::complex<double> s(0, 2 * kPi * sweep.at[i]);
    const auto expected = opamp_gain(model, s) * (1 - 0.5 / model.cmrr);
    CHECK_THAT(std::abs(result.loops[0].t[i]), IsClose(std::abs(expected), 1e-9));
  }
}

namespace {

// Transimpedance stage: a photodiode (isrc I1 with its capacitance Cd) into the
// - input, Rf || Cf from out to -, + at gnd.
Circuit transimpedance(double rf, double cf, double cd, const OpAmpModel& model) {
  CircuitBuilder b;
  b.isrc("I1", "gnd", "m", 1);
  b.add(ElementKind::capacitor, "Cd", {"m", "gnd"}, cd);
  b.add(ElementKind::resistor, "Rf", {"out", "m"}, rf);
  b.add(ElementKind::capacitor, "Cf", {"out", "m"}, cf);
  b.opamp("U1", "gnd", "m", "out", model);
  return b.circuit;
}

}  // namespace

TEST_CASE("input capacitance sets a transimpedance stage's noise-gain zero", "[opamp][noise]") {
  // Noise gain of the inverting stage (closed form): with Zf = Rf || Cf and the
  // - input loaded by Ct = Cd + cin_cm + cin_diff (the + input is at gnd, so
  // cin_diff is also from - to gnd),
  //   NG(s) = 1 + Zf s Ct = (1 + s Rf (Cf + Ct)) / (1 + s Rf Cf),
  // a zero at fz = 1/(2 pi Rf (Cf + Ct)). The en in series with + reaches the
  // output as en NG/(1 + NG/A) (feedback fraction 1/NG, finite A).
  const double rf = 1e6, cf = 1e-12, cd = 10e-12;
  auto model = single_pole(1e9, 1e8);
  model.en = 10e-9;
  model.cin_cm = 3e-12;
  model.cin_diff = 2e-12;
  auto circuit = transimpedance(rf, cf, cd, model);
  for (auto& e : circuit.elements)
    if (e.kind == ElementKind::resistor) e.noiseless = true;
  const double ct = cd + model.cin_cm + model.cin_diff;
  const double fz = 1 / (2 * kPi * rf * (cf + ct));
  NoiseOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = {fz / 10, fz, 3 * fz, 30 * fz};
  options.probe = "out";
  options.band = Band{10, 1e6};
  const auto result = run_noise(circuit, options);
  for (std::size_t i = 0; i < options.sweep.at.size(); ++i) {
    const double f = options.sweep.at[i];
    const std::complex<double> s(0, 2 * kPi * f);
    const auto ng = (1.0 + s * rf * (cf + ct)) / (1.0 + s * rf * cf);
    const auto expected = model.en * ng / (1.0 + ng / opamp_gain(model, s));
    INFO("f = " << f);
    CHECK_THAT(result.density[i], IsClose(std::abs(expected), 1e-9));
  }
  // Without the input capacitances the zero moves up by (Cf + Ct)/(Cf + Cd).
  auto bare = model;
  bare.cin_cm = bare.cin_diff = 0;
  auto without = transimpedance(rf, cf, cd, bare);
  for (auto& e : without.elements)
    if (e.kind == ElementKind::resistor) e.noiseless = true;
  CHECK(run_noise(without, options).density[2] < 0.9 * result.density[2]);
}

TEST_CASE("input capacitance enters a transimpedance stage's loop gain and poles",
          "[opamp][loop][poles]") {
  // Feedback fraction beta = (1 + s Rf Cf)/(1 + s Rf (Cf + Ct)) (the noise
  // gain's inverse), so T = A beta; the closed-loop poles solve 1 + A beta = 0,
  // with A = aol/(1 + s/wp):
  //   (1 + s/wp)(1 + s Rf (Cf + Ct)) + aol (1 + s Rf Cf) = 0,
  // the quadratic s^2 Rf (Cf+Ct)/wp + s (1/wp + Rf (Cf+Ct) + aol Rf Cf) + 1 + aol = 0.
  const double rf = 100e3, cf = 2e-12, cd = 20e-12;
  auto model = single_pole(10e6, 1e5);
  model.cin_cm = 4e-12;
  model.cin_diff = 1e-12;
  const auto circuit = transimpedance(rf, cf, cd, model);
  const double ct = cd + model.cin_cm + model.cin_diff;
  const double wp = 2 * kPi * model.gbw / model.aol;
  LoopOptions options;
  Sweep sweep;
  sweep.kind = SweepKind::list;
  sweep.at = {1e3, 1e5, 1e6};
  options.sweep = sweep;
  const auto loop = run_loop(circuit, options);
  for (std::size_t i = 0; i < sweep.at.size(); ++i) {
    const std::complex<double> s(0, 2 * kPi * sweep.at[i]);
    const auto beta = (1.0 + s * rf * cf) / (1.0 + s * rf * (cf + ct));
    CHECK_THAT(std::abs(loop.loops[0].t[i]), IsClose(std::abs(opamp_gain(model, s) * beta), 1e-9));
  }
  const double a2 = rf * (cf + ct) / wp, a1 = 1 / wp + rf * (cf + ct) + model.aol * rf * cf,
               a0 = 1 + model.aol;
  const std::complex<double> root = std::sqrt(std::complex<double>(a1 * a1 - 4 * a2 * a0));
  const std::complex<double> s1 = (-a1 + root) / (2 * a2), s2 = (-a1 - root) / (2 * a2);
  const auto poles = run_poles(circuit, {});
  REQUIRE(poles.poles.size() == 2);
  double nearest1 = 1e300, nearest2 = 1e300;
  for (const auto& p : poles.poles) {
    nearest1 = std::min(nearest1, std::abs(p.s - s1) / std::abs(s1));
    nearest2 = std::min(nearest2, std::abs(p.s - s2) / std::abs(s2));
  }
  CHECK(nearest1 < 1e-8);
  CHECK(nearest2 < 1e-8);
}

namespace {

// A follower whose + input sits on rs to gnd (ib turns into -ib rs there).
Circuit follower_on(double rs, const OpAmpModel& model) {
  CircuitBuilder b;
  b.add(ElementKind::resistor, "Rs", {"p", "gnd"}, rs);
  b.opamp("U1", "p", "out", "out", model);
  return b.circuit;
}

double follower_gain(double aol) { return aol / (1 + aol); }

}  // namespace

TEST_CASE("ib_max widens the offset band by (ib_max - ib) times the source resistance",
          "[opamp][bias]") {
  // Follower on Rs: v+ = -ib Rs, vout = v+ A/(1 + A) (the - input's current
  // comes from the ideal output). The nominal takes the typical ib; the band the
  // worst departure from it, ib_max - ib (bias.hpp).
  auto model = single_pole(1e6, 1e6);
  model.ib = 10e-9;
  model.ib_max = 50e-9;
  const double rs = 100e3;
  const auto result = run_bias(follower_on(rs, model));
  const auto& out = result.node(*follower_on(rs, model).find_node("out"));
  CHECK_THAT(out.nominal, IsClose(-10e-9 * rs * follower_gain(1e6), 1e-9));
  CHECK_THAT(out.worst, IsClose(40e-9 * rs * follower_gain(1e6), 1e-9));
  REQUIRE_FALSE(result.opamps[0].largest.empty());
  CHECK(result.opamps[0].largest[0].kind == DcErrorKind::ib_max);
  CHECK(result.opamps[0].largest[0].through == "Rs");
  // Without ib_max the typical ib shifts the nominal and leaves no band.
  model.ib_max.reset();
  CHECK(run_bias(follower_on(rs, model)).node(2).worst == 0);
}

TEST_CASE("an ambient range widens the offset band by vos_drift times the largest step from 25 C",
          "[opamp][bias]") {
  // vos limit = |vos| + |vos_drift| max(|T1 - 25|, |T2 - 25|): over 0..70 C the
  // largest step is 45 C, so 1 mV + 45 x 10 uV = 1.45 mV, times the follower's gain.
  auto model = single_pole(1e6, 1e6);
  model.vos = 1e-3;
  model.vos_drift = 10e-6;
  auto circuit = follower_on(1e3, model);
  const int out = *circuit.find_node("out");
  CHECK_THAT(run_bias(circuit).node(out).worst, IsClose(1e-3 * follower_gain(1e6), 1e-9));
  circuit.ambient_range = AmbientRange{0, 70};
  const auto ranged = run_bias(circuit);
  CHECK_THAT(ranged.node(out).worst, IsClose(1.45e-3 * follower_gain(1e6), 1e-9));
  CHECK(ranged.range.low == 0);
  CHECK(ranged.range.high == 70);
  // Without a range the drift is taken at the ambient itself: 85 C is 60 C from 25 C.
  circuit.ambient_range.reset();
  circuit.ambient_celsius = 85;
  CHECK_THAT(run_bias(circuit).node(out).worst, IsClose(1.6e-3 * follower_gain(1e6), 1e-9));
}

TEST_CASE("bias currents double every ib_double over the ambient range", "[opamp][bias]") {
  // ib(T) = ib 2^((T - 25)/ib_double): ib_max at 70 C is 20 nA x 2^4.5; the
  // nominal is the typical 10 nA at the 25 C ambient; the band is the larger
  // departure, 20n 2^4.5 - 10n (the cold end, 10n - 10n 2^-2.5, is smaller);
  // ios scales to the hot end, ios 2^4.5, and enters with half on each pin
  // (only the + pin's half meets Rs).
  auto model = single_pole(1e6, 1e6);
  model.ib = 10e-9;
  model.ib_max = 20e-9;
  model.ib_double = 10;
  model.ios = 2e-9;
  const double rs = 100e3;
  auto circuit = follower_on(rs, model);
  circuit.ambient_range = AmbientRange{0, 70};
  const int out = *circuit.find_node("out");
  const auto result = run_bias(circuit);
  const double hot = std::exp2(4.5);
  const double band = (20e-9 * hot - 10e-9 + 0.5 * 2e-9 * hot) * rs * follower_gain(1e6);
  CHECK_THAT(result.node(out).nominal, IsClose(-10e-9 * rs * follower_gain(1e6), 1e-9));
  CHECK_THAT(result.node(out).worst, IsClose(band, 1e-9));
  const DcLimits limits = dc_limits(circuit, model);
  CHECK_THAT(limits.ib_excess, IsClose(20e-9 * hot - 10e-9, 1e-12));
  CHECK_THAT(limits.ios, IsClose(2e-9 * hot, 1e-12));
}

TEST_CASE("the output current at the declared level is V/RL + V/(Rf + Rg)", "[opamp][headroom]") {
  // Non-inverting stage of gain 1 + Rf/Rg with a load RL: the output drives
  // the load and the feedback divider in parallel (the - input draws no
  // current), I = V (1/RL + 1/(Rf + Rg)) at the output peak V (Ohm's law).
  auto model = single_pole(1e15, 1e10);
  model.iout_max = 2e-3;
  CircuitBuilder b;
  Element& vin = b.vsrc("Vin", "in", "gnd", 0);
  vin.level = SignalLevel{LevelUnit::peak, 1.0, 0};
  vin.band_low = 20, vin.band_high = 20e3;
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, 10e3);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, 10e3);
  b.add(ElementKind::resistor, "RL", {"out", "gnd"}, 1e3);
  b.opamp("U1", "in", "fb", "out", model);
  const auto headroom = run_headroom(b.circuit, run_bias(b.circuit));
  const auto& amp = headroom.opamps[0];
  const double v = amp.out.signal_peak;
  CHECK_THAT(v, IsClose(2.0, 1e-8));
  CHECK_THAT(amp.current.needed, IsClose(v / 1e3 + v / 20e3, 1e-9));
  CHECK(amp.current.available == 2e-3);
  CHECK_FALSE(amp.current.ok());  // 2.1 mA > 2 mA
  REQUIRE_FALSE(headroom.warnings.empty());
  CHECK(headroom.warnings.back().find("U1: the output must deliver 2.1mA peak") == 0);
}

TEST_CASE("the new model keys read their units and refuse values out of range", "[opamp][elaborate]") {
  auto r = elaborate_text(
      "model m opamp { gbw 1M cmrr 100dB fcmrr 1k cin_diff 2p cin_cm 5p psrr 90dB ib_max 50n "
      "vos_drift 2uV/C ib_double 10C iout_max 20m }\n"
      "res R1 (p, gnd) 1k\nopamp U1 (+p, -out, out) m\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  const auto& m = r.circuit->models[0];
  CHECK_THAT(m.cmrr, IsClose(1e5, 1e-12));
  CHECK(m.fcmrr == 1e3);
  CHECK_THAT(m.cin_diff, IsClose(2e-12, 1e-12));
  CHECK_THAT(m.cin_cm, IsClose(5e-12, 1e-12));
  CHECK_THAT(m.psrr, IsClose(std::pow(10.0, 4.5), 1e-12));
  CHECK_THAT(*m.ib_max, IsClose(50e-9, 1e-12));
  CHECK_THAT(m.vos_drift, IsClose(2e-6, 1e-12));
  CHECK(m.ib_double == 10);
  CHECK_THAT(m.iout_max, IsClose(20e-3, 1e-12));
  auto bad = elaborate_text("model m opamp { gbw 1M fcmrr 0 }\n");
  CHECK(bad.diagnostics.find("error: fcmrr of model 'm' must be greater than zero") != std::string::npos);
  auto unit = elaborate_text("model m opamp { gbw 1M vos_drift 2uV }\n");
  CHECK(unit.diagnostics.find("a drift (V/C) is wanted here") != std::string::npos);
}

TEST_CASE("supply ripple reaches the output as ripple/psrr through the noise gain",
          "[opamp][headroom]") {
  // The rejected ripple e = R/psrr sits in series with the + input, so it
  // reaches the output of a non-inverting stage like vos or en does:
  // e NG/(1 + NG/A), NG = 1 + Rf/Rg (closed form of the feedback amplifier).
  auto model = single_pole(1e6, 1e5);
  model.psrr = 1e3;  // 60 dB
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 0);
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, 100e3);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, 10e3);
  b.opamp("U1", "in", "fb", "out", model);
  b.circuit.supply = Rails{15, -15};
  b.circuit.supply_ripple = 10e-3;
  b.circuit.supply_ripple_hz = 120;
  const auto headroom = run_headroom(b.circuit, run_bias(b.circuit));
  REQUIRE(headroom.ripple_at.size() == 1);
  const std::complex<double> s(0, 2 * kPi * 120);
  const double ng = 11;
  const double expected = std::abs(10e-6 * ng / (1.0 + ng / opamp_gain(model, s)));
  CHECK_THAT(headroom.ripple_at[0].peak, IsClose(expected, 1e-9));
  CHECK(headroom.ripple_at[0].node == "out");
  CHECK(headroom.ripple_hz == 120);
}

TEST_CASE("an ambient range in the netlist sets the offsets' span and a typical 25 C",
          "[opamp][elaborate]") {
  auto r = elaborate_text("ambient 0C..70C\nres R1 (a, gnd) 1k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  REQUIRE(r.circuit->ambient_range);
  CHECK(r.circuit->ambient_range->low == 0);
  CHECK(r.circuit->ambient_range->high == 70);
  CHECK(r.circuit->ambient_celsius == 25);
  auto hot = elaborate_text("ambient 40C..85C\nres R1 (a, gnd) 1k\n");
  REQUIRE(hot.circuit);
  CHECK(hot.circuit->ambient_celsius == 40);  // the end nearest 25 C
  auto inverted = elaborate_text("ambient 70C..0C\nres R1 (a, gnd) 1k\n");
  CHECK_FALSE(inverted.circuit);
  CHECK(inverted.diagnostics ==
        "main.tacet:1:9: error: the ambient range runs from 70 C down to 0 C\n"
        "ambient 70C..0C\n"
        "        ^~~\n"
        "hint: write the cold end first: ambient 0C..70C\n");
}

TEST_CASE("supply takes ripple= and ripple_f= and checks them", "[opamp][elaborate]") {
  auto r = elaborate_text("supply +15V -15V ripple=10mV ripple_f=120Hz\nres R1 (a, gnd) 1k\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  CHECK_THAT(r.circuit->supply_ripple, IsClose(10e-3, 1e-12));
  CHECK(r.circuit->supply_ripple_hz == 120);
  auto plain = elaborate_text("supply +15V -15V\nres R1 (a, gnd) 1k\n");
  REQUIRE(plain.circuit);
  CHECK(plain.circuit->supply_ripple == 0);
  CHECK(plain.circuit->supply_ripple_hz == kDefaultRippleHz);
  auto misspelt = elaborate_text("supply +15V -15V riple=10mV\nres R1 (a, gnd) 1k\n");
  CHECK(misspelt.diagnostics ==
        "main.tacet:1:18: error: supply takes no option 'riple'\n"
        "supply +15V -15V riple=10mV\n"
        "                 ^~~~~\n"
        "hint: did you mean 'ripple'?\n");
  auto zero = elaborate_text("supply +15V -15V ripple=0V\nres R1 (a, gnd) 1k\n");
  CHECK(zero.diagnostics.find("main.tacet:1:25: error: ripple= must be above 0") == 0);
}

TEST_CASE("a follower's closed-loop pole moves with the CMRR's roll-off", "[opamp][poles]") {
  // The gain row of a follower (v- = v_x, v+ at the zeroed source) with
  // k(s) = k0 (1 + s/wc), k0 = 1/(2 CMRR0), wc = 2 pi fcmrr (mna.hpp):
  //   (1 + s/wp)/aol + 1 - k0 - k0 s/wc = 0
  //   => s = -(1/aol + 1 - k0) / (1/(wp aol) - k0/wc),  wp = 2 pi gbw/aol.
  auto model = single_pole(1e6, 1e5);
  model.cmrr = 100;
  model.fcmrr = 1e6;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1);
  b.opamp("U1", "in", "out", "out", model);
  const double wp = 2 * kPi * model.gbw / model.aol, wc = 2 * kPi * model.fcmrr, k0 = 0.5 / model.cmrr;
  const double expected = -(1 / model.aol + 1 - k0) / (1 / (wp * model.aol) - k0 / wc);
  const auto poles = run_poles(b.circuit, {});
  REQUIRE(poles.poles.size() == 1);
  CHECK_THAT(poles.poles[0].s.real(), IsClose(expected, 1e-9));
  CHECK(poles.poles[0].s.imag() == 0);
}
