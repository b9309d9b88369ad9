// Headroom at a declared input level: the level's conversions, the signal at
// each op-amp pin against the rails, the slew rate a sine needs, the cautions,
// and the level= syntax with its errors.

#include "tacet/analysis/headroom.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "tacet/common/errors.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

// A non-inverting stage of gain 1 + rf/rg driven by Vin at `level` over 20 Hz..20 kHz.
Circuit driven_stage(double rf, double rg, SignalLevel level, OpAmpModel model) {
  CircuitBuilder b;
  Element& vin = b.vsrc("Vin", "in", "gnd", 0);
  vin.level = level;
  vin.band_low = 20, vin.band_high = 20e3;
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, rf);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, rg);
  b.opamp("U1", "in", "fb", "out", model);
  return b.circuit;
}

// Near-ideal: the closed-loop gain is within 1e-8 of 1 + Rf/Rg up to 20 kHz.
OpAmpModel fast_model() { return single_pole(1e15, 1e10); }

HeadroomResult headroom_of(const Circuit& circuit) {
  return run_headroom(circuit, run_bias(circuit));
}

std::string elaboration_errors(const std::string& text) {
  MemoryFileReader reader;
  reader.add("main.tacet", text);
  SourceManager sources;
  Diagnostics diagnostics(sources);
  elaborate_file("main.tacet", reader, sources, diagnostics, {});
  return diagnostics.render_all();
}

std::optional<SignalLevel> level_of(const std::string& options,
                                    const ElaborateOptions& elaborate = {}) {
  MemoryFileReader reader;
  reader.add("main.tacet", "vsrc Vin (in, gnd) " + options + "\nres R1 (in, gnd) 1k\n");
  SourceManager sources;
  Diagnostics diagnostics(sources);
  auto circuit = elaborate_file("main.tacet", reader, sources, diagnostics, elaborate);
  REQUIRE(circuit);
  return circuit->elements[0].level;
}

}  // namespace

TEST_CASE("200 W into 8 ohm is 40 V rms and 56.6 V peak", "[headroom]") {
  // P = V^2 / R (common practice): V = sqrt(200 x 8) = 40 V rms; peak = rms sqrt(2).
  const SignalLevel level{LevelUnit::power, 200, 8};
  CHECK_THAT(rms_volts(level), IsClose(40.0, 1e-12));
  CHECK_THAT(peak_volts(level), IsClose(56.568542494923804, 1e-12));
  CHECK_THAT(peak_volts({LevelUnit::rms, 2, 0}), IsClose(2 * std::sqrt(2.0), 1e-12));
  CHECK(peak_volts({LevelUnit::peak, 10, 0}) == 10);
}

TEST_CASE("a level above 30 V rms or 42.4 V peak is hazardous and carries a caution",
          "[headroom]") {
  // The usual extra-low-voltage limits (common practice; docs/analyses/bias.md).
  CHECK(is_hazardous({LevelUnit::power, 200, 8}));
  CHECK(is_hazardous({LevelUnit::rms, 30.5, 0}));
  CHECK(is_hazardous({LevelUnit::peak, 43, 0}));
  CHECK_FALSE(is_hazardous({LevelUnit::rms, 29, 0}));
  CHECK_FALSE(is_hazardous({LevelUnit::peak, 42, 0}));
  OpAmpModel m = fast_model();
  const auto h = headroom_of(driven_stage(1e3, 1e12, {LevelUnit::power, 200, 8}, m));
  REQUIRE(h.cautions.size() == 1);
  CHECK(h.cautions[0] ==
        "caution: 'Vin' declares 40V rms (56.57V peak), above the usual extra-low-voltage limits "
        "(30 V rms, 42.4 V peak): the input carries a hazardous voltage. Follow local electrical "
        "codes and licensed practice for anything built and connected; tacet does not assess "
        "safety.");
}

TEST_CASE("a gain-10 stage at 2 V rms is flagged against 12 V rails with 1.5 V swing",
          "[headroom]") {
  OpAmpModel m = fast_model();
  m.swing = 1.5;
  Circuit c = driven_stage(9e3, 1e3, {LevelUnit::rms, 2, 0}, m);
  c.supply = Rails{12, -12};
  const auto h = headroom_of(c);
  REQUIRE(h.opamps.size() == 1);
  const auto& out = h.opamps[0].out;
  // 2 V rms x sqrt(2) x 10 = 28.28 V peak against 12 - 1.5 = 10.5 V (arithmetic).
  CHECK_THAT(out.signal_peak, IsClose(20 * std::sqrt(2.0), 1e-7));
  CHECK(out.limit_high == 10.5);
  CHECK_THAT(out.margin, IsClose(10.5 - 20 * std::sqrt(2.0), 1e-7));
  CHECK_FALSE(out.ok());
  CHECK(h.opamps[0].plus.ok());  // 2.83 V at the input is inside the 12 V supply
  REQUIRE(h.warnings.size() == 1);
  CHECK(h.warnings[0] ==
        "U1: output 'out' reaches 28.28V at 20Hz, above 10.5V (rail less swing): 17.78V short");

  const auto quieter = headroom_of([&] {
    Circuit q = driven_stage(9e3, 1e3, {LevelUnit::rms, 0.7, 0}, m);  // 9.9 V peak
    q.supply = Rails{12, -12};
    return q;
  }());
  CHECK(quieter.opamps[0].out.ok());
  CHECK(quieter.warnings.empty());
}

