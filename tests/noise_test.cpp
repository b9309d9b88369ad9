// Noise analysis against closed forms from the literature; each check names its source.

#include "tacet/analysis/noise.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <numeric>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/analysis/weighting.hpp"
#include "tacet/common/errors.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

constexpr double kT25 = kBoltzmann * (25 + 273.15);  // J, at the default ambient

NoiseOptions noise_at(std::vector<double> f, const std::string& probe, double f1, double f2) {
  NoiseOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = std::move(f);
  options.probe = probe;
  options.band = Band{f1, f2};
  return options;
}

const NoiseContributor& contributor(const NoiseResult& r, const std::string& source,
                                    NoiseMechanism mechanism) {
  for (const auto& c : r.contributors)
    if (c.source == source && c.mechanism == mechanism) return c;
  FAIL("no contributor " << source << " " << to_string(mechanism));
  return r.contributors.front();
}

// Non-inverting amplifier: Vin -> Rs -> +, Rf from out to -, Rg from - to gnd.
Circuit noninverting(double rs, double rf, double rg, const OpAmpModel& model) {
  CircuitBuilder b;
  b.vsrc("Vin", "src", "gnd", 1.0);
  b.add(ElementKind::resistor, "Rs", {"src", "p"}, rs);
  b.opamp("U1", "p", "fb", "out", model);
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, rf);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, rg);
  return b.circuit;
}

}  // namespace

TEST_CASE("a resistor to gnd shows the thermal noise density sqrt(4kTR)", "[noise]") {
  // Johnson 1928, Nyquist 1928: open-circuit noise voltage density sqrt(4kTR).
  CircuitBuilder b;
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, 10e3);
  const auto r = run_noise(b.circuit, noise_at({10, 1e3, 1e5}, "out", 10, 1e5));
  for (double density : r.density) CHECK_THAT(density, IsClose(std::sqrt(4 * kT25 * 10e3), 1e-12));
  // The band total of a white density is density x sqrt(bandwidth).
  CHECK_THAT(r.total_rms, IsClose(std::sqrt(4 * kT25 * 10e3 * (1e5 - 10)), 1e-9));
  REQUIRE(r.contributors.size() == 1);
  CHECK(r.contributors[0].mechanism == NoiseMechanism::thermal);
  CHECK_THAT(r.contributors[0].share, IsClose(1.0, 1e-12));
}

TEST_CASE("thermal noise follows the ambient temperature in kelvin", "[noise]") {
  // Nyquist 1928: the density is proportional to sqrt(T), T absolute.
  CircuitBuilder b;
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, 1e3);
  b.circuit.ambient_celsius = 85;
  const auto r = run_noise(b.circuit, noise_at({1e3}, "out", 10, 1e3));
  CHECK_THAT(r.temperature_kelvin, IsClose(358.15, 1e-15));
  CHECK_THAT(r.density[0], IsClose(std::sqrt(4 * kBoltzmann * 358.15 * 1e3), 1e-12));
}

TEST_CASE("a resistor divider shows the thermal noise of its two resistors in parallel",
          "[noise]") {
  // Nyquist 1928 applied to the Thevenin resistance R1 R2/(R1 + R2) seen at the
  // tap (the source is an ideal, noiseless voltage source).
  const double r1 = 10e3, r2 = 2.2e3, parallel = r1 * r2 / (r1 + r2);
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "out"}, r1);
  b.add(ElementKind::resistor, "R2", {"out", "gnd"}, r2);
  auto options = noise_at({100, 1e4}, "out", 20, 20e3);
  options.input = "Vin";
  const auto r = run_noise(b.circuit, options);
  CHECK_THAT(r.density[0], IsClose(std::sqrt(4 * kT25 * parallel), 1e-12));
  // Shares: each resistor's current noise 4kT/R sees the same |Z|^2, so its
  // share is (1/R) / (1/R1 + 1/R2) (Nyquist 1928 with superposition of power).
  CHECK_THAT(contributor(r, "R2", NoiseMechanism::thermal).share, IsClose(r1 / (r1 + r2), 1e-9));
  CHECK(r.contributors[0].source == "R2");
  // Input-referred through the divider ratio G = R2/(R1 + R2) (voltage divider).
  CHECK_THAT(std::abs(r.gain[0]), IsClose(r2 / (r1 + r2), 1e-12));
  CHECK_THAT(*r.input_referred_rms, IsClose(r.total_rms * (r1 + r2) / r2, 1e-9));
}

