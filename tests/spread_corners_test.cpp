// Worst-case corners of tacet spread --corners, against closed forms at the
// corner each test states.

#include <catch2/catch.hpp>

#include <cmath>
#include <complex>
#include <string>

#include "is_close.hpp"
#include "tacet/analysis/spread_corners.hpp"
#include "tacet/common/constants.hpp"
#include "tacet/common/errors.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;
using tacet::testing::IsClose;

namespace {

Circuit circuit_of(const std::string& text) {
  auto e = elaborate_text(text);
  INFO(e.diagnostics);
  REQUIRE(e.circuit);
  return std::move(*e.circuit);
}

SpecCorner only_corner(const std::string& text) {
  const auto corners = run_spread_corners(circuit_of(text));
  REQUIRE(corners.size() == 1);
  return corners.front();
}

const CornerDriver* driver(const SpecCorner& c, const std::string& name, const std::string& param = "value") {
  for (const auto& d : c.drivers)
    if (d.name == name && d.param == param) return &d;
  return nullptr;
}

std::string divider(const std::string& r1, const std::string& r2, const std::string& window) {
  return "vsrc Vin (in, gnd) ac=1\n"
         "res R1 (in, out) 10k " + r1 + "\n"
         "res R2 (out, gnd) 10k " + r2 + "\n"
         "spec half gain (out) at=1kHz " + window + "\n";
}

// Divider H = R2/(R1 + R2) (Ohm's law); at R1 (1 + a), R2 (1 + b) it is
// R2 (1 + b)/(R1 (1 + a) + R2 (1 + b)), exactly.
double divider_at(double a, double b) { return (1 + b) / ((1 + a) + (1 + b)); }

}  // namespace

TEST_CASE("a divider window's worst corner is R1 at +tol and R2 at -tol when min is nearer",
          "[spread][corners]") {
  // min is 0.005 away at the corner, max 0.01: toward min is the worse.
  const SpecCorner c = only_corner(divider("tol=1%", "tol=1%", "min=0.49 max=0.515"));
  REQUIRE(c.computed);
  CHECK(c.toward == CornerDirection::toward_min);
  REQUIRE(c.value);
  // R2 (1 - t)/(R1 (1 + t) + R2 (1 - t)), closed form above.
  CHECK_THAT(*c.value, IsClose(divider_at(0.01, -0.01), 1e-12));
  CHECK_THAT(c.margin, IsClose(divider_at(0.01, -0.01) - 0.49, 1e-9));
  CHECK(c.pass);
  // First order: dH/dd = -+R1 R2/(R1 + R2)^2 = -+1/4 for each part.
  CHECK_THAT(c.predicted, IsClose(0.5 - 2 * 0.25 * 0.01, 1e-12));
  CHECK(c.agrees);
  REQUIRE(driver(c, "R1"));
  CHECK(driver(c, "R1")->sign == +1);
  CHECK(driver(c, "R1")->deviation == Approx(0.01));
  CHECK_THAT(driver(c, "R1")->shift, IsClose(-0.0025, 1e-9));
  REQUIRE(driver(c, "R2"));
  CHECK(driver(c, "R2")->sign == -1);
  CHECK(c.moved == 2);
  CHECK(c.held == 0);
}

TEST_CASE("a divider pushed toward its max fails there when the max is too tight", "[spread][corners]") {
  const SpecCorner c = only_corner(divider("tol=1%", "tol=1%", "max=0.503"));
  REQUIRE(c.value);
  CHECK(c.toward == CornerDirection::toward_max);
  CHECK_THAT(*c.value, IsClose(divider_at(-0.01, 0.01), 1e-12));  // R1 at -tol, R2 at +tol
  CHECK_FALSE(c.pass);
  CHECK_THAT(c.margin, IsClose(0.503 - divider_at(-0.01, 0.01), 1e-9));
}

TEST_CASE("a matched divider's corner moves the ratios and holds the common draw", "[spread][corners]") {
  // The common draw scales both parts alike and leaves R2/(R1 + R2) alone
  // (its first-order effect is -1/4 + 1/4 = 0): held at nominal. The ratio
  // draws go R1 up, R2 down: R2 (1 - r)/(R1 (1 + r) + R2 (1 - r)).
  const SpecCorner c = only_corner(
      divider("tol=1% match=RA ratio=0.1%", "tol=1% match=RA ratio=0.1%", "min=0.4996 max=0.51"));
  REQUIRE(c.value);
  CHECK(c.toward == CornerDirection::toward_min);
  CHECK_THAT(*c.value, IsClose(divider_at(0.001, -0.001), 1e-12));
  CHECK_FALSE(c.pass);  // 0.4995 < 0.4996
  CHECK(c.held == 1);
  CHECK(c.moved == 2);
  CHECK(driver(c, "RA", "set") == nullptr);
  REQUIRE(driver(c, "R1", "ratio"));
  CHECK(driver(c, "R1", "ratio")->sign == +1);
  CHECK(driver(c, "R1", "ratio")->deviation == Approx(0.001));
}

