// Badly scaled circuits: element values from 1 mohm to 1 Tohm and 1 fF to 1 F,
// frequencies from 1 mHz to 10 GHz, against closed forms evaluated in a way
// that has no cancellation (sums of impedances of passive RC parts all lie in
// one quadrant of the complex plane, so each sum is exact to a few ulps).

#include <catch2/catch.hpp>
#include <cmath>
#include <complex>
#include <random>
#include <string>

#include <fmt/format.h>

#include "is_close.hpp"
#include "text_circuit.hpp"
#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/common/constants.hpp"
#include "tacet/solve/mna.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

using cplx = std::complex<double>;

Circuit circuit_of(const std::string& text) {
  auto elaborated = elaborate_text(text);
  INFO(elaborated.diagnostics);
  REQUIRE(elaborated.circuit);
  return std::move(*elaborated.circuit);
}

std::vector<cplx> ac_at(const Circuit& circuit, const std::string& probe, std::vector<double> f) {
  AcOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = std::move(f);
  options.probes = {probe};
  return run_ac(circuit, options).traces[0].values;
}

const std::vector<double> kWideFrequencies{1e-3, 1, 159.15494309189535, 1e3, 1e6, 1e9, 1e10};

cplx parallel(cplx a, cplx b) { return a * b / (a + b); }
cplx capacitor(double c, double f) { return 1.0 / cplx(0, kTwoPi * f * c); }

}  // namespace

TEST_CASE("a 1 Tohm - 1 uohm - 1 Tohm divider halves its input at every frequency",
          "[scaling]") {
  // Voltage divider (closed form): v(b) = R3 / (R1 + R2 + R3) = 0.5 to 1e-18.
  const Circuit circuit = circuit_of(R"(
vsrc V1 (in, gnd) ac=1
res R1 (in, a) 1T
res R2 (a, b) 1u
res R3 (b, gnd) 1T
)");
  for (const cplx v : ac_at(circuit, "b", kWideFrequencies)) CHECK_THAT(v, IsClose(0.5, 1e-12));
  // The current through the tiny resistor: V / (R1 + R2 + R3) (Ohm's law).
  for (const cplx i : ac_at(circuit, "i(R2)", {1.0, 1e9})) CHECK_THAT(i, IsClose(0.5e-12, 1e-12));
}

TEST_CASE("a passive RC network with 1 uohm beside 1 Tohm and 1 fF beside 1 F has no gain",
          "[scaling]") {
  // in -R1- a -(Rs || Cbig)- b -(R2 || Csmall)- gnd, Ca from a to gnd. Closed
  // form by impedances: Zab = Rs || 1/sCbig, Zb = R2 || 1/sCsmall,
  // v(a) = Vin Zp / (R1 + Zp) with Zp = (1/sCa) || (Zab + Zb), v(b) = v(a) Zb / (Zab + Zb).
  const Circuit circuit = circuit_of(R"(
vsrc V1 (in, gnd) ac=1
res R1 (in, a) 1T
res Rs (a, b) 1u
cap Cbig (a, b) 1
res R2 (b, gnd) 1T
cap Csmall (b, gnd) 1f
cap Ca (a, gnd) 1f
)");
  const auto values = ac_at(circuit, "b", kWideFrequencies);
  for (std::size_t k = 0; k < kWideFrequencies.size(); ++k) {
    const double f = kWideFrequencies[k];
    INFO("f = " << f << " Hz");
    const cplx zab = parallel(1e-6, capacitor(1, f)), zb = parallel(1e12, capacitor(1e-15, f));
    const cplx zp = parallel(capacitor(1e-15, f), zab + zb);
    const cplx expected = zp / (1e12 + zp) * zb / (zab + zb);
    CHECK_THAT(values[k], IsClose(expected, 1e-10));
    CHECK(std::abs(values[k]) <= 1.0 + 1e-12);  // a passive network cannot have gain
  }
  // At 1 mHz the 1 fF parts are nearly open (6e-6 of R1) and v(b) is close to
  // R2 / (R1 + R2): -6.02 dB.
  CHECK_THAT(values[0], IsClose(0.5, 1e-5));
}

TEST_CASE("a 1 F capacitor between two nodes that each see 1 fF divides as a capacitor chain",
          "[scaling]") {
  // Capacitive divider (closed form): in -C1 (1 fF)- a -Cbig (1 F)- b -C2 (1 fF)- gnd, with
  // 1 Tohm to gnd at a and b for a DC path; v(b) from the impedances as above.
  const Circuit circuit = circuit_of(R"(
vsrc V1 (in, gnd) ac=1
cap C1 (in, a) 1f
cap Cbig (a, b) 1
cap C2 (b, gnd) 1f
res Ra (a, gnd) 1T
res Rb (b, gnd) 1T
)");
  const auto values = ac_at(circuit, "b", kWideFrequencies);
  for (std::size_t k = 0; k < kWideFrequencies.size(); ++k) {
    const double f = kWideFrequencies[k];
    INFO("f = " << f << " Hz");
    const cplx zb = parallel(capacitor(1e-15, f), 1e12);
    const cplx za = parallel(1e12, capacitor(1, f) + zb);
    const cplx expected = za / (capacitor(1e-15, f) + za) * zb / (capacitor(1, f) + zb);
    CHECK_THAT(values[k], IsClose(expected, 1e-10));
  }
}