TEST_CASE("a probe across a node pair adds the noise of both sides", "[noise]") {
  // Nyquist 1928: two independent resistors in series across the pair, 4kT(R1 + R2).
  CircuitBuilder b;
  b.add(ElementKind::resistor, "R1", {"a", "gnd"}, 1e3);
  b.add(ElementKind::resistor, "R2", {"b", "gnd"}, 3e3);
  const auto r = run_noise(b.circuit, noise_at({1e3}, "a,b", 10, 1e3));
  CHECK_THAT(r.density[0], IsClose(std::sqrt(4 * kT25 * 4e3), 1e-12));
}

TEST_CASE("R parallel C has the single-pole density, its atan band total and kT/C", "[noise]") {
  // Density sqrt(4kTR)/|1 + j 2 pi f R C| (Nyquist 1928 through the RC impedance);
  // band power (4kTR/(2 pi R C)) (atan(2 pi f2 R C) - atan(2 pi f1 R C)) (its integral);
  // over all frequencies kT/C (textbook result, e.g. the kT/C noise of a sampling capacitor).
  const double r = 10e3, c = 10e-9, tau = 2 * kPi * r * c;
  CircuitBuilder b;
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, r);
  b.add(ElementKind::capacitor, "C1", {"out", "gnd"}, c);
  const std::vector<double> f{20, 1591.5494309189535, 20e3};
  auto result = run_noise(b.circuit, noise_at(f, "out", 20, 20e3));
  for (std::size_t k = 0; k < f.size(); ++k)
    CHECK_THAT(result.density[k], IsClose(std::sqrt(4 * kT25 * r) / std::abs(1.0 + jw(f[k]) * r * c), 1e-12));
  const double band = 4 * kT25 * r / tau * (std::atan(tau * 20e3) - std::atan(tau * 20));
  CHECK_THAT(result.total_rms * result.total_rms, IsClose(band, 1e-9));  // docs/analyses/noise.md promises 1e-9
  // Wide band 1e-6 fc .. 1e6 fc: the atan form is within 1.3e-6 of kT/C.
  result = run_noise(b.circuit, noise_at(f, "out", 1591.5494309189535e-6, 1591.5494309189535e6));
  CHECK_THAT(result.total_rms * result.total_rms, IsClose(kT25 / c, 2e-6));
}

TEST_CASE("a non-inverting amplifier's output noise is the root-sum-square through the noise gain",
          "[noise]") {
  // The op-amp noise model (en at +, in at each input, resistor thermal noise),
  // e.g. Motchenbacher and Connelly, Low-Noise Electronic System Design (1993)
  // (form from memory):
  //   e_out^2 = |NG|^2 [en^2 + (in Rs)^2 + 4kTRs + (in Rp)^2 + 4kTRp], Rp = Rf || Rg,
  // with the exact closed-loop noise gain of the single-pole model
  //   NG = (1/beta)/(1 + 1/(A beta)), beta = Rg/(Rf + Rg), A = aol/(1 + s/wp), wp = 2 pi gbw/aol.
  OpAmpModel m = single_pole(10e6, 1e5);
  m.en = 4e-9;
  m.in = 1e-12;
  const double rs = 2.2e3, rf = 9e3, rg = 1e3, beta = rg / (rf + rg), rp = rf * rg / (rf + rg);
  const std::vector<double> f{10, 1e3, 1e5, 1e6, 5e6};
  const auto r = run_noise(noninverting(rs, rf, rg, m), noise_at(f, "out", 10, 1e5));
  for (std::size_t k = 0; k < f.size(); ++k) {
    const cplx a = m.aol / (1.0 + jw(f[k]) / (2 * kPi * m.gbw / m.aol));
    const double ng = std::abs((1 / beta) / (1.0 + 1.0 / (a * beta)));
    const double sum = m.en * m.en + std::pow(m.in * rs, 2) + 4 * kT25 * rs +
                       std::pow(m.in * rp, 2) + 4 * kT25 * rp;
    INFO("f = " << f[k]);
    CHECK_THAT(r.density[k], IsClose(ng * std::sqrt(sum), 1e-9));
  }
  CHECK(r.contributors.size() == 6);  // Rs, Rf, Rg thermal; U1 en, in+, in-
}

