#pragma once
// Noise analysis: the output noise density at a probe, its rms over a band,
// the share of every noise source, and the noise referred to an input source.
//
// Sources (all uncorrelated, densities one-sided, per Hz):
//   resistor  thermal current 4 k T / R  [A^2/Hz] across it (Johnson 1928,
//             Nyquist 1928), k = 1.380649e-23 J/K (SI 2019, exact),
//             T = ambient + 273.15 K; none when `noiseless`;
//   op amp    en^2 (1 + fce/f) [V^2/Hz] in series with the + input ("en");
//             in^2 (1 + fci/f) [A^2/Hz] from each input pin to gnd ("in+",
//             "in-"); none when the instance is `noiseless`.
// Capacitors, inductors, sources and controlled sources are noiseless.
//
// Adjoint method: the probe is a linear functional c^T x of the MNA unknowns,
// and x = A^-1 b, so the probe's response to any right-hand side b is
// y^T b with A^T y = c. One transposed solve per frequency, on the
// factorisation of A, gives the transfer of every source at once:
//   a current between nodes a and b: y_a - y_b  (injected into a, out of b);
//   the en of op amp U: y_row, row = MnaSystem::opamp_gain_row(U);
//   the in of a pin p: y_p.
// Output power density S(f) = sum_i |H_i(f)|^2 S_i(f) [V^2/Hz for a voltage
// probe, A^2/Hz for a current probe]; the density printed is sqrt(S).
//
// Input-referred: with an input source, G(f) is the probe's response to a
// unit value of that source alone (y_branch for a vsrc; y_minus - y_plus for
// an isrc), the input-referred density is sqrt(S)/|G|, and the
// input-referred total is the rms of that density integrated over the band
// (not the output total divided by one gain).
//
// Band totals come from integrate_band (adaptive Gauss-Kronrod in ln f), not
// from the printed sweep: total_rms = sqrt(integral of S over the band).
//
// Weighted (`weight`, analysis/weighting.hpp): every band figure integrates
// S(f) |W(f)|^2 instead of S(f): total_rms, each contributor's rms and the
// input-referred total are then weighted figures (and so is the SNR). The
// densities printed per point stay unweighted: a spot density is the
// circuit's, the weighting belongs to the measurement over the band.
//
// Noise figure against a source resistor Rs (`source`): with S_Rs(f) the
// part of S(f) from Rs's own thermal noise, the spot figure is
// NF(f) = 10 log10(S(f) / S_Rs(f)) dB and the band figure is
// NF = 10 log10(integral S |W|^2 / integral S_Rs |W|^2) dB (Friis's noise
// factor, with Rs at the circuit's ambient rather than at 290 K). Where Rs's
// noise does not reach the probe the figure is unbounded.

#include <complex>
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "tacet/analysis/ac.hpp"
#include "tacet/circuit/weighting.hpp"
#include "tacet/circuit/band.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/probe.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

class FrequencyResponse;

/// Boltzmann constant, J/K (exact since the 2019 SI redefinition).
constexpr double kBoltzmann = 1.380649e-23;

enum class NoiseMechanism { thermal, en, in_plus, in_minus };
/// "thermal", "en", "in+", "in-" (the JSON and table spelling).
const char* to_string(NoiseMechanism mechanism);
std::optional<NoiseMechanism> parse_noise_mechanism(const std::string& text);

struct NoiseOptions {
  Sweep sweep;                ///< the printed points
  std::string probe;          ///< probe text, resolved by run_noise
  std::string input;          ///< an input source's name; empty: no input referral
  std::optional<Band> band;   ///< integration band; default: the sweep's lowest..highest point
  std::optional<double> level;      ///< V or A rms of the signal at `input`; needs `input`
  std::optional<double> reference;  ///< Hz, where the signal gain is taken; default sqrt(from to)
  SolverKind solver = SolverKind::klu;
  /// How many of the largest contributors get their density at every printed
  /// point (for pictures); their band shares are computed for all of them.
  std::size_t curves = 6;
  Weighting weight = Weighting::none;  ///< applied to every band figure
  std::string source;         ///< a resistor's name: noise figure against its thermal noise
  /// Worker threads for the band integral's samples and the printed points;
  /// 0: one per core. The result is the same bit for bit for any number.
  int threads = 1;
  /// Empty when valid, else a message naming the option, its value and the rule.
  std::string validate() const;
};

/// One noise source's part of the band total.
struct NoiseContributor {
  std::string source;  ///< element name
  NoiseMechanism mechanism = NoiseMechanism::thermal;
  double rms = 0;      ///< its rms over the band at the probe, V (or A)
  double share = 0;    ///< its fraction of the total power, 0..1
};

/// One contributor's density at every printed point (its part of `density`:
/// the squares of all contributors' densities add up to the square of the total).
struct ContributorDensity {
  std::string source;
  NoiseMechanism mechanism = NoiseMechanism::thermal;
  std::vector<double> density;  ///< per point, V/sqrt(Hz) (A/sqrt(Hz) for i(...))
};

/// Signal against noise at the probe, when a --level is given.
struct SignalToNoise {
  double level = 0;         ///< rms at the input source, V (or A)
  double reference = 0;     ///< Hz, where the gain is taken
  double signal_rms = 0;    ///< level x |G(reference)| at the probe
  double ratio_db = 0;      ///< 20 log10(signal_rms / total_rms); NaN when either is 0
};

struct NoiseResult {
  Probe probe;
  std::string input;                      ///< empty: none
  std::string input_unit;                 ///< "V" (vsrc) or "A" (isrc); empty without input
  double temperature_kelvin = 0;
  Band band;
  std::vector<double> frequencies;        ///< Hz, the printed points
  std::vector<double> density;            ///< per point, V/sqrt(Hz) (A/sqrt(Hz) for i(...))
  std::vector<std::complex<double>> gain; ///< per point, G(f) (empty without input)
  std::vector<double> input_density;      ///< per point, density / |G| (empty without input)
  double total_rms = 0;                   ///< over the band, V (or A)
  /// Over the band, input source's unit; absent (and a note says why) when the
  /// input does not reach the probe somewhere in the band: it is unbounded.
  std::optional<double> input_referred_rms;
  std::vector<NoiseContributor> contributors;  ///< largest share first
  std::vector<ContributorDensity> contributor_density;  ///< the first `curves` contributors
  std::optional<SignalToNoise> signal;
  Weighting weight = Weighting::none;     ///< the weighting of the band figures
  std::string source;                     ///< the noise figure's source resistor; empty: none
  /// Per point, 10 log10(S / S_source), dB; +inf where the source's noise does
  /// not reach the probe (empty without a source).
  std::vector<double> spot_noise_figure_db;
  /// Over the band (weighted with `weight`), dB; +inf when the source's noise
  /// does not reach the probe (unset without a source).
  std::optional<double> noise_figure_db;
  int band_evaluations = 0;               ///< adjoint solves spent on the band integral
  std::vector<std::string> notes;         ///< for people: what a figure cannot say, and why
};

/// Throws InputError for bad options, probe or input, SolveError when the
/// circuit is singular at some frequency or the noise at the probe is not
/// finite (a source or a transfer overflows). Output noise of exactly 0 (no
/// source reaches the probe) is 0, with every share 0; an input that does not
/// reach the probe leaves input_referred_rms empty with a note.
NoiseResult run_noise(const Circuit& circuit, const NoiseOptions& options);
/// The same on a caller's FrequencyResponse of `circuit` (shared with other analyses).
NoiseResult run_noise(const Circuit& circuit, const NoiseOptions& options,
                      FrequencyResponse& response);

}  // namespace tacet
