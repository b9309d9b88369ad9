// The stability specs (phase_margin, gain_margin, peaking, impedance, stable)
// measured by check, against closed forms named beside each check, and their
// elaboration errors at the position of the bad key.

#include <catch2/catch.hpp>

#include <cmath>
#include <complex>
#include <numbers>
#include <string>

#include <fmt/format.h>

#include "is_close.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/diff.hpp"
#include "tacet/analysis/poles.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

constexpr double kPi = std::numbers::pi;

CheckResult check_text(const std::string& text) {
  auto r = elaborate_text(text);
  INFO(r.diagnostics);
  REQUIRE(r.circuit);
  return run_check(*r.circuit);
}

SpecResult check_one(const std::string& text) {
  const CheckResult result = check_text(text);
  REQUIRE(result.specs.size() == 1);
  return result.specs[0];
}

// Non-inverting gain of 2 (beta = 1/2) around a two-pole op amp:
// gbw 10 MHz, aol 1e5 (dominant pole 100 Hz), fp2 8 MHz, rout 0.
const std::string kTwoPoleStage =
    "model two_pole opamp { gbw 10MHz  aol 100dB  fp2 8MHz }\n"
    "vsrc Vin (in, gnd) ac=1\n"
    "opamp U1 (+in, -fb, out) two_pole\n"
    "res Rf (out, fb) 1k\n"
    "res Rg (fb, gnd) 1k\n";

// The two-pole loop T = T0 / ((1 + s/w1)(1 + s/w2)): |T| = 1 where x = w^2
// solves x^2/(w1 w2)^2 + x (1/w1^2 + 1/w2^2) + 1 - T0^2 = 0, and the phase
// margin is 180 - atan(w/w1) - atan(w/w2) degrees (textbook closed form).
struct TwoPoleMargin {
  double f, pm;
};
TwoPoleMargin two_pole_margin(double t0, double f1, double f2) {
  const double w1 = 2 * kPi * f1, w2 = 2 * kPi * f2;
  const double a = 1 / (w1 * w1 * w2 * w2), b = 1 / (w1 * w1) + 1 / (w2 * w2), c = 1 - t0 * t0;
  const double w = std::sqrt((-b + std::sqrt(b * b - 4 * a * c)) / (2 * a));
  return {w / (2 * kPi), 180 - (std::atan(w / w1) + std::atan(w / w2)) * 180 / kPi};
}

}  // namespace

TEST_CASE("a phase_margin spec measures the two-pole loop's closed-form margin", "[check][loop]") {
  const TwoPoleMargin expected = two_pole_margin(1e5 * 0.5, 100, 8e6);
  const SpecResult r = check_one(kTwoPoleStage + "spec pm phase_margin opamp=U1 min=45deg\n");
  REQUIRE(r.value);
  CHECK_THAT(*r.value, IsClose(expected.pm, 1e-9));
  CHECK_THAT(r.where, IsClose(expected.f, 1e-9));
  CHECK(r.spec.unit == SpecUnit::degrees);
  // About 61 degrees: inside a 45 degree minimum, outside a 65 degree one.
  CHECK(r.pass);
  CHECK_THAT(r.margin, IsClose(expected.pm - 45, 1e-9));
  const SpecResult tight = check_one(kTwoPoleStage + "spec pm phase_margin opamp=U1 min=65deg\n");
  CHECK_FALSE(tight.pass);
  CHECK(tight.margin < 0);
}