TEST_CASE("random RC ladders spanning 1 mohm to 1 Tohm and 1 fF to 1 F match their closed form",
          "[scaling]") {
  // A ladder of series R || C and shunt R || C sections, values drawn log-uniformly
  // over the whole range (fixed seed). Closed form: the ladder's impedances from
  // the far end back (each a sum of impedances in the fourth quadrant, so no
  // cancellation), then the product of the section dividers.
  std::mt19937_64 random(20261202);
  std::uniform_real_distribution<double> decades_r(-3, 12), decades_c(-15, 0);
  constexpr int kSections = 12;
  for (int trial = 0; trial < 20; ++trial) {
    std::vector<double> rs(kSections), cs(kSections), rp(kSections), cp(kSections);
    std::string text = "vsrc V1 (n0, gnd) ac=1\n";
    for (int k = 0; k < kSections; ++k) {
      rs[k] = std::pow(10.0, decades_r(random)), cs[k] = std::pow(10.0, decades_c(random));
      rp[k] = std::pow(10.0, decades_r(random)), cp[k] = std::pow(10.0, decades_c(random));
      text += fmt::format("res Rs{0} (n{0}, n{1}) {2:.17g}\ncap Cs{0} (n{0}, n{1}) {3:.17g}\n", k,
                          k + 1, rs[k], cs[k]);
      text += fmt::format("res Rp{0} (n{1}, gnd) {2:.17g}\ncap Cp{0} (n{1}, gnd) {3:.17g}\n", k,
                          k + 1, rp[k], cp[k]);
    }
    const Circuit circuit = circuit_of(text);
    const std::string far = fmt::format("n{}", kSections);
    const auto values = ac_at(circuit, far, kWideFrequencies);
    for (std::size_t p = 0; p < kWideFrequencies.size(); ++p) {
      const double f = kWideFrequencies[p];
      // Z looking into node k+1 towards the far end, then each section's divider.
      std::vector<cplx> shunt(kSections), series(kSections), load(kSections);
      cplx beyond = 0;
      bool open = true;
      for (int k = kSections - 1; k >= 0; --k) {
        shunt[k] = parallel(rp[k], capacitor(cp[k], f));
        series[k] = parallel(rs[k], capacitor(cs[k], f));
        load[k] = open ? shunt[k] : parallel(shunt[k], beyond);
        beyond = series[k] + load[k];
        open = false;
      }
      cplx expected = 1;
      for (int k = 0; k < kSections; ++k) expected *= load[k] / (series[k] + load[k]);
      INFO("trial " << trial << ", f = " << f << " Hz, relative error "
                    << std::abs(values[p] - expected) / std::abs(expected) << "\n" << text);
      // Six digits, even where a ladder attenuates its input by 1e-50: so tiny a
      // voltage is bounded by its own componentwise condition, not by the assembly.
      CHECK_THAT(values[p], IsClose(expected, 1e-6));
      CHECK(std::abs(values[p]) <= 1.0 + 1e-9);
    }
  }
}

TEST_CASE("the DC point of a 1 Tohm - 1 mohm - 1 Tohm divider is half the supply", "[scaling]") {
  // Voltage divider (closed form) at DC, through the real factorisation of bias.
  const Circuit circuit = circuit_of(R"(
vsrc V1 (in, gnd) dc=10
res R1 (in, a) 1T
res R2 (a, b) 1m
res R3 (b, gnd) 1T
)");
  const BiasResult bias = run_bias(circuit);
  CHECK_THAT(bias.node(*circuit.find_node("b")).nominal, IsClose(5.0, 1e-12));
  CHECK_THAT(bias.node(*circuit.find_node("a")).nominal, IsClose(5.0, 1e-12));
}

TEST_CASE("only a part far stiffer than its neighbours is stamped on voltage differences",
          "[scaling][mna]") {
  // R2 (1 uohm beside 1 Tohm) is stiff; R4 (1 kohm beside 10 kohm) and the parts to gnd
  // are not. The system keeps one unknown per node and per source branch either way.
  const Circuit circuit = circuit_of(R"(
vsrc V1 (in, gnd) ac=1
res R1 (in, a) 1T
res R2 (a, b) 1u
res R3 (b, gnd) 10k
res R4 (b, c) 1k
res R5 (c, gnd) 1u
)");
  const MnaSystem mna(circuit);
  CHECK(mna.stiff_parts() == 1);
  CHECK(mna.size() == 4 /* nodes in, a, b, c */ + 1 /* V1 */);
  // Node b is its group's difference from a: its voltage reads as two terms.
  const int group = mna.voltage_terms(*circuit.find_node("a")).count +
                    mna.voltage_terms(*circuit.find_node("b")).count;
  CHECK(group == 3);
  CHECK(mna.voltage_terms(*circuit.find_node("c")).count == 1);
}

TEST_CASE("the current through a 1 uohm part beside 1 F is exact", "[scaling]") {
  // in -R1 (1 Tohm)- a -(Rs 1 uohm || C 1 F)- b -R2 (1 Tohm)- gnd at 159 Hz: the
  // current 1/(R1 + Zab + R2) splits between Rs and C as their admittances
  // (current divider, closed form).
  const Circuit circuit = circuit_of(R"(
vsrc V1 (in, gnd) ac=1
res R1 (in, a) 1T
res Rs (a, b) 1u
cap Cbig (a, b) 1
res R2 (b, gnd) 1T
)");
  const double f = 159.15494309189535;  // 2 pi f = 1000
  const cplx ys = 1e6, yc(0, 1000);
  const cplx total = 1.0 / (2e12 + 1.0 / (ys + yc));
  CHECK_THAT(ac_at(circuit, "i(Rs)", {f})[0], IsClose(total * ys / (ys + yc), 1e-12));
  CHECK_THAT(ac_at(circuit, "i(Cbig)", {f})[0], IsClose(total * yc / (ys + yc), 1e-12));
  CHECK_THAT(ac_at(circuit, "a,b", {f})[0], IsClose(total / (ys + yc), 1e-12));
}
