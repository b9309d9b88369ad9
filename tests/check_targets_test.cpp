// Specs that compare a response with a target: deviation from a curve, a
// mask, and any response spec measured from one source alone (input=). The
// measurement is check.cpp's; the syntax and its errors elaborate_targets.cpp's.

#include <catch2/catch.hpp>

#include <cmath>
#include <numbers>
#include <string>
#include <utility>

#include <fmt/format.h>

#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/common/constants.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

SpecResult check_one(const std::string& circuit, const std::string& spec) {
  auto r = elaborate_text(circuit + spec + "\n");
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  REQUIRE(r.circuit->specs.size() == 1);
  auto result = run_check(*r.circuit);
  REQUIRE(result.specs.size() == 1);
  INFO(result.specs[0].note);
  return result.specs[0];
}

std::string diagnostics_of(const std::string& text) {
  auto r = elaborate_text(text);
  CHECK_FALSE(r.circuit);
  return r.diagnostics;
}

// The passive playback network: R1 in series, then C1 to gnd in parallel with
// C2 + R2 to gnd. H = (1 + s R2C2) / (1 + s (R1C1 + R1C2 + R2C2) + s^2 R1C1 R2C2)
// (nodal analysis by hand); R1C1 = 750 us, R1C2 = 2187 us, R2C2 = 318 us give
// 750 + 2187 + 318 = 3180 + 75 and 750 x 318 = 3180 x 75 (us, us^2): exactly the
// IEC 60098 time constants (the values are the well-known exact network; from memory).
const std::string kRiaaNetwork =
    "param r1 = 100k\n"
    "vsrc Vin (in, gnd) ac=1\n"
    "res R1 (in, out) r1\n"
    "cap C1 (out, gnd) 750u / r1\n"
    "cap C2 (out, m) 2187u / r1\n"
    "res R2 (m, gnd) 318u / (2187u / r1)\n";

// Unity-gain Sallen-Key low-pass, R1 = R2 = R, C1 = 2C, C2 = C: Butterworth,
// |H|^2 = 1 / (1 + (f/f0)^4), f0 = 1/(2 pi R C sqrt 2) (Sallen and Key, 1955).
std::string butterworth(double gain = 1) {
  return "param r = 10k\nparam c = 10n\nparam f0 = 1/(2*pi*r*c*sqrt(2))\n"
         "vsrc Vin (in, gnd) ac=1\n"
         "res R1 (in, a) r\nres R2 (a, p) r\n"
         "cap C1 (a, o1) 2 * c\ncap C2 (p, gnd) c\n"
         "vcvs E1 (o1, gnd; p, gnd) gain=1\n"
         "vcvs E2 (out, gnd; o1, gnd) gain=" + std::to_string(gain) + "\n";
}
const double kF0 = 1 / (2 * std::numbers::pi * 10e3 * 10e-9 * std::sqrt(2.0));
double butterworth_db(double f) { return -10 * std::log10(1 + std::pow(f / kF0, 4)); }

}  // namespace

TEST_CASE("the exact passive playback network deviates from riaa by less than 1e-6 dB", "[check]") {
  const auto r = check_one(kRiaaNetwork,
                           "spec eq deviation (out) target=riaa from=20Hz to=20kHz ref=1kHz max=0.01dB");
  REQUIRE(r.value);
  CHECK(*r.value < 1e-6);
  CHECK(r.pass);
  // The same curve written as an expression in s.
  const auto e = check_one(kRiaaNetwork,
                           "spec eq deviation (out) target=(1+s*318u)/((1+s*3180u)*(1+s*75u)) "
                           "from=20Hz to=20kHz ref=1kHz max=0.01dB");
  REQUIRE(e.value);
  CHECK(*e.value < 1e-6);
  CHECK(e.spec.target.text == "(1+s*318u)/((1+s*3180u)*(1+s*75u))");
}

