#pragma once
// The budget, written beside the schematic: one `spec` line per requirement.
// Elaboration checks every name a spec refers to; `tacet check` measures each
// spec and compares it with its limits.

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "tacet/circuit/curves.hpp"
#include "tacet/circuit/weighting.hpp"
#include "tacet/language/source.hpp"

namespace tacet {

enum class SpecKind {
  gain,          ///< |H| at `at` within [min, max] (dB or V/V)
  flatness,      ///< largest |dB(H(f)) - dB(H(ref))| over [from, to] at most max (dB)
  phase,         ///< arg H at `at` within [min, max] (degrees)
  upper_corner,  ///< first frequency above `ref` where |H| is `drop` dB below |H(ref)|, in [min, max] Hz
  lower_corner,  ///< the same below `ref`
  noise,         ///< output noise rms over [from, to] at most max (V)
  snr,           ///< signal-to-noise ratio over [from, to] at least min (dB), signal `level` at `input`
  offset,        ///< worst-case DC offset band of a node at most max (V)
  rails,         ///< every op-amp output at least `margin` inside its rails minus swing
  deviation,     ///< largest |dB(H/H(ref)) - dB(T/T(ref))| over [from, to] at most max (dB), T the target
  mask,          ///< closest approach of dB(H) (re H(ref), or absolute) to a mask, at least 0 dB
  settling,      ///< step response from `input` settled to `band` of final within max (s)
  overshoot,     ///< step response from `input`: (peak - final) / final at most max (fraction)
  phase_margin,  ///< smallest phase margin of `opamp`'s loop over [from, to] at least min (deg)
  gain_margin,   ///< smallest gain margin of `opamp`'s loop over [from, to] at least min (dB)
  peaking,       ///< largest dB(H(f)) - dB(H(ref)) over [from, to] at most max (dB)
  impedance,     ///< |Z| of a z() probe at `at`, or its largest over [from, to], in [min, max] (ohm)
  stable,        ///< every pole in the left half-plane: the rightmost pole's Re s/(2 pi) below 0 Hz
};

const char* to_string(SpecKind kind);
std::optional<SpecKind> parse_spec_kind(std::string_view text);
/// Every kind's name, in the order of the enum (for hints).
const std::vector<std::string>& spec_kind_names();

/// How a spec's value and limits are written and shown.
/// `ratio` is V/V; `amps_per_volt` the ratio of a branch-current probe i(NAME)
/// to a voltage source's ac, as a gain spec on a current reports it.
/// `amps` is a noise spec's rms on a branch current (current=R1);
/// `volts_per_amp` and `amps_per_amp` a gain from a current source (input=I1).
enum class SpecUnit { db, ratio, amps_per_volt, degrees, hertz, volts, amps, volts_per_amp, amps_per_amp,
                      seconds, fraction, ohms };
const char* to_string(SpecUnit unit);

/// One point of a mask: at `f` the response lies within [low, high] dB (an
/// absent bound is unbounded). Between two points a bound runs straight in
/// log f when both points have it; else that side is open there.
struct MaskPoint {
  double f = 0;                ///< Hz
  std::optional<double> low;   ///< dB
  std::optional<double> high;  ///< dB
};

struct Spec {
  std::string name;
  SpecKind kind = SpecKind::gain;
  SourceLocation where;
  std::string probe;      ///< "out", "adc_p,adc_n" or "i(R1)"; empty for rails
  double at = 0;          ///< Hz: gain, phase
  double from = 0;        ///< Hz: band of flatness, noise, snr; search range of corners
  double to = 0;          ///< Hz
  double ref = 0;         ///< Hz: flatness, corner, deviation and mask reference; snr: where the signal is taken
  double drop = 3.0102999566398120;  ///< dB below the reference that defines a corner (half power)
  std::optional<double> min;  ///< in `unit`
  std::optional<double> max;  ///< in `unit`
  SpecUnit unit = SpecUnit::db;
  /// snr: the source the signal enters at; a response spec (gain, phase, flatness,
  /// corners, deviation, mask): the source whose transfer alone is measured, a unit
  /// at it and every other source's ac zeroed (empty: every source's ac, superposed)
  /// settling, overshoot: the source that steps (empty: the only source with an ac value)
  std::string input;
  double level = 0;       ///< snr: rms signal at `input`, V
  double margin = 0;      ///< rails: V inside the rails minus swing
  TargetCurve target;     ///< deviation: the curve the response should follow
  std::vector<MaskPoint> mask;  ///< mask: the points, frequencies increasing
  bool relative = false;  ///< mask: bounds re |H(ref)| (ref= given), else re 1 V/V (or 1 A/V)
  double band = 1e-4;     ///< settling: the band about final, a fraction of it
  std::string opamp;      ///< phase_margin, gain_margin: the op amp whose loop is measured
  Weighting weight = Weighting::none;  ///< noise, snr: weight= on the band total
};

}  // namespace tacet