TEST_CASE("an op amp's 1/f voltage noise integrates to en^2 (fce ln(f2/f1) + f2 - f1)", "[noise]") {
  // Closed form of the integral of en^2 (1 + fce/f) df. A follower of very
  // high gain and bandwidth passes en with a gain within 1e-9 of 1.
  OpAmpModel m = single_pole(1e15, 1e9);
  m.en = 5e-9;
  m.fce = 150;
  m.in = 2e-12;
  m.fci = 1e3;
  CircuitBuilder b;
  b.add(ElementKind::resistor, "Rb", {"p", "gnd"}, 10e3).noiseless = true;
  b.opamp("U1", "p", "out", "out", m);
  const double f1 = 2, f2 = 4e3;
  const auto r = run_noise(b.circuit, noise_at({10, 100, 1e3}, "out", f1, f2));
  CHECK_THAT(contributor(r, "U1", NoiseMechanism::en).rms,
             IsClose(m.en * std::sqrt(m.fce * std::log(f2 / f1) + f2 - f1), 1e-7));
  // The same closed form for in through the (noiseless) 10 kohm bias resistor.
  CHECK_THAT(contributor(r, "U1", NoiseMechanism::in_plus).rms,
             IsClose(10e3 * m.in * std::sqrt(m.fci * std::log(f2 / f1) + f2 - f1), 1e-7));
  // The spot density at 10 Hz: en sqrt(1 + fce/f) and in R sqrt(1 + fci/f), in quadrature.
  CHECK_THAT(r.density[0], IsClose(std::sqrt(m.en * m.en * (1 + m.fce / 10) +
                                             std::pow(10e3 * m.in, 2) * (1 + m.fci / 10)), 1e-7));
  // Rb is noiseless; in- flows into the ideal output, which it cannot move.
  CHECK(r.contributors.size() == 3);
  CHECK(contributor(r, "U1", NoiseMechanism::in_minus).share < 1e-15);
}

TEST_CASE("a noiseless op amp contributes no noise", "[noise]") {
  OpAmpModel m = single_pole(10e6, 1e5);
  m.en = 4e-9;
  m.in = 1e-12;
  auto circuit = noninverting(1e3, 9e3, 1e3, m);
  circuit.elements[2].noiseless = true;
  const auto r = run_noise(circuit, noise_at({1e3}, "out", 10, 1e3));
  for (const auto& c : r.contributors) CHECK(c.source != "U1");
  CHECK(r.contributors.size() == 3);
}

TEST_CASE("the input-referred density is the output density divided by |gain| at every point",
          "[noise]") {
  // Definition of input referral; the gain itself is checked against the
  // forward AC solve of the same circuit (an independent solve, A x = b).
  OpAmpModel m = single_pole(1e6, 1e5);
  m.en = 10e-9;
  m.fce = 50;
  m.in = 0.5e-12;
  const auto circuit = noninverting(1e3, 99e3, 1e3, m);
  const std::vector<double> f{1, 30, 1e3, 1e4, 1e5, 1e6};
  auto options = noise_at(f, "out", 1, 1e6);
  options.input = "Vin";
  const auto r = run_noise(circuit, options);
  AcOptions ac;
  ac.sweep.kind = SweepKind::list;
  ac.sweep.at = f;
  ac.probes = {"out"};
  const auto forward = run_ac(circuit, ac);
  for (std::size_t k = 0; k < f.size(); ++k) {
    INFO("f = " << f[k]);
    CHECK_THAT(r.gain[k], IsClose(forward.traces[0].values[k], 1e-9));
    CHECK_THAT(r.input_density[k], IsClose(r.density[k] / std::abs(forward.traces[0].values[k]), 1e-9));
  }
}

TEST_CASE("a current input refers the noise to a current", "[noise]") {
  // An isrc into R: G = R (Ohm's law), so the input-referred density of R's
  // own noise is sqrt(4kTR)/R = sqrt(4kT/R) (Nyquist 1928, Norton form).
  CircuitBuilder b;
  b.isrc("Iin", "gnd", "out", 1e-6);
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, 50e3);
  auto options = noise_at({1e3}, "out", 10, 1e3);
  options.input = "Iin";
  const auto r = run_noise(b.circuit, options);
  CHECK_THAT(r.gain[0], IsClose(50e3, 1e-12));
  CHECK_THAT(r.input_density[0], IsClose(std::sqrt(4 * kT25 / 50e3), 1e-12));
}