TEST_CASE("a deviation spec finds the largest deviation between grid points", "[check]") {
  // A second-order Butterworth against a first-order target of the same f0:
  // g(x) = dB(H) - dB(target) = 10 log10((1 + x^2)/(1 + x^4)), x = f/f0, rises from 0 to
  // its peak where x^2 = sqrt(2) - 1 (dg/dx = 0, by hand) and is back at 0 at x = 1, so
  // on 1 Hz .. 1 kHz (x < 0.89) its largest |g| is that interior peak; normalised at
  // ref both shift by g(x_ref).
  const auto r = check_one(butterworth(),
                           "spec d deviation (out) target=1/(1 + s/(2*pi*f0)) from=1Hz to=1kHz "
                           "ref=1Hz max=1dB");
  auto g = [](double x) { return 10 * std::log10((1 + x * x) / (1 + std::pow(x, 4))); };
  const double x_star = std::sqrt(std::sqrt(2.0) - 1);
  const double expected = std::abs(g(x_star) - g(1 / kF0));
  REQUIRE(r.value);
  CHECK(*r.value == Approx(expected).epsilon(1e-9));
  CHECK(r.where == Approx(x_star * kF0).epsilon(1e-4));  // flat near the peak: f to 1e-4
  CHECK(r.pass);
  CHECK(r.margin == Approx(1 - expected).epsilon(1e-9));
}

TEST_CASE("a deviation spec fails beyond its max and says where", "[check]") {
  // The RC low-pass 1/(1 + s RC) against riaa: far apart above the 50 Hz turnover.
  const auto r = check_one("vsrc Vin (in, gnd) ac=1\nres R1 (in, out) 10k\ncap C1 (out, gnd) 10n\n",
                           "spec d deviation (out) target=riaa from=20Hz to=20kHz ref=1kHz max=0.5dB");
  REQUIRE(r.value);
  CHECK_FALSE(r.pass);
  CHECK(*r.value > 10);
  CHECK(r.spec.ref == 1e3);
}

namespace {

// An anti-alias style mask: flat within 0.1 dB to 100 Hz, then a sloped ceiling,
// -30 dB at 10 kHz and -70 dB at 100 kHz (straight in log f).
const std::string kMask = "at=10Hz min=-0.1dB max=0.1dB at=100Hz min=-0.1dB max=0.1dB "
                          "at=10kHz max=-30dB at=100kHz max=-70dB";

// The closest approach of the Butterworth's closed form, offset by `gain_db`, to
// kMask, sampled densely (2e5 points a decade); where it is.
std::pair<double, double> closest_to_mask(double gain_db) {
  double closest = 1e300, where = 0;
  auto consider = [&](double f, double m) {
    if (m < closest) closest = m, where = f;
  };
  for (int k = 0; k <= 800000; ++k) {
    const double f = 10 * std::pow(10.0, k / 200000.0);
    const double h = butterworth_db(f) + gain_db;
    if (f <= 100) consider(f, std::min(h + 0.1, 0.1 - h));
    const double t = std::log10(f);
    if (f >= 100 && f <= 10e3) consider(f, 0.1 + (-30.1) * (t - 2) / 2 - h);
    if (f >= 10e3) consider(f, -30 - 40 * (t - 4) - h);
  }
  return {closest, where};
}

}  // namespace

TEST_CASE("a mask's margin is the closest approach of the response to its bounds", "[check]") {
  const auto r = check_one(butterworth(), "spec aa mask (out) " + kMask);
  const auto [expected, where] = closest_to_mask(0);
  REQUIRE(r.value);
  CHECK(*r.value == Approx(expected).margin(1e-9));
  CHECK(r.where == Approx(where).epsilon(1e-3));
  CHECK(r.pass == (expected >= 0));
  CHECK(r.spec.mask.size() == 4);
  CHECK_FALSE(r.spec.mask[2].low);
  CHECK(r.note.find("closest at") == 0);
}

TEST_CASE("a mask written re ref= measures the response relative to its value there", "[check]") {
  // Gain 10 (20 dB) after the same filter: re 10 Hz, the same margins as at unity
  // gain absolute, but for the filter's own tiny droop at 10 Hz (closed form).
  const auto absolute = check_one(butterworth(), "spec aa mask (out) " + kMask);
  const auto relative = check_one(butterworth(10), "spec aa mask (out) ref=10Hz " + kMask);
  REQUIRE(absolute.value);
  REQUIRE(relative.value);
  CHECK(relative.spec.relative);
  CHECK(*relative.value == Approx(*absolute.value + butterworth_db(10)).margin(1e-9));
  // Without ref= the 20 dB of gain breaks the flat part of the mask.
  const auto loud = check_one(butterworth(10), "spec aa mask (out) " + kMask);
  REQUIRE(loud.value);
  CHECK_FALSE(loud.pass);
  CHECK(*loud.value == Approx(closest_to_mask(20).first).margin(1e-9));
}