TEST_CASE("a part that does not move the spec is held at nominal", "[spread][corners]") {
  // R3 loads the ideal source: the divider does not see it (first-order effect 0).
  const SpecCorner c = only_corner(divider("tol=1%", "tol=1%", "min=0.49") +
                                   "res R3 (in, gnd) 1k tol=5%\n");
  CHECK(c.held == 1);
  CHECK(c.moved == 2);
  CHECK(driver(c, "R3") == nullptr);
  REQUIRE(c.value);
  CHECK_THAT(*c.value, IsClose(divider_at(0.01, -0.01), 1e-12));
}

TEST_CASE("an RC low-pass corner frequency is worst with R and C at the same end", "[spread][corners]") {
  // fc = 1/(2 pi R C) (first-order low-pass; e.g. Horowitz and Hill, The Art
  // of Electronics, 3rd ed., 1.7.1), measured 3.0103 dB below |H(1 Hz)|: at
  // fc' the measured corner is fc' sqrt(10^((drop - ref_db)/10) - 1) with
  // ref_db = -10 log10(1 + (1 Hz/fc')^2) (the closed form of check's test).
  const double r = 10e3, cap = 10e-9;
  auto measured = [](double fc) {
    const double ref_db = -10 * std::log10(1 + std::pow(1 / fc, 2));
    return fc * std::sqrt(std::pow(10, -(ref_db - 10 * std::log10(2.0)) / 10) - 1);
  };
  const std::string rc =
      "vsrc Vin (in, gnd) ac=1\n"
      "res R1 (in, out) 10k tol=1%\n"
      "cap C1 (out, gnd) 10n tol=5%\n";
  SECTION("toward max: both at -tol") {
    const SpecCorner c = only_corner(rc + "spec fc upper_corner (out) ref=1Hz max=1.7kHz\n");
    REQUIRE(c.value);
    CHECK(c.toward == CornerDirection::toward_max);
    const double fc = 1 / (2 * kPi * r * 0.99 * cap * 0.95);
    CHECK_THAT(*c.value, IsClose(measured(fc), 1e-7));
    CHECK(c.pass);  // 1.692 kHz
    CHECK(driver(c, "R1")->sign == -1);
    CHECK(driver(c, "C1")->sign == -1);
    // First order: dfc/dd = -fc for each, so fc (1 + 0.01 + 0.05); the full
    // solve gives fc/(0.99 x 0.95) = fc x 1.0633: within the factor 2.
    CHECK_THAT(c.predicted, IsClose(measured(1 / (2 * kPi * r * cap)) * 1.06, 1e-6));
    CHECK(c.agrees);
  }
  SECTION("a window: both ends tried, toward min the worse here") {
    const SpecCorner c = only_corner(rc + "spec fc upper_corner (out) ref=1Hz min=1.51kHz max=1.8kHz\n");
    REQUIRE(c.value);
    CHECK(c.toward == CornerDirection::toward_min);
    const double fc = 1 / (2 * kPi * r * 1.01 * cap * 1.05);
    CHECK_THAT(*c.value, IsClose(measured(fc), 1e-7));
    CHECK_FALSE(c.pass);  // 1.5007 kHz < 1.51 kHz
  }
}

TEST_CASE("a non-inverting stage's gain corner takes gbw low, as Black's formula says",
          "[spread][corners]") {
  // G = A/(1 + A beta), beta = Rg/(Rf + Rg) (Black 1934), A = aol/(1 + j f
  // aol/gbw) (single pole): |G| at 200 kHz falls with gbw, rises with Rf and
  // falls with Rg, so toward min: gbw at -30 %, Rf at -1 %, Rg at +1 %.
  const SpecCorner c = only_corner(
      "model spry opamp { gbw 1MHz gbw_tol 30% aol 100dB }\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "res Rg (fb, gnd) 1k tol=1%\n"
      "res Rf (out, fb) 9k tol=1%\n"
      "opamp U1 (+in, -fb, out) spry\n"
      "spec g200k gain (out) at=200kHz min=4\n");
  auto black = [](double gbw, double rf, double rg) {
    const double aol = 1e5, f = 2e5;
    const std::complex<double> a = aol / (1.0 + std::complex<double>(0, f * aol / gbw));
    return std::abs(a / (1.0 + a * rg / (rf + rg)));
  };
  REQUIRE(c.value);
  CHECK(c.toward == CornerDirection::toward_min);
  CHECK(driver(c, "U1", "gbw")->sign == -1);
  CHECK(driver(c, "Rf")->sign == -1);
  CHECK(driver(c, "Rg")->sign == +1);
  CHECK_THAT(*c.value, IsClose(black(0.7e6, 9e3 * 0.99, 1e3 * 1.01), 1e-9));
  CHECK(c.pass == (black(0.7e6, 9e3 * 0.99, 1e3 * 1.01) >= 4));
  CHECK(c.agrees);
  // gbw moves it most: it is listed first.
  CHECK(c.drivers.front().param == "gbw");
}