TEST_CASE("contributor shares sum to 1 and come largest first", "[noise]") {
  // Uncorrelated sources add in power (superposition of independent noise).
  OpAmpModel m = single_pole(10e6, 1e6);
  m.en = 3e-9;
  m.fce = 5;
  m.in = 1e-12;
  m.fci = 200;
  const auto r = run_noise(noninverting(5e3, 9e3, 1e3, m), noise_at({1e3}, "out", 20, 20e3));
  double shares = 0, power = 0;
  for (std::size_t k = 0; k < r.contributors.size(); ++k) {
    shares += r.contributors[k].share;
    power += r.contributors[k].rms * r.contributors[k].rms;
    if (k > 0) CHECK(r.contributors[k - 1].share >= r.contributors[k].share);
  }
  CHECK_THAT(shares, IsClose(1.0, 1e-12));
  CHECK_THAT(power, IsClose(r.total_rms * r.total_rms, 1e-12));
}

TEST_CASE("the signal-to-noise ratio takes the gain at the geometric centre of the band",
          "[noise]") {
  // SNR = 20 log10(level |G(f_ref)| / total_rms), f_ref = sqrt(f1 f2) (our definition).
  const double r1 = 10e3, r2 = 2.2e3;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "out"}, r1);
  b.add(ElementKind::resistor, "R2", {"out", "gnd"}, r2);
  auto options = noise_at({1e3}, "out", 20, 20e3);
  options.input = "Vin";
  options.level = 1e-3;
  const auto r = run_noise(b.circuit, options);
  REQUIRE(r.signal);
  CHECK_THAT(r.signal->reference, IsClose(std::sqrt(20 * 20e3), 1e-12));
  CHECK_THAT(r.signal->signal_rms, IsClose(1e-3 * r2 / (r1 + r2), 1e-12));
  CHECK_THAT(r.signal->ratio_db, IsClose(20 * std::log10(r.signal->signal_rms / r.total_rms), 1e-12));
}

TEST_CASE("rejects a probe at an unknown node", "[noise][errors]") {
  const auto circuit = rc_lowpass(1e3, 1e-9);
  CHECK_THROWS_WITH(run_noise(circuit, noise_at({1e3}, "otu", 10, 1e3)),
                    "error: unknown node 'otu' in probe 'otu'\nhint: did you mean 'out'?\n");
}

TEST_CASE("rejects a band whose low end is not below its high end or not above 0", "[noise][errors]") {
  const auto circuit = rc_lowpass(1e3, 1e-9);
  CHECK_THROWS_WITH(run_noise(circuit, noise_at({1e3}, "out", 20e3, 20)),
                    "error: --band 20k..20: the low end must be below the high end\n");
  CHECK_THROWS_WITH(run_noise(circuit, noise_at({1e3}, "out", 0, 20)),
                    "error: --band 0..20: both ends must be finite frequencies above 0 Hz\n");
  CHECK_THROWS_AS(run_noise(circuit, noise_at({1e3}, "out", 5, 5)), InputError);
}

TEST_CASE("rejects an input that is not a source", "[noise][errors]") {
  const auto circuit = rc_lowpass(1e3, 1e-9);
  auto options = noise_at({1e3}, "out", 10, 1e3);
  options.input = "R1";
  CHECK_THROWS_WITH(run_noise(circuit, options),
                    "error: --input 'R1' is a res, not a source\n"
                    "hint: name a vsrc or isrc; the sources are Vin\n");
  options.input = "Vni";
  CHECK_THROWS_WITH(run_noise(circuit, options),
                    "error: --input 'Vni' is not an element of the circuit\n"
                    "hint: did you mean 'Vin'?\n");
}

TEST_CASE("rejects a signal level without an input source", "[noise][errors]") {
  auto options = noise_at({1e3}, "out", 10, 1e3);
  options.level = 1e-3;
  CHECK_THROWS_WITH(run_noise(rc_lowpass(1e3, 1e-9), options),
                    "error: --level needs --input: the source that carries the signal\n");
}

TEST_CASE("without --band the band is the sweep's first to last point", "[noise]") {
  // White density over the sweep range (Nyquist 1928): rms = sqrt(4kTR (to - from)).
  CircuitBuilder b;
  b.add(ElementKind::resistor, "R1", {"out", "gnd"}, 1e3);
  NoiseOptions options;
  options.sweep.from = 20;
  options.sweep.to = 20e3;
  options.probe = "out";
  const auto r = run_noise(b.circuit, options);
  CHECK(r.band.from == 20);
  CHECK(r.band.to == 20e3);
  CHECK_THAT(r.total_rms, IsClose(std::sqrt(4 * kT25 * 1e3 * (20e3 - 20)), 1e-9));
}

