#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <string>

#include <fmt/format.h>

#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/solve/response.hpp"
#include "tacet/common/errors.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

// RC low-pass: H = 1 / (1 + j f/fc), fc = 1/(2 pi R C) (closed form, first-order RC).
const std::string kRc =
    "vsrc Vin (in, gnd) ac=1\n"
    "res R1 (in, out) 10k\n"
    "cap C1 (out, gnd) 10n\n";
const double kRcCorner = 1 / (2 * std::numbers::pi * 10e3 * 10e-9);

// Unity-gain Sallen-Key low-pass with an ideal buffer (Sallen and Key, 1955):
// R1 = R2 = R, feedback C1 = 2C, C2 = C gives Q = 1/sqrt 2 (Butterworth, 1930)
// and w0 = 1/(R C sqrt 2): |H|^2 = 1 / (1 + (f/f0)^4).
const std::string kButterworth =
    "param r = 10k\nparam c = 10n\n"
    "vsrc Vin (in, gnd) ac=1\n"
    "res R1 (in, a) r\nres R2 (a, p) r\n"
    "cap C1 (a, out) 2 * c\ncap C2 (p, gnd) c\n"
    "vcvs E1 (out, gnd; p, gnd) gain=1\n";
const double kButterworthF0 = 1 / (2 * std::numbers::pi * 10e3 * 10e-9 * std::sqrt(2.0));

double butterworth_db(double f) { return -10 * std::log10(1 + std::pow(f / kButterworthF0, 4)); }

SpecResult check_one(const std::string& circuit, const std::string& spec) {
  auto r = elaborate_text(circuit + spec + "\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  REQUIRE(r.circuit->specs.size() == 1);
  auto result = run_check(*r.circuit);
  REQUIRE(result.specs.size() == 1);
  return result.specs[0];
}

}  // namespace

TEST_CASE("a gain spec passes inside its window and fails outside", "[check]") {
  // At fc the RC gives 1/sqrt 2: -3.0103 dB.
  auto pass = check_one(kRc, "spec g gain (out) at=1591.5494309189535 min=-3.02dB max=-3.0dB");
  REQUIRE(pass.value);
  CHECK(*pass.value == Approx(-10 * std::log10(2.0)).epsilon(1e-9));
  CHECK(pass.pass);
  CHECK(pass.margin == Approx(*pass.value + 3.02));  // -3.0103 is nearer the lower limit
  auto fail = check_one(kRc, "spec g gain (out) at=1591.5494309189535 min=-1dB");
  CHECK_FALSE(fail.pass);
  CHECK(fail.margin == Approx(*fail.value + 1));
  CHECK(fail.margin < 0);
}

TEST_CASE("a gain spec written as a ratio compares the magnitude", "[check]") {
  auto r = check_one(kRc, "spec g gain (out) at=1591.5494309189535 min=0.7 max=0.72");
  REQUIRE(r.value);
  CHECK(r.spec.unit == SpecUnit::ratio);
  CHECK(*r.value == Approx(1 / std::sqrt(2.0)).epsilon(1e-9));
  CHECK(r.pass);
}

TEST_CASE("a phase spec measures the angle at its frequency", "[check]") {
  // arg H(j fc) = -45 degrees for the first-order low-pass.
  auto pass = check_one(kRc, "spec p phase (out) at=1591.5494309189535 min=-46deg max=-44deg");
  REQUIRE(pass.value);
  CHECK(*pass.value == Approx(-45).epsilon(1e-9));
  CHECK(pass.pass);
  CHECK(pass.margin == Approx(1).epsilon(1e-6));
  auto fail = check_one(kRc, "spec p phase (out) at=1591.5494309189535 min=-30");
  CHECK_FALSE(fail.pass);
  CHECK(fail.margin == Approx(-15).epsilon(1e-6));
}

