#include <catch2/catch.hpp>

#include "tacet/language/units.hpp"

using namespace tacet;

namespace {

double si(const char* suffix, double number, Dimension expected) {
  auto unit = decode_suffix(suffix);
  REQUIRE(unit);
  REQUIRE(unit_fits(unit->dimension, expected));
  return apply_unit(number, *unit, expected);
}

}  // namespace

// SI prefixes: BIPM, The International System of Units (SI brochure, 9th ed., table 7).
TEST_CASE("SI prefixes scale by their powers of ten", "[units]") {
  CHECK(si("f", 1, Dimension::capacitance) == Approx(1e-15));
  CHECK(si("p", 1, Dimension::capacitance) == Approx(1e-12));
  CHECK(si("n", 4.7, Dimension::capacitance) == Approx(4.7e-9));
  CHECK(si("u", 1, Dimension::capacitance) == Approx(1e-6));
  CHECK(si("\xC2\xB5", 1, Dimension::capacitance) == Approx(1e-6));
  CHECK(si("m", 1, Dimension::inductance) == Approx(1e-3));
  CHECK(si("k", 22, Dimension::resistance) == Approx(22e3));
  CHECK(si("M", 1, Dimension::resistance) == Approx(1e6));
  CHECK(si("G", 1, Dimension::frequency) == Approx(1e9));
  CHECK(si("T", 1, Dimension::resistance) == Approx(1e12));
}

TEST_CASE("units with prefixes decode to their dimension", "[units]") {
  CHECK(decode_suffix("kohm")->dimension == Dimension::resistance);
  CHECK(decode_suffix("k\xCE\xA9")->dimension == Dimension::resistance);
  CHECK(decode_suffix("nF")->dimension == Dimension::capacitance);
  CHECK(decode_suffix("mH")->dimension == Dimension::inductance);
  CHECK(decode_suffix("MHz")->dimension == Dimension::frequency);
  CHECK(decode_suffix("mA/V")->dimension == Dimension::conductance);
  CHECK(decode_suffix("nV/rtHz")->dimension == Dimension::voltage_density);
  CHECK(si("MHz", 10, Dimension::frequency) == Approx(10e6));
  CHECK(si("mS", 2, Dimension::conductance) == Approx(2e-3));
}

TEST_CASE("decibels become a voltage ratio", "[units]") {
  // 20 log10(x): 110 dB is 10^5.5 (definition of the decibel for voltage ratios).
  CHECK(si("dB", 110, Dimension::gain) == Approx(316227.76601683794).epsilon(1e-12));
  CHECK(si("dB", 0, Dimension::gain) == 1.0);
}

TEST_CASE("percent is a hundredth", "[units]") { CHECK(si("%", 0.1, Dimension::ratio) == Approx(0.001)); }

TEST_CASE("slew rates per prefixed second convert to volts per second", "[units]") {
  CHECK(si("V/us", 10, Dimension::slew) == Approx(10e6));
  CHECK(si("V/ms", 1, Dimension::slew) == Approx(1e3));
  CHECK(si("V/s", 5, Dimension::slew) == Approx(5));
}

TEST_CASE("kelvin become Celsius for a temperature", "[units]") {
  // 0 C is 273.15 K by definition of the Celsius scale.
  CHECK(si("K", 300, Dimension::temperature) == Approx(26.85));
  CHECK(si("C", 25, Dimension::temperature) == 25);
  CHECK(si("", 25, Dimension::temperature) == 25);
}

TEST_CASE("a unit that does not fit the value is refused", "[units]") {
  CHECK_FALSE(unit_fits(decode_suffix("nF")->dimension, Dimension::resistance));
  CHECK_FALSE(unit_fits(decode_suffix("kHz")->dimension, Dimension::capacitance));
  CHECK_FALSE(unit_fits(decode_suffix("dB")->dimension, Dimension::resistance));
  CHECK(unit_fits(decode_suffix("k")->dimension, Dimension::resistance));
  CHECK(unit_fits(decode_suffix("nV")->dimension, Dimension::voltage_density));
}

TEST_CASE("unknown suffixes do not decode", "[units]") {
  CHECK_FALSE(decode_suffix("meg"));
  CHECK_FALSE(decode_suffix("kk"));
  CHECK_FALSE(decode_suffix("Ohm"));
  CHECK_FALSE(decode_suffix("kdB"));
}

TEST_CASE("common prefix mistakes get a hint", "[units]") {
  CHECK(suffix_hint("meg", Dimension::resistance) == "M is mega; write m for milli");
  CHECK(suffix_hint("MEG", Dimension::resistance) == "M is mega; write m for milli");
  CHECK(suffix_hint("K", Dimension::resistance) == "K is kelvin; write k for kilo");
  CHECK(suffix_hint("KHz", Dimension::frequency) == "K is kelvin; write k for kilo");
  CHECK(suffix_hint("U", Dimension::capacitance) == "write u or \xC2\xB5 for micro");
  CHECK(suffix_hint("khz", Dimension::frequency) == "write Hz, as in 10kHz");
}