TEST_CASE("the largest contributors' densities add in power to the total at every point",
          "[noise]") {
  // Uncorrelated sources add in power (superposition of independent noise).
  OpAmpModel m = single_pole(10e6, 1e5);
  m.en = 4e-9;
  m.in = 1e-12;
  m.fce = 100;
  const std::vector<double> f{10, 1e3, 1e5};
  const auto r = run_noise(noninverting(2.2e3, 9e3, 1e3, m), noise_at(f, "out", 10, 1e5));
  REQUIRE(r.contributors.size() == 6);  // Rs, Rf, Rg thermal; U1 en, in+, in-
  REQUIRE(r.contributor_density.size() == 6);
  for (std::size_t k = 0; k < f.size(); ++k) {
    double power = 0;
    for (const auto& c : r.contributor_density) power += c.density[k] * c.density[k];
    CHECK_THAT(std::sqrt(power), IsClose(r.density[k], 1e-12));
  }
  for (std::size_t j = 0; j < 6; ++j) {
    CHECK(r.contributor_density[j].source == r.contributors[j].source);
    CHECK(r.contributor_density[j].mechanism == r.contributors[j].mechanism);
  }
}

TEST_CASE("only the asked number of largest contributors get a density per point", "[noise]") {
  OpAmpModel m = single_pole(10e6, 1e5);
  m.en = 4e-9;
  m.in = 1e-12;
  auto options = noise_at({10, 1e3}, "out", 10, 1e5);
  options.curves = 2;
  const auto r = run_noise(noninverting(2.2e3, 9e3, 1e3, m), options);
  CHECK(r.contributors.size() == 6);
  REQUIRE(r.contributor_density.size() == 2);
  CHECK(r.contributor_density[0].source == r.contributors[0].source);
  CHECK(r.contributor_density[1].source == r.contributors[1].source);
  CHECK(r.contributor_density[0].density.size() == 2);
}

TEST_CASE("a current probe on a resistor includes that resistor's own noise current",
          "[noise]") {
  // Series RC from a source (a short for noise): the current through R and C is
  // R's Norton current 4kT/R shaped by x^2/(1 + x^2), x = f/fc, fc = 1/(2 pi R C)
  // (Nyquist 1928, Norton form, through the current divider of R and C); its band
  // power 4kT/R ((f2 - f1) - fc (atan(f2/fc) - atan(f1/fc))) is the elementary
  // integral, and scipy.integrate.quad gives sqrt = 112.97267368520567 pA for
  // 10 kohm, 10 nF, 1 Hz..10 kHz (2e-11 from the closed form).
  const double r = 10e3, c = 10e-9, fc = 1 / (2 * kPi * r * c), f1 = 1, f2 = 10e3;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "mid"}, r);
  b.add(ElementKind::capacitor, "C1", {"mid", "gnd"}, c);
  const double band = 4 * kT25 / r * ((f2 - f1) - fc * (std::atan(f2 / fc) - std::atan(f1 / fc)));
  const auto through_r = run_noise(b.circuit, noise_at({10, fc, 5e3}, "i(R1)", f1, f2));
  const auto through_c = run_noise(b.circuit, noise_at({10, fc, 5e3}, "i(C1)", f1, f2));
  CHECK_THAT(through_r.total_rms, IsClose(std::sqrt(band), 1e-9));
  CHECK_THAT(through_r.total_rms, IsClose(1.1297267368520567e-10, 1e-9));
  CHECK_THAT(through_c.total_rms, IsClose(std::sqrt(band), 1e-9));
  for (std::size_t k = 0; k < through_r.density.size(); ++k) {
    const double x = through_r.frequencies[k] / fc;
    CHECK_THAT(through_r.density[k], IsClose(std::sqrt(4 * kT25 / r * x * x / (1 + x * x)), 1e-12));
    CHECK_THAT(through_c.density[k], IsClose(through_r.density[k], 1e-12));
  }
}