TEST_CASE("the upper corner of an RC low-pass is 1/(2 pi R C)", "[check]") {
  auto r = check_one(kRc, "spec fc upper_corner (out) ref=1Hz min=1.5kHz max=1.7kHz");
  REQUIRE(r.value);
  // The -3.0103 dB point relative to 1 Hz, where |H| is 1 - 2e-7 dB below DC.
  const double ref_db = -10 * std::log10(1 + std::pow(1 / kRcCorner, 2));
  const double expected = kRcCorner * std::sqrt(std::pow(10, -(ref_db - 10 * std::log10(2.0)) / 10) - 1);
  CHECK(*r.value == Approx(expected).epsilon(1e-9));
  CHECK(r.pass);
  auto fail = check_one(kRc, "spec fc upper_corner (out) ref=1Hz min=2kHz");
  CHECK_FALSE(fail.pass);
  CHECK(fail.margin == Approx(*fail.value - 2000));
}

TEST_CASE("the lower corner of an RC high-pass is 1/(2 pi R C)", "[check]") {
  // High-pass: H = j(f/fc) / (1 + j f/fc); at 1 MHz it is within 1e-6 dB of 0 dB.
  const std::string hp = "vsrc Vin (in, gnd) ac=1\ncap C1 (in, out) 10n\nres R1 (out, gnd) 10k\n";
  auto r = check_one(hp, "spec fl lower_corner (out) ref=10MHz max=1.6kHz");
  REQUIRE(r.value);
  CHECK(*r.value == Approx(kRcCorner).epsilon(1e-7));
  CHECK(r.pass);
}

TEST_CASE("a corner that is never reached fails with a note", "[check]") {
  // Both limits: the max= cannot be checked beyond the search range. (With min= alone
  // the corner beyond it passes: check_targets_test.cpp.)
  auto r = check_one(kRc, "spec fc upper_corner (out) ref=1Hz to=1kHz min=1Hz max=10kHz");
  CHECK_FALSE(r.value);
  CHECK_FALSE(r.pass);
  CHECK(r.note.find("stays within") != std::string::npos);
}

TEST_CASE("flatness of a Butterworth low-pass matches its closed form", "[check]") {
  // |H|^2 = 1/(1 + (f/f0)^4) is monotonic, so the largest deviation from the
  // 100 Hz reference over 100 Hz .. 500 Hz is at 500 Hz (Butterworth, 1930).
  auto r = check_one(kButterworth, "spec flat flatness (out) from=100Hz to=500Hz ref=100Hz max=0.1dB");
  REQUIRE(r.value);
  const double expected = butterworth_db(100) - butterworth_db(500);
  CHECK(*r.value == Approx(expected).epsilon(1e-9));
  CHECK(r.where == Approx(500));
  CHECK(r.pass == (expected <= 0.1));
  auto tight = check_one(kButterworth, "spec flat flatness (out) from=100Hz to=1kHz ref=100Hz max=0.01dB");
  CHECK_FALSE(tight.pass);
  CHECK(tight.margin == Approx(0.01 - (butterworth_db(100) - butterworth_db(1000))).epsilon(1e-9));
}

TEST_CASE("flatness finds a peak inside the band", "[check]") {
  // A series RLC band-pass: the current peaks at 1/(2 pi sqrt(LC)) (closed form);
  // measured from the band edge at 100 Hz the worst deviation is at resonance.
  const std::string rlc = "vsrc V1 (a, gnd) ac=1\nres R (a, b) 100\nind L (b, c) 10m\ncap C (c, gnd) 1u\n";
  auto r = check_one(rlc, "spec f flatness (b) from=100Hz to=10kHz max=1dB current=R");
  const double f0 = 1 / (2 * std::numbers::pi * std::sqrt(10e-3 * 1e-6));
  REQUIRE(r.value);
  CHECK(r.where == Approx(f0).epsilon(1e-5));
}

TEST_CASE("specs are measured in the order written", "[check]") {
  auto r = elaborate_text(kRc + "spec b gain (out) at=10 min=-1dB\nspec a phase (out) at=10 max=0\n");
  REQUIRE(r.circuit);
  auto result = run_check(*r.circuit);
  REQUIRE(result.specs.size() == 2);
  CHECK(result.specs[0].spec.name == "b");
  CHECK(result.specs[1].spec.name == "a");
  CHECK(result.failed() == 0);
}