TEST_CASE("10 V peak at 20 kHz needs 1.257 V/us of slew", "[headroom]") {
  // A sine V sin(2 pi f t) has the largest slope 2 pi f V (calculus):
  // 2 pi x 20 kHz x 10 V = 1.2566 V/us.
  OpAmpModel m = fast_model();
  m.slew = 1e6;  // 1 V/us: too slow
  const auto h = headroom_of(driven_stage(1e3, 1e12, {LevelUnit::peak, 10, 0}, m));
  const auto& slew = h.opamps[0].slew;
  CHECK_THAT(slew.needed, IsClose(2 * 3.14159265358979323846 * 20e3 * 10, 1e-7));
  CHECK(slew.frequency == 20e3);
  CHECK_FALSE(slew.ok());
  REQUIRE(h.warnings.size() == 1);
  CHECK(h.warnings[0] == "U1: the signal needs 1.257V/us at 20kHz, more than its slew 1V/us");
}

TEST_CASE("inputs are checked against the model's common-mode range", "[headroom]") {
  OpAmpModel m = fast_model();
  m.vcm_high = 2.0, m.vcm_low = 1.0;  // inputs within [-11, 10] V on +-12 V
  Circuit c = driven_stage(1e3, 1e12, {LevelUnit::peak, 10.5, 0}, m);  // a follower
  c.supply = Rails{12, -12};
  const auto h = headroom_of(c);
  const auto& plus = h.opamps[0].plus;
  CHECK(plus.limit_high == 10);
  CHECK(plus.limit_low == -11);
  CHECK_THAT(plus.margin, IsClose(-0.5, 1e-6));
  CHECK_FALSE(plus.ok());
  CHECK(h.opamps[0].has_cm_range);
}

TEST_CASE("a declared level without a band is an error naming the source", "[headroom]") {
  Circuit c = driven_stage(1e3, 1e12, {LevelUnit::peak, 1, 0}, fast_model());
  c.elements[0].band_low = c.elements[0].band_high = 0;
  const BiasResult bias = run_bias(c);
  CHECK_THROWS_WITH(run_headroom(c, bias),
                    "error: the headroom at the level of 'Vin' needs a band\n"
                    "hint: add band_low=20Hz band_high=20kHz to 'Vin', or give --band 20..20k\n");
  HeadroomOptions options;
  options.band_low = 100, options.band_high = 1e3;
  CHECK(run_headroom(c, bias, options).band_high == 1e3);
  options.band_low = 2e3;
  CHECK_THROWS_WITH(run_headroom(c, bias, options),
                    "error: --band 2k..1k: the low end must be below the high end\n");
  options = HeadroomOptions{};
  options.per_decade = 0;
  CHECK_THROWS_WITH(run_headroom(c, bias, options), "error: --per-decade 0 must be at least 1\n");
}

TEST_CASE("level= reads V rms, V peak or W into a load", "[headroom][elaborate]") {
  auto rms = level_of("level=40Vrms");
  REQUIRE(rms);
  CHECK(rms->unit == LevelUnit::rms);
  CHECK(rms->value == 40);
  auto peak = level_of("level=500mVpk");
  REQUIRE(peak);
  CHECK(peak->unit == LevelUnit::peak);
  CHECK_THAT(peak->value, IsClose(0.5, 1e-15));
  auto power = level_of("load=8ohm level=200W band_low=20Hz band_high=20kHz");
  REQUIRE(power);
  CHECK(power->unit == LevelUnit::power);
  CHECK(power->load == 8);
}

TEST_CASE("an override of Vin.level (--set) sets or replaces the level", "[headroom][elaborate]") {
  ElaborateOptions options;
  options.overrides.push_back({"Vin.level", "3Vpk"});
  auto replaced = level_of("level=40Vrms", options);
  REQUIRE(replaced);
  CHECK(replaced->unit == LevelUnit::peak);
  CHECK(replaced->value == 3);
  auto added = level_of("ac=1", options);
  REQUIRE(added);
  CHECK(added->value == 3);
}

TEST_CASE("a level with no unit is an error with its position", "[headroom][elaborate]") {
  CHECK(elaboration_errors("vsrc Vin (in, gnd) level=40\n") ==
        "main.tacet:1:26: error: level= needs its unit: Vrms, Vpk or W\n"
        "vsrc Vin (in, gnd) level=40\n"
        "                         ^~\n"
        "hint: write level=2Vrms, level=2.83Vpk or level=200W load=8ohm\n");
}

TEST_CASE("a negative power is an error", "[headroom][elaborate]") {
  CHECK(elaboration_errors("vsrc Vin (in, gnd) level=-200W load=8ohm\n") ==
        "main.tacet:1:26: error: level= must be above zero, not -200 W\n"
        "vsrc Vin (in, gnd) level=-200W load=8ohm\n"
        "                         ^~~~~\n");
}

TEST_CASE("a level in W needs load=, and load= needs a level in W", "[headroom][elaborate]") {
  CHECK(elaboration_errors("vsrc Vin (in, gnd) level=200W\n") ==
        "main.tacet:1:6: error: 'Vin' gives its level in W and needs load=\n"
        "vsrc Vin (in, gnd) level=200W\n"
        "     ^~~\n"
        "hint: name the resistance the power is delivered into: load=8ohm\n");
  CHECK(elaboration_errors("vsrc Vin (in, gnd) level=2Vrms load=8ohm\n") ==
        "main.tacet:1:6: error: 'Vin': load= goes only with a level in W\n"
        "vsrc Vin (in, gnd) level=2Vrms load=8ohm\n"
        "     ^~~\n");
}