TEST_CASE("a resistor straight across a source carries its whole noise current", "[noise]") {
  // The source holds the voltage across R fixed, so all of R's Norton current
  // sqrt(4kT/R) flows through it (Nyquist 1928): rms sqrt(4kT B / R).
  const double r = 1e3, f1 = 20, f2 = 20e3;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "gnd"}, r);
  const auto result = run_noise(b.circuit, noise_at({1e3}, "i(R1)", f1, f2));
  CHECK_THAT(result.density[0], IsClose(std::sqrt(4 * kT25 / r), 1e-12));
  CHECK_THAT(result.total_rms, IsClose(std::sqrt(4 * kT25 * (f2 - f1) / r), 1e-9));
  // Another resistor's current probe is untouched by R1's own noise: R2 across
  // the same source sees only its own.
  b.add(ElementKind::resistor, "R2", {"in", "gnd"}, 4 * r);
  const auto other = run_noise(b.circuit, noise_at({1e3}, "i(R2)", f1, f2));
  CHECK_THAT(other.density[0], IsClose(std::sqrt(4 * kT25 / (4 * r)), 1e-12));
}

TEST_CASE("a tank of Q up to 1e6 integrates to kT/C wherever its resonance sits", "[noise]") {
  // Parallel R, L, C: the voltage noise of R over all frequencies is kT/C
  // whatever R and L (equipartition; the textbook kT/C result). Over 1 Hz..1 MHz
  // the tails left out are below 2/(pi Q x) of it, x = 1 MHz/f0 (the tank's
  // asymptote 4kTR/(Q x)^2, integrated): the rms is checked to that, plus 1e-8.
  const double c = 10e-9;
  for (const double f0 : {std::pow(10, 3.5), 3162.3, 1e3, std::pow(10, 3.25), 1234.5})
    for (const double q : {10.0, 1e3, 1e6}) {
      INFO("f0 = " << f0 << ", Q = " << q);
      const double w0 = 2 * kPi * f0;
      CircuitBuilder b;
      b.add(ElementKind::resistor, "R1", {"out", "gnd"}, q / (w0 * c));
      b.add(ElementKind::inductor, "L1", {"out", "gnd"}, 1 / (w0 * w0 * c));
      b.add(ElementKind::capacitor, "C1", {"out", "gnd"}, c);
      const auto r = run_noise(b.circuit, noise_at({f0}, "out", 1, 1e6));
      const double tails = 2 / (kPi * q * (1e6 / f0));
      CHECK_THAT(r.total_rms, IsClose(std::sqrt(kT25 / c), tails + 1e-8));
    }
}

TEST_CASE("an input that does not reach the probe leaves the output noise intact and says so",
          "[noise]") {
  // Vin drives a node the probe cannot see: G = 0 everywhere, so the
  // input-referred noise is unbounded; the output noise is R2's own
  // sqrt(4kTR B) (Nyquist 1928), and the integral must end at once, not bisect
  // a NaN or an infinity to full depth.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "gnd"}, 1e3);
  b.add(ElementKind::resistor, "R2", {"out", "gnd"}, 10e3);
  auto options = noise_at({100, 1e3}, "out", 20, 20e3);
  options.input = "Vin";
  const auto r = run_noise(b.circuit, options);
  CHECK_THAT(r.total_rms, IsClose(std::sqrt(4 * kT25 * 10e3 * (20e3 - 20)), 1e-9));
  CHECK_FALSE(r.input_referred_rms.has_value());
  REQUIRE(r.notes.size() == 1);
  CHECK(r.notes[0] == "the input 'Vin' does not reach the probe 'out' at 20Hz (between 20Hz and "
                      "20kHz): the input-referred noise is unbounded");
  CHECK(std::isinf(r.input_density[0]));
  CHECK(r.band_evaluations < 200);
}

TEST_CASE("exactly zero output noise is 0 with no share, answered on the first cut", "[noise]") {
  // The probe sits on a node a source holds: no noise current reaches it
  // (an ideal voltage source has zero impedance). Noise referred to the input is 0 too.
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.add(ElementKind::resistor, "R1", {"in", "gnd"}, 1e3);
  auto options = noise_at({100}, "in", 1, 1e6);
  options.input = "Vin";
  options.level = 1.0;
  const auto r = run_noise(b.circuit, options);
  CHECK(r.total_rms == 0.0);
  CHECK(r.density[0] == 0.0);
  REQUIRE(r.input_referred_rms.has_value());
  CHECK(*r.input_referred_rms == 0.0);
  REQUIRE(r.contributors.size() == 1);
  CHECK(r.contributors[0].share == 0.0);
  CHECK(r.band_evaluations == 6 * 15 + 7);  // six decades, no bisection
  REQUIRE(r.signal);
  CHECK(std::isnan(r.signal->ratio_db));  // unbounded: not a number to print
  // Every part noiseless: no source at all, no integral.
  b.circuit.elements[1].noiseless = true;
  const auto quiet = run_noise(b.circuit, noise_at({100}, "in", 1, 1e6));
  CHECK(quiet.total_rms == 0.0);
  CHECK(quiet.contributors.empty());
  CHECK(quiet.band_evaluations == 0);
}