TEST_CASE("window margins are positive inside and negative outside", "[check]") {
  CHECK(window_margin(5, 4, 7) == 1);
  CHECK(window_margin(6.5, 4, 7) == 0.5);
  CHECK(window_margin(8, 4, 7) == -1);
  CHECK(window_margin(3, 4, std::nullopt) == -1);
  CHECK(window_margin(3, std::nullopt, 4) == 1);
}

TEST_CASE("a spec on an unknown node is rejected at its position", "[check][elaborate]") {
  auto r = elaborate_text(kRc + "spec g gain (otu) at=1k min=0dB\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "main.tacet:4:14: error: no node named 'otu'\n"
        "spec g gain (otu) at=1k min=0dB\n"
        "             ^~~\n"
        "hint: did you mean 'out'?\n");
}

TEST_CASE("a spec band must run from low to high", "[check][elaborate]") {
  auto r = elaborate_text(kRc + "spec f flatness (out) from=20k to=20 max=0.1dB\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "main.tacet:4:28: error: from=20000Hz must be below to=20Hz\n"
        "spec f flatness (out) from=20k to=20 max=0.1dB\n"
        "                           ^~~\n"
        "hint: a band is written from=low to=high\n");
}

TEST_CASE("an unknown spec kind suggests the nearest", "[check][elaborate]") {
  auto r = elaborate_text(kRc + "spec f flatnes (out) from=20 to=20k max=0.1dB\n");
  CHECK(r.diagnostics.find("main.tacet:4:8: error: unknown kind of spec 'flatnes'") == 0);
  CHECK(r.diagnostics.find("hint: did you mean 'flatness'?") != std::string::npos);
}

TEST_CASE("a spec missing a required option names it", "[check][elaborate]") {
  auto r = elaborate_text(kRc + "spec g gain (out) min=0dB\n");
  CHECK(r.diagnostics.find("main.tacet:4:6: error: spec 'g' needs at=") == 0);
}

TEST_CASE("a spec limit in the wrong unit is rejected", "[check][elaborate]") {
  auto r = elaborate_text(kRc + "spec g gain (out) at=1k min=3kHz\n");
  CHECK(r.diagnostics.find("error: unit 'kHz' is a frequency; a gain is wanted here") != std::string::npos);
}

TEST_CASE("duplicate spec names are rejected", "[check][elaborate]") {
  auto r = elaborate_text(kRc + "spec g gain (out) at=1k min=0dB\nspec g phase (out) at=1k max=0\n");
  CHECK(r.diagnostics.find("main.tacet:5:6: error: spec 'g' is already defined") == 0);
}

TEST_CASE("a noise spec integrates the output noise over its band", "[check][noise]") {
  // R parallel C: the band total is sqrt((4kTR / (2 pi R C)) (atan(2 pi f2 R C) - atan(2 pi f1 R C)))
  // (Johnson 1928, Nyquist 1928; the closed form of the RC integral). A 1 A
  // current source of ac=0 keeps the node driven without adding noise.
  const std::string rc = "ambient 25C\nisrc I1 (out, gnd) ac=0\nres R (out, gnd) 10k\ncap C (out, gnd) 10n\n";
  auto r = check_one(rc, "spec n noise (out) from=20Hz to=20kHz max=1uV");
  const double k = 1.380649e-23, t = 298.15, R = 10e3, C = 10e-9, w = 2 * std::numbers::pi * R * C;
  const double expected = std::sqrt(4 * k * t * R / w * (std::atan(w * 20e3) - std::atan(w * 20)));
  REQUIRE(r.value);
  CHECK(*r.value == Approx(expected).epsilon(1e-3));
  CHECK(r.pass == (expected <= 1e-6));
  auto fail = check_one(rc, "spec n noise (out) from=20Hz to=20kHz max=100nV");
  CHECK_FALSE(fail.pass);
  CHECK(fail.margin == Approx(100e-9 - *fail.value));
}

