#pragma once
// Signal headroom at the largest input: for every op amp, the peak signal at
// its output and inputs over a band, on top of the DC bias band, against the
// rails, and the slew rate the output signal needs.
//
// Each source with `level=` is driven by a sine of its peak amplitude Vp
// (phase 0, every other source off): Vp = Vrms sqrt(2), or Vp given, or, for a
// power P into a load R, Vrms = sqrt(P R) (P = Vrms^2 / R), Vp = sqrt(2 P R).
// With several such sources their peaks add (the worst relative phase).
// At every frequency f of a log grid over the band, a pin with AC peak
// |V(f)|, DC nominal V0 and DC worst-case band W spans
//   [V0 - W - |V(f)|, V0 + W + |V(f)|]
// and is checked against
//   output: [rail_low + swing, rail_high - swing];
//   inputs: [rail_low + vcm_low, rail_high - vcm_high] (a missing vcm key
//           counts as 0: an input may not go past its supply).
// The margin is the smaller distance to the two limits (negative: exceeded).
// The slew rate a sine needs is its largest slope, 2 pi f Vp, against `slew`.
// The output current is the peak of the current the op amp's output branch
// delivers (into the feedback network and the load alike), |I(f)| summed over
// the level sources like the voltages, against the model's `iout_max`; the
// DC output current is not part of it (the DC point carries no load current
// unless a source biases one).
//
// Supply ripple: with `supply ... ripple=R ripple_f=F`, every op amp k whose
// model gives psrr sees e_k = R/psrr_k in series with its + input (a source on
// its gain row, like vos). The ripple at node n is sum_k |H_kn(F)| e_k, the
// worst relative phase of the op amps' errors, on the AC factorisation at F.
// It is reported at every op-amp output (no level= needed).
//
// Cautions: a declared level above 30 V rms or 42.4 V peak (the usual
// extra-low-voltage limits) is reported as hazardous; tacet defers to local
// electrical codes and licensed practice for anything built and connected.

#include <cstddef>
#include <string>
#include <vector>

#include "tacet/analysis/bias.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

class FrequencyResponse;

/// The peak of a sine at `level`, V.
double peak_volts(const SignalLevel& level);
/// The rms of a sine at `level`, V.
double rms_volts(const SignalLevel& level);
/// Above 30 V rms or 42.4 V peak.
bool is_hazardous(const SignalLevel& level);

struct HeadroomOptions {
  double band_low = 0;   ///< Hz; 0: from the sources' band_low= / band_high=
  double band_high = 0;  ///< Hz
  int per_decade = 50;   ///< log grid over the band, points per decade
  SolverKind solver = SolverKind::klu;
  /// Workers for the sweep's solves (0: one per core); the result is the
  /// same to the bit for any number.
  int threads = 1;

  /// Empty when valid, else a message naming the option and the rule.
  std::string validate() const;
};

struct LevelSource {
  std::string name;
  SignalLevel level;
  double peak = 0;  ///< V
  double rms = 0;   ///< V
  bool hazardous = false;
};

/// One pin's excursion at the frequency where its margin is smallest.
struct PinHeadroom {
  std::string node;
  double signal_peak = 0;         ///< V, AC peak at that frequency
  double low = 0;                 ///< V, lowest excursion (DC band and signal)
  double high = 0;                ///< V, highest excursion
  double limit_low = kNotGiven;   ///< V
  double limit_high = kNotGiven;  ///< V
  double margin = kNotGiven;      ///< V, smaller distance to a limit; < 0: exceeded
  double frequency = 0;           ///< Hz, where the margin is smallest
  bool ok() const { return !(margin < 0); }
};

struct SlewHeadroom {
  double needed = 0;     ///< V/s, largest 2 pi f |Vout(f)| over the band
  double available = 0;  ///< V/s, the model's slew; 0: not given
  double frequency = 0;  ///< Hz, where the need is largest
  bool ok() const { return available == 0 || needed <= available; }
};

struct CurrentHeadroom {
  double needed = 0;     ///< A, largest peak output current over the band
  double available = 0;  ///< A, the model's iout_max; 0: not given
  double frequency = 0;  ///< Hz, where the need is largest
  bool ok() const { return available == 0 || needed <= available; }
};

struct OpAmpHeadroom {
  std::string name;
  bool has_rails = false;     ///< false: no pin was checked
  bool has_cm_range = false;  ///< the model gives vcm_low or vcm_high
  PinHeadroom out, plus, minus;
  SlewHeadroom slew;
  CurrentHeadroom current;
};

/// The supply ripple that reaches an op amp's output.
struct RippleAtOutput {
  std::string opamp;
  std::string node;  ///< its output node
  double peak = 0;   ///< V peak at the ripple frequency
};

struct HeadroomResult {
  double ripple = 0;                 ///< V peak on the rails; 0: none declared
  double ripple_hz = 0;              ///< Hz
  std::vector<RippleAtOutput> ripple_at;  ///< per op amp; empty without ripple or psrr
  std::vector<LevelSource> sources;  ///< empty: no source declares level=
  double band_low = 0;               ///< Hz
  double band_high = 0;              ///< Hz
  std::vector<OpAmpHeadroom> opamps;
  std::vector<std::string> warnings;  ///< for people: limits exceeded
  std::vector<std::string> cautions;  ///< hazardous levels
};

/// Throws InputError when a level is declared but no band is known (neither
/// option nor band_low=/band_high= on a source) or the band is invalid;
/// SolveError when the circuit is singular in the band.
HeadroomResult run_headroom(const Circuit& circuit, const BiasResult& bias,
                            const HeadroomOptions& options = {});
/// The same on a caller's FrequencyResponse of `circuit` (shared with other analyses).
HeadroomResult run_headroom(const Circuit& circuit, const BiasResult& bias,
                            const HeadroomOptions& options, FrequencyResponse& response);

}  // namespace tacet