TEST_CASE("a noise density that overflows a double is an error naming the source", "[noise][errors]") {
  OpAmpModel m = single_pole(1e6, 1e5);
  m.en = 1e308;  // en^2 overflows
  CHECK_THROWS_WITH(run_noise(noninverting(1e3, 9e3, 1e3, m), noise_at({1e3}, "out", 10, 1e3)),
                    "error: circuit cannot be solved at 10Hz: the en noise of 'U1' is not finite: "
                    "its density overflows a double\n"
                    "hint: check the values that set it (the model's en and fce)\n");
  CHECK_THROWS_AS(run_noise(noninverting(1e3, 9e3, 1e3, m), noise_at({1e3}, "out", 10, 1e3)),
                  SolveError);
}

// --- weighting and noise figure -------------------------------------------------------

namespace {

// Vs -> Rs -> out, RL from out to gnd: a source resistance into a resistive load.
Circuit source_into_load(double rs, double rl) {
  CircuitBuilder b;
  b.vsrc("Vs", "src", "gnd", 1.0);
  b.add(ElementKind::resistor, "Rs", {"src", "out"}, rs);
  b.add(ElementKind::resistor, "RL", {"out", "gnd"}, rl);
  return b.circuit;
}

}  // namespace

TEST_CASE("an A-weighted band total is the white density times the weighted bandwidth",
          "[noise][weighting]") {
  // Band total of density x |W(f)|^2 (brief 14). For a white density S0 the
  // weighted power is S0 times the integral of |W_A|^2; that integral against
  // SciPy's quad is tests/scipy/weighted_noise_check.py. Here: the weighting
  // scales every contributor alike, so each share is unchanged and the
  // weighted rms squares still add up to the weighted total.
  const auto circuit = source_into_load(1e3, 10e3);
  auto flat = noise_at({1e3}, "out", 20, 20e3);
  auto weighted = flat;
  weighted.weight = Weighting::a;
  const auto r_flat = run_noise(circuit, flat);
  const auto r_a = run_noise(circuit, weighted);
  CHECK(r_a.weight == Weighting::a);
  CHECK(r_a.total_rms < r_flat.total_rms);
  double sum = 0;
  for (const auto& c : r_a.contributors) {
    sum += c.rms * c.rms;
    CHECK_THAT(c.share, IsClose(contributor(r_flat, c.source, c.mechanism).share, 1e-9));
  }
  CHECK_THAT(sum, IsClose(r_a.total_rms * r_a.total_rms, 1e-12));
  // The printed spot densities are the circuit's own, unweighted.
  CHECK_THAT(r_a.density[0], IsClose(r_flat.density[0], 1e-15));
}

TEST_CASE("a weighted total of a shaped density follows the weighting where it matters",
          "[noise][weighting]") {
  // A white density through an RC low-pass with its corner at 1 kHz, 468-weighted:
  // the integrand is S(f) |W(f)|^2 with S the RC's |H|^2 4kTR (Nyquist 1928).
  // Checked against composite Simpson in ln f of the same integrand with
  // 20000 panels (independent of the analysis' adaptive Gauss-Kronrod).
  const double r = 10e3, c = 1 / (2 * kPi * 1e3 * r);
  const auto circuit = rc_lowpass(r, c);
  auto options = noise_at({1e3}, "out", 20, 20e3);
  options.weight = Weighting::itu468;
  const auto result = run_noise(circuit, options);
  auto integrand = [&](double f) {
    const double w = itu468_weighting(f);
    return 4 * kT25 * r / (1 + std::pow(f / 1e3, 2)) * w * w * f;  // d f = f d ln f
  };
  const int n = 20000;
  const double a = std::log(20.0), h = (std::log(20e3) - a) / n;
  double simpson = integrand(20.0) + integrand(20e3);
  for (int k = 1; k < n; ++k) simpson += (k % 2 ? 4 : 2) * integrand(std::exp(a + k * h));
  simpson *= h / 3;
  CHECK_THAT(result.total_rms, IsClose(std::sqrt(simpson), 1e-8));
}