namespace {

// Two sources into one node: V1 through R1, and I2 pushing its current into out;
// C1 from out to gnd. By superposition (nodal analysis by hand): from V1 alone
// H1 = 1/(1 + s R1 C1), and the transimpedance from I2 alone is Z = R1/(1 + s R1 C1).
const std::string kTwoSources =
    "vsrc V1 (a, gnd) ac=1\n"
    "isrc I2 (gnd, out) ac=2m\n"
    "res R1 (a, out) 1k\n"
    "cap C1 (out, gnd) 100n\n";
const double kFc = 1 / (2 * std::numbers::pi * 1e3 * 100e-9);

}  // namespace

TEST_CASE("input= measures the transfer from one source, every other source zeroed", "[check]") {
  const std::complex<double> pole(1, 1);  // 1 + j f/fc at f = fc
  const auto h1 = 1.0 / pole;             // V/V from V1
  const auto z2 = 1e3 / pole;             // V/A from I2 (a unit of it, 1 A)
  const std::string at = fmt::format("{:.17g}", kFc);
  const auto g1 = check_one(kTwoSources, "spec g gain (out) at=" + at + " min=0.5 input=V1");
  REQUIRE(g1.value);
  CHECK(*g1.value == Approx(std::abs(h1)).epsilon(1e-12));
  CHECK(g1.spec.unit == SpecUnit::ratio);
  const auto g2 = check_one(kTwoSources, "spec g gain (out) at=" + at + " min=1 input=I2");
  REQUIRE(g2.value);
  CHECK(*g2.value == Approx(std::abs(z2)).epsilon(1e-12));
  CHECK(g2.spec.unit == SpecUnit::volts_per_amp);
  // Without input=, every source's ac superposed: 1 V x H1 + 2 mA x Z2.
  const auto both = check_one(kTwoSources, "spec g gain (out) at=" + at + " min=0.5");
  REQUIRE(both.value);
  CHECK(*both.value == Approx(std::abs(h1 + 2e-3 * z2)).epsilon(1e-12));
  const auto p1 = check_one(kTwoSources, "spec p phase (out) at=" + at + " min=-46deg max=-44deg input=V1");
  REQUIRE(p1.value);
  CHECK(*p1.value == Approx(-45).epsilon(1e-12));
  // A corner and a flatness from V1 alone see the RC's own pole, not I2's.
  const auto c1 = check_one(kTwoSources, "spec c upper_corner (out) ref=1Hz min=1kHz input=V1");
  REQUIRE(c1.value);  // 3.0103 dB below |H(1 Hz)|: (1 + (f/fc)^2) = 2 (1 + (1Hz/fc)^2)
  CHECK(*c1.value == Approx(kFc * std::sqrt(1 + 2 / (kFc * kFc))).epsilon(1e-9));
  // The current of I2 from I2 alone is its unit; from V1 it is zero.
  const auto i2 = check_one(kTwoSources, "spec i gain current=I2 at=1kHz max=2 input=I2");
  REQUIRE(i2.value);
  CHECK(*i2.value == Approx(1).epsilon(1e-15));
  CHECK(i2.spec.unit == SpecUnit::amps_per_amp);
}

TEST_CASE("ac --input gives the transfer from one source alone", "[check][ac]") {
  auto e = elaborate_text(kTwoSources);
  REQUIRE(e.circuit);
  AcOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = {kFc};
  options.probes = {"out"};
  options.input = "I2";
  const AcResult r = run_ac(*e.circuit, options);
  CHECK(r.input == "I2");
  REQUIRE(r.traces.size() == 1);
  CHECK(std::abs(r.traces[0].values[0] - 1e3 / std::complex<double>(1, 1)) < 1e-9);
  options.input = "R1";
  CHECK_THROWS_WITH(run_ac(*e.circuit, options),
                    "error: --input 'R1' is a res, not a source\nhint: name a vsrc or isrc; the sources are V1, I2\n");
}

