#pragma once
// The budget, written beside the schematic: one `spec` line per requirement.
// Elaboration checks every name a spec refers to; `tacet check` measures each
// spec and compares it with its limits.

#include <optional>
#include <string>
#include <string_view>
#include <vector>

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
};

const char* to_string(SpecKind kind);
std::optional<SpecKind> parse_spec_kind(std::string_view text);
/// Every kind's name, in the order of the enum (for hints).
const std::vector<std::string>& spec_kind_names();

/// How a spec's value and limits are written and shown.
/// `ratio` is V/V; `amps_per_volt` the ratio of a branch-current probe i(NAME)
/// to a voltage source's ac, as a gain spec on a current reports it.
enum class SpecUnit { db, ratio, amps_per_volt, degrees, hertz, volts };
const char* to_string(SpecUnit unit);

struct Spec {
  std::string name;
  SpecKind kind = SpecKind::gain;
  SourceLocation where;
  std::string probe;      ///< "out", "adc_p,adc_n" or "i(R1)"; empty for rails
  double at = 0;          ///< Hz: gain, phase
  double from = 0;        ///< Hz: band of flatness, noise, snr; search range of corners
  double to = 0;          ///< Hz
  double ref = 0;         ///< Hz: flatness and corner reference
  double drop = 3.0102999566398120;  ///< dB below the reference that defines a corner (half power)
  std::optional<double> min;  ///< in `unit`
  std::optional<double> max;  ///< in `unit`
  SpecUnit unit = SpecUnit::db;
  std::string input;      ///< snr: the source the signal enters at
  double level = 0;       ///< snr: rms signal at `input`, V
  double margin = 0;      ///< rails: V inside the rails minus swing
  Weighting weight = Weighting::none;  ///< noise, snr: weight= on the band total
};

}  // namespace tacet