TEST_CASE("an snr spec compares the signal at its level with the band noise", "[check][noise]") {
  // Divider of two 10k resistors driven by Vin: gain 1/2; noise of 5k (R1 || R2)
  // over 20 Hz .. 20 kHz: sqrt(4kT 5k 19980) (Johnson 1928, Nyquist 1928).
  const std::string div = "vsrc Vin (in, gnd) ac=1\nres R1 (in, out) 10k\nres R2 (out, gnd) 10k\n";
  auto r = check_one(div, "spec s snr (out) from=20Hz to=20kHz input=Vin level=1V min=100dB");
  const double noise = std::sqrt(4 * 1.380649e-23 * 298.15 * 5e3 * 19980);
  REQUIRE(r.value);
  CHECK(*r.value == Approx(20 * std::log10(0.5 / noise)).epsilon(1e-6));
  CHECK(r.pass);
}

TEST_CASE("an offset spec bounds a node over the op amps' offsets", "[check][bias]") {
  // Non-inverting gain of 11 with vos = 1 mV: output offset vos (1 + Rf/Rg) = 11 mV
  // (textbook op-amp DC error analysis; finite aol = 1e6 changes it by 1e-5).
  const std::string amp =
      "model m opamp { gbw 1M aol 120dB vos 1m }\n"
      "vsrc Vin (in, gnd) dc=0\nopamp U1 (+in, -fb, out) m\nres Rf (out, fb) 10k\nres Rg (fb, gnd) 1k\n";
  auto r = check_one(amp, "spec o offset (out) max=12mV");
  REQUIRE(r.value);
  CHECK(*r.value == Approx(11e-3).epsilon(1e-4));
  CHECK(r.pass);
  CHECK_FALSE(check_one(amp, "spec o offset (out) max=10mV").pass);
}

TEST_CASE("a rails spec fails when an output can come within its margin of the rails", "[check][bias]") {
  // The same stage with vos = 100 mV: 1.1 V at the output, rails +-12 V, swing
  // 1.5 V: 10.5 - 1.1 = 9.4 V inside the usable range.
  const std::string amp =
      "supply +12 -12\nmodel m opamp { gbw 1M aol 120dB vos 100m swing 1.5 }\n"
      "vsrc Vin (in, gnd) dc=0\nopamp U1 (+in, -fb, out) m\nres Rf (out, fb) 10k\nres Rg (fb, gnd) 1k\n";
  auto pass = check_one(amp, "spec r rails margin=9V");
  REQUIRE(pass.value);
  CHECK(*pass.value == Approx(9.4).epsilon(1e-4));
  CHECK(pass.pass);
  CHECK_FALSE(check_one(amp, "spec r rails margin=10V").pass);
}

TEST_CASE("an snr spec with no noise at the probe passes as unbounded, without a number",
          "[check][noise]") {
  // The probe is a node the source holds: no noise reaches it (ideal source,
  // zero impedance), so signal/noise is unbounded: it meets any minimum.
  auto quiet = check_one("vsrc Vin (in, gnd) ac=1\nres R1 (in, gnd) 1k\n",
                         "spec s snr (in) from=20Hz to=20kHz input=Vin level=1V min=100dB");
  CHECK_FALSE(quiet.value);
  CHECK(quiet.pass);
  CHECK(quiet.note == "no noise reaches the probe: the ratio is unbounded");
  // The signal cannot reach the probe: there is no ratio, and the spec fails.
  auto deaf = check_one("vsrc Vin (in, gnd) ac=1\nres R1 (in, gnd) 1k\nres R2 (out, gnd) 1k\n",
                        "spec s snr (out) from=20Hz to=20kHz input=Vin level=1V min=100dB");
  CHECK_FALSE(deaf.value);
  CHECK_FALSE(deaf.pass);
  CHECK(deaf.note == "the signal from 'Vin' does not reach the probe at 632.5Hz");
}

TEST_CASE("a noise spec on a probe no noise reaches measures 0 V", "[check][noise]") {
  auto r = check_one("vsrc Vin (in, gnd) ac=1\nres R1 (in, gnd) 1k\n",
                     "spec n noise (in) from=20Hz to=20kHz max=1uV");
  REQUIRE(r.value);
  CHECK(*r.value == 0.0);
  CHECK(r.pass);
  CHECK(r.note == "no noise reaches the probe");
}