TEST_CASE("a corner spec with only the bound beyond the search range passes and says so", "[check]") {
  const std::string rc = "vsrc Vin (in, gnd) ac=1\nres R1 (in, out) 10k\ncap C1 (out, gnd) 10n\n";
  const auto up = check_one(rc, "spec c upper_corner (out) ref=10Hz min=100Hz to=1kHz");
  CHECK(up.pass);
  CHECK_FALSE(up.value);
  CHECK(up.note ==
        "the response stays within 3.01 dB of its value at 10Hz from 10Hz to 1kHz: the corner lies "
        "above 1kHz, so above min=100Hz");
  const auto windowed = check_one(rc, "spec c upper_corner (out) ref=10Hz min=100Hz max=2kHz to=1kHz");
  CHECK_FALSE(windowed.pass);  // a max= that cannot be checked is not met
  // A high-pass's lower corner below the search range passes a max= alone.
  const std::string hp = "vsrc Vin (in, gnd) ac=1\ncap C1 (in, out) 10n\nres R1 (out, gnd) 10k\n";
  const auto low = check_one(hp, "spec c lower_corner (out) ref=100kHz max=10kHz from=5kHz");
  CHECK(low.pass);
  CHECK(low.note.find("the corner lies below 5kHz, so below max=10kHz") != std::string::npos);
}

TEST_CASE("a noise spec measures a branch current with current=", "[check]") {
  // A resistor across a source: its thermal noise current sqrt(4kTB/R) all flows
  // through it (Johnson 1928, Nyquist 1928), at the default ambient of 25 C.
  const auto r = check_one("vsrc Vin (in, gnd)\nres R1 (in, gnd) 10k\n",
                           "spec n noise current=R1 from=10Hz to=10kHz max=200pA");
  REQUIRE(r.value);
  CHECK(r.spec.unit == SpecUnit::amps);
  CHECK(*r.value == Approx(std::sqrt(4 * 1.380649e-23 * 298.15 * (10e3 - 10) / 10e3)).epsilon(1e-6));
  CHECK(r.pass);  // 128 pA
}

TEST_CASE("an snr spec takes the signal at ref=", "[check]") {
  // The same noise, the signal taken at two frequencies: the ratios differ by the
  // gain's difference in dB there (the definition of the ratio).
  const std::string rc = "vsrc Vin (in, gnd) ac=1\nres R1 (in, out) 10k\ncap C1 (out, gnd) 10n\n";
  const std::string spec = "spec s snr (out) from=10Hz to=10kHz input=Vin level=1V min=60dB";
  const auto low = check_one(rc, spec + " ref=100Hz");
  const auto high = check_one(rc, spec + " ref=5kHz");
  REQUIRE(low.value);
  REQUIRE(high.value);
  auto gain_db = [](double f) { return -10 * std::log10(1 + std::pow(f / 1591.5494309189535, 2)); };
  CHECK(*low.value - *high.value == Approx(gain_db(100) - gain_db(5e3)).epsilon(1e-9));
  CHECK(low.note.find("at 100Hz") != std::string::npos);
  const auto centre = check_one(rc, spec);  // no ref=: the band's geometric centre, named in the note
  INFO(centre.note);
  CHECK(centre.note.find("at 316.2Hz") != std::string::npos);
}

TEST_CASE("an unknown target curve is an error with the nearest name", "[elaborate]") {
  CHECK(diagnostics_of(kRiaaNetwork + "spec d deviation (out) target=riax from=20Hz to=20kHz max=1dB\n") ==
        "main.tacet:7:31: error: unknown target curve 'riax'\n"
        "spec d deviation (out) target=riax from=20Hz to=20kHz max=1dB\n"
        "                              ^~~~\n"
        "hint: did you mean 'riaa'? (or an expression in s, e.g. 1/(1+s*75u))\n");
}

TEST_CASE("a target that vanishes at ref is an error", "[elaborate]") {
  CHECK(diagnostics_of(kRiaaNetwork + "spec d deviation (out) target=s-s from=20Hz to=20kHz max=1dB\n") ==
        "main.tacet:7:31: error: the target is zero at ref=20Hz, where the deviation is normalised\n"
        "spec d deviation (out) target=s-s from=20Hz to=20kHz max=1dB\n"
        "                              ^~~\n"
        "hint: choose a ref= where the target has a finite, non-zero value\n");
}