TEST_CASE("the noise figure of a source resistance into a resistive load is 10 log10((Rs + RL)/RL)",
          "[noise][figure]") {
  // Closed form: at the load both resistors' thermal noises add,
  // 4kT Rs (RL/(Rs+RL))^2 + 4kT RL (Rs/(Rs+RL))^2, of which the first is the
  // source's; the ratio is 1 + Rs/RL (Friis 1944, noise factor F = total / source).
  const double rs = 1e3, rl = 10e3, expected = 10 * std::log10((rs + rl) / rl);
  const auto circuit = source_into_load(rs, rl);
  auto options = noise_at({20, 1e3, 20e3}, "out", 20, 20e3);
  options.source = "Rs";
  const auto r = run_noise(circuit, options);
  REQUIRE(r.noise_figure_db);
  CHECK_THAT(*r.noise_figure_db, IsClose(expected, 1e-9));
  REQUIRE(r.spot_noise_figure_db.size() == 3);
  for (double nf : r.spot_noise_figure_db) CHECK_THAT(nf, IsClose(expected, 1e-9));
  // Both noises are white, so a weighting cannot change their ratio.
  options.weight = Weighting::a;
  CHECK_THAT(*run_noise(circuit, options).noise_figure_db, IsClose(expected, 1e-9));
}

TEST_CASE("the noise figure of a noiseless amplifier after the source is 0 dB", "[noise][figure]") {
  // Friis 1944: F = 1 when the only noise is the source's. Rs into an ideal
  // buffer with noiseless feedback resistors.
  auto model = single_pole(10e6, 1e6);
  auto circuit = noninverting(1e3, 9e3, 1e3, model);
  for (auto& e : circuit.elements)
    if (e.name == "Rf" || e.name == "Rg") e.noiseless = true;
  auto options = noise_at({1e3}, "out", 20, 20e3);
  options.source = "Rs";
  const auto r = run_noise(circuit, options);
  CHECK(std::abs(*r.noise_figure_db) < 1e-12);
}

TEST_CASE("a noise figure against a resistor whose noise cannot reach the probe is unbounded",
          "[noise][figure]") {
  CircuitBuilder b;
  b.vsrc("Vs", "out", "gnd", 1.0);
  b.add(ElementKind::resistor, "Rs", {"out", "gnd"}, 1e3);  // across an ideal source: shorted
  b.add(ElementKind::resistor, "R2", {"out", "x"}, 1e3);
  b.add(ElementKind::resistor, "R3", {"x", "gnd"}, 1e3);
  auto options = noise_at({1e3}, "x", 20, 20e3);
  options.source = "Rs";
  const auto r = run_noise(b.circuit, options);
  CHECK(std::isinf(*r.noise_figure_db));
  CHECK(std::isinf(r.spot_noise_figure_db[0]));
  REQUIRE_FALSE(r.notes.empty());
  CHECK(r.notes.back() ==
        "the thermal noise of 'Rs' does not reach the probe 'x': the noise figure is unbounded");
}

TEST_CASE("rejects a noise-figure source that is not a noisy resistor", "[noise][figure][errors]") {
  auto circuit = rc_lowpass(1e3, 1e-9);
  auto options = noise_at({1e3}, "out", 10, 1e3);
  options.source = "C1";
  CHECK_THROWS_WITH(run_noise(circuit, options),
                    "error: --source 'C1' is a cap, not a resistor: a noise figure is taken "
                    "against a resistor's thermal noise\n"
                    "hint: name the source resistance; the noisy resistors are R1\n");
  options.source = "R2";
  CHECK_THROWS_WITH(run_noise(circuit, options),
                    "error: --source 'R2' is not an element of the circuit\n"
                    "hint: did you mean 'R1'?\n");
  circuit.elements[*circuit.find_element("R1")].noiseless = true;
  options.source = "R1";
  CHECK_THROWS_WITH(run_noise(circuit, options),
                    "error: --source 'R1' is noiseless: it has no thermal noise to compare against\n"
                    "hint: drop `noiseless` from it, or name another resistor; the circuit has no "
                    "resistor that makes noise\n");
}