TEST_CASE("a gain_margin spec measures the three-pole loop's closed-form margin", "[check][loop]") {
  // Follower whose feedback passes an RC low-pass (1 MHz) through a unity
  // buffer: T = A(s) / (1 + s R C), three real poles at 10 Hz, 3 MHz, 1 MHz.
  // Their phases sum to 180 degrees where w^2 = w1 w2 + w1 w3 + w2 w3 (the
  // imaginary part of the cubic (1 + s/w1)(1 + s/w2)(1 + s/w3) vanishes), and
  // the gain margin is -20 log10 |T| there (closed form).
  const std::string text =
      "model three opamp { gbw 1MHz  aol 100dB  fp2 3MHz }\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "opamp U1 (+in, -fb, out) three\n"
      "res R3 (out, n) 1k\n"
      "cap C3 (n, gnd) 1n / (2 * pi)\n"
      "vcvs E1 (fb, gnd; n, gnd) gain=1\n"
      "spec gm gain_margin opamp=U1 min=10dB\n";
  const double w1 = 2 * kPi * 10, w2 = 2 * kPi * 3e6, w3 = 2 * kPi * 1e6;
  const double w = std::sqrt(w1 * w2 + w1 * w3 + w2 * w3);
  const double mag = 1e5 / std::sqrt((1 + std::pow(w / w1, 2)) * (1 + std::pow(w / w2, 2)) *
                                     (1 + std::pow(w / w3, 2)));
  const SpecResult r = check_one(text);
  REQUIRE(r.value);
  CHECK_THAT(*r.value, IsClose(-20 * std::log10(mag), 1e-9));
  CHECK_THAT(r.where, IsClose(w / (2 * kPi), 1e-9));
  CHECK(r.pass);  // about 12 dB
}

TEST_CASE("margin specs on one op amp share one loop search", "[check][loop]") {
  const CheckResult result = check_text(kTwoPoleStage +
                                        "spec pm phase_margin opamp=U1 min=45deg\n"
                                        "spec pm2 phase_margin opamp=U1 min=50deg\n"
                                        "spec gm gain_margin opamp=U1 min=6dB\n");
  REQUIRE(result.specs.size() == 3);
  CHECK(*result.specs[0].value == *result.specs[1].value);
  // Two poles never reach -180 degrees and |T| has fallen far below 1 at the
  // top of the range: the gain margin is unbounded and passes, with no number.
  CHECK_FALSE(result.specs[2].value);
  CHECK(result.specs[2].pass);
  CHECK(result.specs[2].note.find("does not reach -180 deg") != std::string::npos);
}

TEST_CASE("a margin spec whose range ends above unity loop gain fails with a note", "[check][loop]") {
  const SpecResult r = check_one(kTwoPoleStage + "spec pm phase_margin opamp=U1 min=45deg to=100kHz\n");
  CHECK_FALSE(r.value);
  CHECK_FALSE(r.pass);
  CHECK(r.note.find("|T| of U1 is still") == 0);
  CHECK(r.note.find("widen to=") != std::string::npos);
}

TEST_CASE("a loop that never reaches unity gain has an unbounded phase margin", "[check][loop]") {
  // An op amp of 0 dB open-loop gain as a follower: |T| = 1/2 at DC, then less.
  const std::string text =
      "model weak opamp { gbw 1MHz  aol 0dB }\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "opamp U1 (+in, -out, out) weak\n"
      "spec pm phase_margin opamp=U1 min=45deg\n";
  const SpecResult r = check_one(text);
  CHECK_FALSE(r.value);
  CHECK(r.pass);
  CHECK(r.note.find("stays below 1") != std::string::npos);
}

TEST_CASE("a peaking spec finds the resonant peak of a second-order section", "[check]") {
  // Series RLC, output across C: H = 1 / (LC s^2 + RC s + 1), zeta = (R/2) sqrt(C/L).
  // Resonant peak Mr = 1 / (2 zeta sqrt(1 - zeta^2)) at wr = w0 sqrt(1 - 2 zeta^2)
  // (second-order system's frequency response, Ogata, Modern Control
  // Engineering; from memory).
  const double r_ohm = 10, l = 1e-3, c = 1e-6;
  const double zeta = r_ohm / 2 * std::sqrt(c / l);
  const double f0 = 1 / (2 * kPi * std::sqrt(l * c));
  const std::string text =
      "vsrc Vin (in, gnd) ac=1\n"
      "res R1 (in, a) 10\n"
      "ind L1 (a, out) 1m\n"
      "cap C1 (out, gnd) 1u\n"
      "spec pk peaking (out) from=1mHz to=1MHz max=12dB\n";
  const SpecResult r = check_one(text);
  REQUIRE(r.value);
  // ref defaults to from=1 mHz, where |H| differs from 1 by ~(f/f0)^2 ~ 1e-13.
  CHECK_THAT(*r.value, IsClose(20 * std::log10(1 / (2 * zeta * std::sqrt(1 - zeta * zeta))), 1e-9));
  CHECK_THAT(r.where, IsClose(f0 * std::sqrt(1 - 2 * zeta * zeta), 1e-6));
  CHECK(r.pass);
  CHECK(r.spec.unit == SpecUnit::db);
  const SpecResult tight = check_one(text.substr(0, text.find("max=")) + "max=3dB\n");
  CHECK_FALSE(tight.pass);  // 10.1 dB for zeta = 0.158
}