TEST_CASE("a mask whose frequencies do not increase is an error at the point", "[elaborate]") {
  CHECK(diagnostics_of(kRiaaNetwork + "spec m mask (out) at=4kHz max=1dB at=20kHz max=-40dB at=10kHz max=-40dB\n") ==
        "main.tacet:7:57: error: a mask's frequencies must increase: at=10kHz follows at=20kHz\n"
        "spec m mask (out) at=4kHz max=1dB at=20kHz max=-40dB at=10kHz max=-40dB\n"
        "                                                        ^~~~~\n"
        "hint: list the points from the lowest frequency to the highest\n");
}

TEST_CASE("a mask's bounds follow their point, and a mask has two points", "[elaborate]") {
  CHECK(diagnostics_of(kRiaaNetwork + "spec m mask (out) max=1dB at=4kHz at=20kHz max=-40dB\n") ==
        "main.tacet:7:19: error: max= of a mask bounds the point before it\n"
        "spec m mask (out) max=1dB at=4kHz at=20kHz max=-40dB\n"
        "                  ^~~\n"
        "hint: start each point with at=: at=4kHz min=-0.1dB max=0.1dB\n");
  CHECK(diagnostics_of(kRiaaNetwork + "spec m mask (out) at=4kHz max=1dB\n") ==
        "main.tacet:7:19: error: mask 'm' needs at least two points\n"
        "spec m mask (out) at=4kHz max=1dB\n"
        "                  ^~~~~~~\n"
        "hint: at=20Hz min=-0.1dB max=0.1dB at=4kHz min=-0.1dB max=0.1dB\n");
  CHECK(diagnostics_of(kRiaaNetwork + "spec m mask (out) at=4kHz max=1dB max=2dB at=5kHz max=1dB\n") ==
        "main.tacet:7:35: error: the point at 4kHz has max= twice\n"
        "spec m mask (out) at=4kHz max=1dB max=2dB at=5kHz max=1dB\n"
        "                                  ^~~\n");
}

TEST_CASE("input= must name a source", "[elaborate]") {
  CHECK(diagnostics_of(kRiaaNetwork + "spec g gain (out) at=1kHz min=0dB input=R1\n") ==
        "main.tacet:7:41: error: input= must name a voltage or current source\n"
        "spec g gain (out) at=1kHz min=0dB input=R1\n"
        "                                        ^~\n"
        "hint: write input=Vin\n");
}

TEST_CASE("buffered RC sections at the standard's poles deviate from a_weighting by < 1e-6 dB",
          "[check]") {
  // IEC 61672-1's weighting A is four zeros at 0, two poles at f1, one at f2, one at f3 and
  // two at f4 (the standard's formula, from memory: 20.598997 Hz, 107.65265 Hz,
  // 737.86223 Hz, 12194.217 Hz). Four buffered CR high-passes give s/(s + w) each, two
  // buffered RC low-passes w/(s + w) each (first-order sections, closed form).
  std::string net = "param r = 10k\nvsrc Vin (n0, gnd) ac=1\n";
  const char* kinds[] = {"hp", "hp", "hp", "hp", "lp", "lp"};
  const char* poles[] = {"20.598997", "20.598997", "107.65265", "737.86223", "12194.217", "12194.217"};
  for (int k = 0; k < 6; ++k) {
    const std::string in = "n" + std::to_string(k), mid = "m" + std::to_string(k),
                      out = "n" + std::to_string(k + 1), c = "1/(2*pi*" + std::string(poles[k]) + "*r)";
    if (std::string(kinds[k]) == "hp")
      net += "cap C" + std::to_string(k) + " (" + in + ", " + mid + ") " + c + "\nres R" + std::to_string(k) +
             " (" + mid + ", gnd) r\n";
    else
      net += "res R" + std::to_string(k) + " (" + in + ", " + mid + ") r\ncap C" + std::to_string(k) + " (" +
             mid + ", gnd) " + c + "\n";
    net += "vcvs E" + std::to_string(k) + " (" + out + ", gnd; " + mid + ", gnd) gain=1\n";
  }
  const auto r = check_one(net, "spec a deviation (n6) target=a_weighting from=10Hz to=20kHz ref=1kHz max=0.01dB");
  REQUIRE(r.value);
  CHECK(*r.value < 1e-6);
  CHECK(r.pass);
}