TEST_CASE("a phase spec compares its limits modulo 360 degrees", "[check]") {
  // An inverter into an RC low-pass: arg H = 180 deg - atan(f/fc) (closed form,
  // first-order RC after a gain of -1). At f = fc tan(0.6 deg) that is
  // 179.4 deg, the same angle as -180.6 deg.
  const std::string inverted =
      "vsrc Vin (in, gnd) ac=1\n"
      "vcvs E1 (inv, gnd; in, gnd) gain=-1\n"
      "res R1 (inv, out) 10k\n"
      "cap C1 (out, gnd) 10n\n";
  const double f = kRcCorner * std::tan(0.6 * std::numbers::pi / 180);
  auto r = check_one(inverted, fmt::format("spec p phase (out) at={:.17g} min=-181deg max=-179deg", f));
  REQUIRE(r.value);
  CHECK(*r.value == Approx(-180.6).epsilon(1e-9));
  CHECK(r.margin == Approx(0.4).epsilon(1e-6));
  CHECK(r.pass);
  CHECK(r.note == "measured 179.40 deg, the same angle as -180.60 deg");
  // One limit: the turn nearest it; 200 deg of lag wanted, 180.6 there: fails by 19.4.
  auto lag = check_one(inverted, fmt::format("spec p phase (out) at={:.17g} max=-200deg", f));
  CHECK(lag.margin == Approx(-19.4).epsilon(1e-6));
  CHECK_FALSE(lag.pass);
  CHECK(phase_in_window(179.4, -190.0, std::nullopt) == Approx(-180.6));
  CHECK(phase_in_window(-45.0, -46.0, -44.0) == -45.0);
  CHECK(phase_in_window(10.0, 700.0, 740.0) == Approx(730.0));
}

TEST_CASE("a gain spec with a negative ratio limit is rejected with a hint", "[check][elaborate]") {
  // A ratio limit bounds |H|, which is never negative (a magnitude).
  auto r = elaborate_text(kRc + "spec g gain (out) at=1k min=-10.1 max=-9.9\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "main.tacet:4:29: error: a gain spec's min= as a ratio bounds |H|, which is never below 0\n"
        "spec g gain (out) at=1k min=-10.1 max=-9.9\n"
        "                            ^~~~~\n"
        "hint: for an inversion add a phase spec (180deg); for a level below the reference write "
        "dB, min=-20dB\n");
  CHECK(elaborate_text(kRc + "spec g gain (out) at=1k min=-10.1dB max=-9.9dB\n").circuit);
}