namespace {

// Follower of a single-pole op amp with an open-loop output resistance.
const std::string kFollower =
    "model rout50 opamp { gbw 1MHz  aol 100dB  rout 50ohm }\n"
    "vsrc Vin (in, gnd) ac=1\n"
    "opamp U1 (+in, -out, out) rout50\n";

// Closed-loop output impedance of a follower, rout / (1 + A(s)) (feedback
// reduces the output resistance by 1 + loop gain; Bode 1945, from memory).
std::complex<double> follower_z(double f, double fp2 = 0) {
  const std::complex<double> s(0, 2 * kPi * f);
  std::complex<double> a = 1e5 / (1.0 + s / (2 * kPi * 10.0));
  if (fp2 > 0) a /= 1.0 + s / (2 * kPi * fp2);
  return 50.0 / (1.0 + a);
}

}  // namespace

TEST_CASE("an impedance spec measures a follower's closed-loop output impedance", "[check]") {
  const SpecResult r = check_one(kFollower + "spec zout impedance (out) at=100kHz max=10ohm\n");
  REQUIRE(r.value);
  CHECK_THAT(*r.value, IsClose(std::abs(follower_z(100e3)), 1e-9));
  CHECK(r.spec.probe == "z(out)");
  CHECK(r.spec.unit == SpecUnit::ohms);
  CHECK(r.pass);  // about 5 ohm
  const SpecResult low = check_one(kFollower + "spec zout impedance (out) at=100kHz min=6ohm\n");
  CHECK_FALSE(low.pass);
}

TEST_CASE("an impedance spec over a band finds the largest |Z| inside it", "[check]") {
  // With a second pole the follower's output impedance peaks near the loop's
  // crossover: rout / (1 + A(s)) scanned densely here, independently of the
  // spec's search, and the spec's refined maximum compared with it.
  const std::string text =
      "model peaky opamp { gbw 1MHz  aol 100dB  fp2 1MHz  rout 50ohm }\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "opamp U1 (+in, -out, out) peaky\n"
      "spec zpk impedance (out) from=10kHz to=100MHz max=100ohm\n";
  double best = 0, best_f = 0;
  for (int k = 0; k <= 400000; ++k) {
    const double f = 1e4 * std::pow(1e4, k / 400000.0);
    if (const double z = std::abs(follower_z(f, 1e6)); z > best) best = z, best_f = f;
  }
  const SpecResult r = check_one(text);
  REQUIRE(r.value);
  CHECK(best > 50);  // an interior peak above rout
  CHECK_THAT(*r.value, IsClose(best, 1e-9));
  CHECK_THAT(r.where, IsClose(best_f, 1e-4));
}

namespace {

// A single-pole op amp (gbw 1 MHz, aol 1e4: dominant pole 100 Hz) with a
// divider of beta = 1/2 from the output to one input.
std::string divider_stage(bool positive) {
  return std::string("model sp opamp { gbw 1MHz  aol 80dB }\n") +
         (positive ? "opamp U1 (+fb, -gnd, out) sp\n" : "opamp U1 (+gnd, -fb, out) sp\n") +
         "res Rf (out, fb) 1k\nres Rg (fb, gnd) 1k\nspec st stable\n";
}

}  // namespace

