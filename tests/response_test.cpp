// FrequencyResponse, the one-frequency-at-a-time solver every analysis shares,
// against closed forms; each check names its source.

#include "tacet/solve/response.hpp"

#include <catch2/catch.hpp>

#include <cmath>

#include "is_close.hpp"
#include "reference_circuits.hpp"
#include "tacet/solve/probe.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

constexpr double kR = 10e3, kC = 10e-9;  // corner 1/(2 pi R C) = 1591.5 Hz
const std::vector<double> kFrequencies{1, 159.15, 1591.5494309189535, 20e3, 1e6};

}  // namespace

TEST_CASE("the response of an RC low-pass is 1/(1 + jwRC) at every frequency asked", "[response]") {
  // Voltage divider of R and Z_C = 1/(jwC): the single-time-constant low-pass
  // (Sedra and Smith, Microelectronic Circuits, appendix on STC networks; the
  // citation is from memory, the formula is the divider rule).
  const Circuit circuit = rc_lowpass(kR, kC);
  FrequencyResponse response(circuit);
  const Probe out = resolve_probe("out", circuit);
  for (double f : kFrequencies) {
    INFO("f = " << f << " Hz");
    CHECK_THAT(response.at(out, f), IsClose(rc_lowpass_h(kR, kC, f), 1e-9));
  }
}

TEST_CASE("a current probe reads the series RLC current V/(R + jwL + 1/(jwC))", "[response]") {
  // Impedance of a series circuit, Z = R + sL + 1/(sC); at f0 = 1/(2 pi
  // sqrt(LC)) the reactances cancel and the current is V/R exactly.
  const double r = 50, l = 10e-3, c = 1e-6;
  const Circuit circuit = series_rlc(r, l, c);
  FrequencyResponse response(circuit);
  const Probe current = resolve_probe("i(L1)", circuit);
  const double f0 = 1 / (2 * kPi * std::sqrt(l * c));
  for (double f : {10.0, f0 / 3, f0, 3 * f0, 1e5}) {
    INFO("f = " << f << " Hz");
    CHECK_THAT(response.at(current, f), IsClose(series_rlc_current(r, l, c, f), 1e-9));
  }
  CHECK_THAT(response.at(current, f0), IsClose(1 / r, 1e-9));
}

TEST_CASE("going back to a frequency solved before gives its own answer, not the last one",
          "[response]") {
  const Circuit circuit = rc_lowpass(kR, kC);
  FrequencyResponse response(circuit);
  const Probe out = resolve_probe("out", circuit);
  const auto first = response.at(out, 100);
  response.at(out, 1e5);
  response.factor_at(3e3);  // factored but not solved: the next value must re-solve
  CHECK_THAT(response.at(out, 100), IsClose(first, 0));
  CHECK_THAT(response.at(out, 3e3), IsClose(rc_lowpass_h(kR, kC, 3e3), 1e-9));
}

TEST_CASE("the adjoint gives the transfer from a current injected at each node to the probe",
          "[response]") {
  // A unit current into node out sees the source shorted, so v(out) is the
  // driving-point impedance R || 1/(jwC) = R/(1 + jwRC) (Thevenin's theorem);
  // node in is held by the source, so a current there moves nothing.
  const Circuit circuit = rc_lowpass(kR, kC);
  FrequencyResponse response(circuit);
  const Probe out = resolve_probe("out", circuit);
  for (double f : kFrequencies) {
    INFO("f = " << f << " Hz");
    response.factor_at(f);
    const auto& y = response.adjoint(out);
    const auto at = [&](const char* node) {
      return y[static_cast<std::size_t>(response.mna().node_unknown(*circuit.find_node(node)))];
    };
    CHECK_THAT(at("out"), IsClose(kR / (1.0 + jw(f) * kR * kC), 1e-9));
    CHECK(std::abs(at("in")) <= 1e-12 * kR);
  }
}