TEST_CASE("a spec whose DC point cannot be found fails alone, naming the spec and the node",
          "[check][bias]") {
  // C1 leaves node 'out' without a DC path (capacitors are open at DC), so the
  // offset spec cannot be measured; the gain spec still is: at fc the RC
  // high-pass gives 1/sqrt 2, -3.0103 dB (first-order RC, closed form).
  const std::string coupled =
      "vsrc Vin (in, gnd) ac=1\n"
      "cap C1 (in, out) 10n\n"
      "res R1 (out, x) 10k\n"
      "cap C2 (x, gnd) 1\n";
  auto r = elaborate_text(coupled +
                          "spec dc offset (out) max=1mV\n"
                          "spec g gain (out) at=1MHz min=-1dB\n"
                          "spec dc2 offset (x) max=1mV\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  const CheckResult result = run_check(*r.circuit);
  REQUIRE(result.specs.size() == 3);
  CHECK_FALSE(result.specs[0].pass);
  CHECK_FALSE(result.specs[0].value);
  CHECK(result.specs[0].note ==
        "circuit cannot be solved at DC: nodes 'out', 'x' have no DC path to gnd");
  REQUIRE(result.specs[1].value);
  CHECK(result.specs[1].pass);
  CHECK(result.unsolved() == 2);
  CHECK(result.failed() == 2);
  CHECK(std::string(result.unsolved_error().what()) ==
        "error: circuit cannot be solved: specs 'dc', 'dc2' at DC: nodes 'out', 'x' have no DC "
        "path to gnd\n"
        "hint: at DC capacitors are open; give the node a resistor to a biased node or to gnd\n");
}

TEST_CASE("check reuses the analyses a caller shares instead of running its own", "[check][bias]") {
  // The offset spec reads the shared DC analysis: a nominal of 2 V planted
  // there is what it reports; the gain and noise specs solve on the shared
  // response (its factorisation count moves, a fresh one would stay at 0).
  auto r = elaborate_text(kRc +
                          "spec dc offset (out) max=5V\n"
                          "spec g gain (out) at=1kHz min=-10dB\n"
                          "spec n noise (out) from=20Hz to=20kHz max=1mV\n");
  REQUIRE(r.circuit);
  BiasResult planted = run_bias(*r.circuit);
  const int out = *r.circuit->find_node("out");
  planted.nodes[static_cast<std::size_t>(out - 1)].nominal = 2.0;
  FrequencyResponse response(*r.circuit);
  const CheckResult result = run_check(*r.circuit, SharedAnalyses{&response, &planted, {}});
  REQUIRE(result.specs[0].value);
  CHECK(*result.specs[0].value == 2.0);
  CHECK(response.lu().full_factorizations() >= 1);
  CHECK(result.specs[1].pass);
  CHECK(result.specs[2].pass);
  // A DC analysis that could not run is reported, not retried.
  const CheckResult failed = run_check(
      *r.circuit, SharedAnalyses{&response, nullptr, SolveError::unsolvable_at(0, "no DC point here")});
  CHECK(failed.specs[0].note == "circuit cannot be solved at DC: no DC point here");
  CHECK(failed.unsolved() == 1);
}

TEST_CASE("a settling spec measures the step response's time into its band", "[check][settle]") {
  // RC low-pass step 1 - exp(-t/RC): inside band b of final from RC ln(1/b) on
  // (first-order RC network, closed form); RC = 100 us.
  const double tau = 10e3 * 10e-9;
  auto r = check_one(kRc, "spec s settling (out) max=1ms");
  REQUIRE(r.value);
  CHECK(*r.value == Approx(tau * std::log(1e4)).epsilon(1e-6));
  CHECK(r.pass);
  CHECK(r.spec.unit == SpecUnit::seconds);
  auto wide = check_one(kRc, "spec s settling (out) band=1% max=400us input=Vin");
  CHECK(*wide.value == Approx(tau * std::log(100.0)).epsilon(1e-6));
  CHECK_FALSE(wide.pass);
  CHECK(wide.margin == Approx(400e-6 - tau * std::log(100.0)).epsilon(1e-6));
}

TEST_CASE("an overshoot spec measures (peak - final) / final of the step response",
          "[check][settle]") {
  // Butterworth second order, zeta = 1/sqrt 2: overshoot exp(-pi zeta / sqrt(1 - zeta^2))
  // = exp(-pi) = 4.32 % (standard second-order step response, e.g. Ogata 5-3).
  auto pass = check_one(kButterworth, "spec o overshoot (out) max=5%");
  REQUIRE(pass.value);
  CHECK(*pass.value == Approx(std::exp(-std::numbers::pi)).epsilon(1e-6));
  CHECK(pass.pass);
  auto fail = check_one(kButterworth, "spec o overshoot (out) max=0.04");
  CHECK_FALSE(fail.pass);
}

TEST_CASE("settling and overshoot specs refuse bad keys where they are written",
          "[check][elaborate][settle]") {
  auto first_line = [](const std::string& spec, const std::string& circuit) {
    auto r = elaborate_text(circuit + spec + "\n");
    return r.diagnostics.substr(0, r.diagnostics.find('\n'));
  };
  CHECK(first_line("spec s settling (out) band=0 max=1ms", kRc) ==
        "main.tacet:4:28: error: band= must be a fraction above 0 and below 1");
  CHECK(first_line("spec s settling (out) max=-1us", kRc) ==
        "main.tacet:4:27: error: max= must be a time of 0 s or more");
  CHECK(first_line("spec s settling (out) max=1kHz", kRc) ==
        "main.tacet:4:27: error: unit 'kHz' is a frequency; a time is wanted here");
  CHECK(first_line("spec o overshoot (out) max=-5%", kRc) ==
        "main.tacet:4:28: error: max= must be a fraction of 0 or more");
  CHECK(first_line("spec s settling (out) max=1ms input=R1", kRc) ==
        "main.tacet:4:37: error: input= must name a voltage or current source");
  CHECK(first_line("spec s settling (out) max=1ms current=C1", kRc) ==
        "main.tacet:4:39: error: a step response gives no capacitor current; measure the "
        "voltage across it");
  CHECK(first_line("spec s settling (out) max=1ms", kRc + "vsrc V2 (b, gnd) ac=1\nres R2 (b, gnd) 1k\n") ==
        "main.tacet:6:6: error: spec 's' needs input=: the circuit has 2 sources with an ac value");
  CHECK(first_line("spec s settling (out) max=1ms bnd=1%", kRc) ==
        "main.tacet:4:31: error: a settling spec takes no option 'bnd'");
}

TEST_CASE("a weighted noise spec measures the weighted band total of tacet noise --weight",
          "[check][noise][weighting]") {
  // The spec and the analysis are one computation (brief 14: weight= on noise
  // and snr specs); the weighted total itself is checked against SciPy in
  // tests/scipy/weighted_noise_check.py. A-weighting takes out more than it
  // adds on a white density over 20 Hz..20 kHz (the A curve is below 0 dB
  // outside about 1..5 kHz, IEC 61672-1 table 3).
  const std::string div = "vsrc Vin (in, gnd) ac=1\nres R1 (in, out) 10k\nres R2 (out, gnd) 10k\n";
  auto flat = check_one(div, "spec n noise (out) from=20Hz to=20kHz max=1uV");
  auto a = check_one(div, "spec n noise (out) from=20Hz to=20kHz max=1uV weight=a");
  REQUIRE(flat.value);
  REQUIRE(a.value);
  CHECK(*a.value < *flat.value);
  CHECK(a.note.rfind("a-weighted; largest: ", 0) == 0);
  auto elaborated = elaborate_text(div + "spec n noise (out) from=20Hz to=20kHz max=1uV weight=itu468\n");
  REQUIRE(elaborated.circuit);
  CHECK(elaborated.circuit->specs[0].weight == Weighting::itu468);
  NoiseOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = {1e3};
  options.probe = "out";
  options.band = Band{20, 20e3};
  options.weight = Weighting::itu468;
  const auto direct = run_noise(*elaborated.circuit, options);
  const auto spec = run_check(*elaborated.circuit).specs[0];
  CHECK(*spec.value == Approx(direct.total_rms).epsilon(1e-12));
  // An snr spec divides by the weighted noise: the ratio rises by the same factor.
  auto snr_flat = check_one(div, "spec s snr (out) from=20Hz to=20kHz input=Vin level=1V min=100dB");
  auto snr_a = check_one(div, "spec s snr (out) from=20Hz to=20kHz input=Vin level=1V min=100dB weight=a");
  CHECK(*snr_a.value - *snr_flat.value == Approx(20 * std::log10(*flat.value / *a.value)).epsilon(1e-9));
}

TEST_CASE("a weight on a spec that is not noise or snr is rejected at its position",
          "[check][elaborate][weighting]") {
  auto r = elaborate_text(kRc + "spec g gain (out) at=1k min=0dB weight=a\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "main.tacet:4:33: error: a gain spec takes no weight=: a weighting applies to noise\n"
        "spec g gain (out) at=1k min=0dB weight=a\n"
        "                                ^~~~~~\n"
        "hint: weight= goes on a noise or snr spec\n");
}

TEST_CASE("an unknown weighting on a noise spec suggests the nearest name",
          "[check][elaborate][weighting]") {
  auto r = elaborate_text(kRc + "spec n noise (out) from=20 to=20k max=1uV weight=itu486\n");
  CHECK_FALSE(r.circuit);
  CHECK(r.diagnostics ==
        "main.tacet:4:50: error: unknown weighting 'itu486'\n"
        "spec n noise (out) from=20 to=20k max=1uV weight=itu486\n"
        "                                                 ^~~~~~\n"
        "hint: did you mean 'itu468'?\n");
}