TEST_CASE("a stable spec passes negative feedback and fails positive feedback", "[check][poles]") {
  // The closed-loop pole of a single-pole amplifier with feedback fraction
  // beta: s = -wp (1 + aol beta) for negative feedback, s = wp (aol beta - 1)
  // for positive (the root of 1 + s/wp +- aol beta = 0; Bode 1945).
  const double fp = 1e6 / 1e4;
  const SpecResult negative = check_one(divider_stage(false));
  REQUIRE(negative.value);
  CHECK_THAT(*negative.value, IsClose(-fp * (1 + 1e4 * 0.5), 1e-9));
  CHECK(negative.pass);
  const SpecResult positive = check_one(divider_stage(true));
  REQUIRE(positive.value);
  CHECK_THAT(*positive.value, IsClose(fp * (1e4 * 0.5 - 1), 1e-9));
  CHECK_FALSE(positive.pass);
  CHECK(positive.note.find("1 pole in the right half-plane") != std::string::npos);
}

TEST_CASE("a stable spec beyond the dense pole method is unsolved alone", "[check][poles]") {
  std::string text = "vsrc Vin (in, gnd) ac=1\nres R0 (in, n0) 1k\n";
  for (int k = 0; k < kMaxPoleUnknowns; ++k)
    text += fmt::format("res R{} (n{}, n{}) 1k\ncap C{} (n{}, gnd) 1n\n", k + 1, k, k + 1, k, k + 1);
  text += "spec st stable\nspec g gain (n1) at=1Hz max=0dB\n";
  const CheckResult result = check_text(text);
  REQUIRE(result.specs.size() == 2);
  CHECK(result.unsolved() == 1);
  CHECK_FALSE(result.specs[0].pass);
  CHECK(result.specs[0].unsolved.find("more than the 600 the dense pole method serves") !=
        std::string::npos);
  CHECK(result.specs[1].value);  // the other spec is still measured
  CHECK(result.specs[1].pass);
}

TEST_CASE("stability specs reject bad keys at their position", "[check][elaborate]") {
  SECTION("an op amp that does not exist, with the nearest name") {
    auto r = elaborate_text(kTwoPoleStage + "spec pm phase_margin opamp=U2 min=45deg\n");
    CHECK_FALSE(r.circuit);
    CHECK(r.diagnostics ==
          "main.tacet:6:28: error: no op amp named 'U2'\n"
          "spec pm phase_margin opamp=U2 min=45deg\n"
          "                           ^~\n"
          "hint: did you mean 'U1'?\n");
  }
  SECTION("an element that is not an op amp") {
    auto r = elaborate_text(kTwoPoleStage + "spec gm gain_margin opamp=Rf min=6dB\n");
    CHECK(r.diagnostics.find("main.tacet:6:27: error: no op amp named 'Rf' ('Rf' is a res)") == 0);
  }
  SECTION("a phase margin's minimum in dB") {
    auto r = elaborate_text(kTwoPoleStage + "spec pm phase_margin opamp=U1 min=45dB\n");
    CHECK(r.diagnostics.find("main.tacet:6:35: error: unit 'dB'") == 0);
  }
  SECTION("a gain margin's minimum in degrees") {
    auto r = elaborate_text(kTwoPoleStage + "spec gm gain_margin opamp=U1 min=10deg\n");
    CHECK(r.diagnostics.find("main.tacet:6:34: error: unit 'deg'") == 0);
  }
  SECTION("a margin spec without its op amp") {
    auto r = elaborate_text(kTwoPoleStage + "spec pm phase_margin min=45deg\n");
    CHECK(r.diagnostics.find("main.tacet:6:6: error: spec 'pm' needs opamp=") == 0);
  }
  SECTION("a margin spec given connections") {
    auto r = elaborate_text(kTwoPoleStage + "spec pm phase_margin (out) opamp=U1 min=45deg\n");
    CHECK(r.diagnostics.find("error: a phase_margin spec takes no connections") != std::string::npos);
  }
  SECTION("an impedance spec at a frequency and over a band") {
    auto r = elaborate_text(kFollower + "spec z impedance (out) at=1k from=1k max=1ohm\n");
    CHECK(r.diagnostics.find("main.tacet:4:35: error: an impedance spec is measured at= one "
                             "frequency or over from= to=") == 0);
  }
  SECTION("an impedance spec with half a band") {
    auto r = elaborate_text(kFollower + "spec z impedance (out) to=1M max=1ohm\n");
    CHECK(r.diagnostics.find("main.tacet:4:27: error: to= needs from=: a band has two ends") == 0);
  }
  SECTION("an impedance spec with neither") {
    auto r = elaborate_text(kFollower + "spec z impedance (out) max=1ohm\n");
    CHECK(r.diagnostics.find("main.tacet:4:6: error: spec 'z' needs at= or a band from= to=") == 0);
  }
  SECTION("an impedance spec's smallest |Z| over a band") {
    auto r = elaborate_text(kFollower + "spec z impedance (out) from=1k to=1M min=1ohm\n");
    CHECK(r.diagnostics.find("main.tacet:4:42: error: over a band an impedance spec bounds the "
                             "largest |Z|: max= only") == 0);
  }
  SECTION("an impedance limit that is not a resistance") {
    auto r = elaborate_text(kFollower + "spec z impedance (out) at=1k max=1V\n");
    CHECK(r.diagnostics.find("main.tacet:4:34: error: unit 'V' is a voltage; a resistance is wanted") == 0);
  }
  SECTION("a stable spec with an option") {
    auto r = elaborate_text(kFollower + "spec st stable max=0\n");
    CHECK(r.diagnostics.find("main.tacet:4:16: error: a stable spec takes no option 'max'") == 0);
  }
  SECTION("a peaking spec without its limit") {
    auto r = elaborate_text(kFollower + "spec pk peaking (out) from=1k to=1M\n");
    CHECK(r.diagnostics.find("main.tacet:4:6: error: spec 'pk' needs max=") == 0);
  }
}