TEST_CASE("the corner says so when the full solve contradicts the linear prediction",
          "[spread][corners]") {
  // Series RLC, output across C: |H| = 1/sqrt((1 - x^2)^2 + (2 zeta x)^2),
  // x = f/f0, f0 = 1/(2 pi sqrt(L C)), zeta = (R/2) sqrt(C/L) (second-order
  // system's frequency response, Ogata, Modern Control Engineering; from
  // memory). At 4.7 kHz, below the peak (4.906 kHz), a larger C lowers the
  // peak toward 4.7 kHz, so to first order |H| rises; at C + 10 % the peak
  // (4.678 kHz, and lower: zeta grows with C) has passed below it and |H| is
  // lower than at nominal.
  const double r = 10, l = 1e-3, cap = 1e-6, f = 4700;
  auto h = [&](double c_value) {
    const double f0 = 1 / (2 * kPi * std::sqrt(l * c_value));
    const double zeta = r / 2 * std::sqrt(c_value / l), x = f / f0;
    return 1 / std::sqrt(std::pow(1 - x * x, 2) + std::pow(2 * zeta * x, 2));
  };
  const SpecCorner c = only_corner(
      "vsrc Vin (in, gnd) ac=1\n"
      "res R1 (in, a) 10\n"
      "ind L1 (a, out) 1m\n"
      "cap C1 (out, gnd) 1u tol=10%\n"
      "spec g gain (out) at=4.7kHz max=3.3\n");
  REQUIRE(c.value);
  CHECK(c.toward == CornerDirection::toward_max);
  CHECK(driver(c, "C1")->sign == +1);
  CHECK_THAT(c.nominal, IsClose(h(cap), 1e-9));
  CHECK_THAT(*c.value, IsClose(h(1.1 * cap), 1e-9));
  CHECK(c.predicted > c.nominal);
  CHECK(*c.value < c.nominal);
  CHECK_FALSE(c.agrees);
}

TEST_CASE("a toleranced noise density is pushed by a difference of its own", "[spread][corners]") {
  // A follower whose only noise is en (no resistors, no in into a zero
  // source impedance): the output noise is proportional to en, so at
  // en (1 + t) it is the nominal times 1 + t (linearity of the rms in en).
  // en is not a matrix entry: the sensitivities do not list it.
  const SpecCorner c = only_corner(
      "model hushed opamp { gbw 10MHz aol 120dB en 5nV/rtHz en_tol 20% }\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "opamp U1 (+in, -out, out) hushed\n"
      "spec hiss noise (out) from=20Hz to=20kHz max=1uV\n");
  REQUIRE(c.value);
  CHECK(c.toward == CornerDirection::toward_max);
  REQUIRE(driver(c, "U1", "en"));
  CHECK(driver(c, "U1", "en")->sign == +1);
  CHECK_THAT(*c.value, IsClose(1.2 * c.nominal, 1e-9));
  CHECK(c.agrees);
}

TEST_CASE("corners need something toleranced", "[spread][corners]") {
  const Circuit plain = circuit_of(divider("", "", "min=0.4"));
  try {
    run_spread_corners(plain);
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()) ==
          "error: --corners has no value to push: no part has tol= or ratio= and no model has a KEY_tol\n"
          "hint: give the parts their tolerances, e.g. res R1 (a, b) 10k tol=1% (docs/language.md, "
          "Tolerances)\n");
  }
}

TEST_CASE("a spec without a limit has no corner to approach", "[spread][corners]") {
  // Every spec line has a limit; a circuit built by a program may not.
  Circuit c = circuit_of(divider("tol=1%", "tol=1%", "min=0.4"));
  c.specs[0].min.reset();
  const auto corners = run_spread_corners(c);
  REQUIRE(corners.size() == 1);
  CHECK_FALSE(corners[0].computed);
  CHECK(corners[0].note == "no limit to approach");
}