TEST_CASE("a margin spec on a loop that starts left of -1 fails with a note", "[check][loop]") {
  // Positive feedback of beta = 1/2 around aol = 1e4: T = -aol beta / (1 + s/wp)
  // is -5000 at DC, a latch; by 180 + arg T its crossover would read
  // as some 270 degrees of phase margin.
  std::string text = divider_stage(true);
  text.replace(text.find("spec st stable"), 14, "spec pm phase_margin opamp=U1 min=45deg");
  const SpecResult r = check_one(text);
  CHECK_FALSE(r.value);
  CHECK_FALSE(r.pass);
  CHECK(r.note.find("Re T of U1 is -4950 at 10Hz (|T| = 4975)") == 0);  // T(10 Hz) = -5000 / (1 + j/10)
  CHECK(r.note.find("positive feedback with |T| > 1") != std::string::npos);
}

TEST_CASE("diff reports a margin spec that moved between revisions", "[check][diff]") {
  // The two-pole stage with its feedback divider changed from beta = 1/2 to
  // beta = 1/10: T0 = 5e4 -> 1e4 moves the crossover down and the margin up,
  // each by its closed form.
  const std::string spec = "spec pm phase_margin opamp=U1 min=45deg\n";
  std::string rev_b = kTwoPoleStage + spec;
  rev_b.replace(rev_b.find("res Rf (out, fb) 1k"), 19, "res Rf (out, fb) 9k");
  auto old_c = elaborate_text(kTwoPoleStage + spec), new_c = elaborate_text(rev_b);
  REQUIRE(old_c.circuit);
  REQUIRE(new_c.circuit);
  const DiffResult d = run_diff(*old_c.circuit, *new_c.circuit, {});
  REQUIRE(d.specs.size() == 1);
  CHECK(d.specs[0].name == "pm");
  REQUIRE(d.specs[0].before->value);
  REQUIRE(d.specs[0].after->value);
  CHECK_THAT(*d.specs[0].before->value, IsClose(two_pole_margin(1e5 * 0.5, 100, 8e6).pm, 1e-9));
  CHECK_THAT(*d.specs[0].after->value, IsClose(two_pole_margin(1e5 * 0.1, 100, 8e6).pm, 1e-9));
}
