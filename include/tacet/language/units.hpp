#pragma once
// SI prefixes and units on numbers. A number's suffix is decoded into a scale
// and a dimension; elaboration then checks the dimension against what the
// element or option expects, so `10nF` as a resistance is an error rather than
// a silent 1e-8 ohm.

#include <optional>
#include <string>
#include <string_view>

namespace tacet {

enum class Dimension {
  none,         ///< a plain number, or one with only an SI prefix: fits anything
  resistance,   ///< ohm, Ω
  capacitance,  ///< F
  inductance,   ///< H
  voltage,      ///< V
  current,      ///< A
  frequency,    ///< Hz
  conductance,  ///< S, A/V
  gain,         ///< V/V; written plain or in dB (converted 10^(x/20))
  ratio,        ///< a fraction; % divides by 100
  temperature,  ///< C (Celsius, the default) or K (kelvin)
  slew,         ///< V/s, V/us, V/ms, V/ns
  voltage_density,  ///< V/rtHz (a bare V is accepted too)
  current_density,  ///< A/rtHz (a bare A is accepted too)
  power,        ///< W
  angle,        ///< degrees: deg
  decibel,      ///< a level in dB, kept in dB: plain or with dB (spec limits)
  time,         ///< s (settle: --to, a settling spec's max)
  drift,        ///< V/C (also V/K: the same step), an offset's temperature coefficient
  any,          ///< params and block arguments: every unit accepted
};

/// Reader words for a dimension ("a capacitance").
const char* describe(Dimension dimension);

/// How a decoded number becomes an SI value.
enum class Transform { scale, decibel, kelvin };

struct Unit {
  Dimension dimension = Dimension::none;
  double scale = 1.0;               ///< SI prefix times unit factor
  Transform transform = Transform::scale;
  std::string symbol;               ///< the unit part without prefix ("F", "dB"), or ""
};

/// Decodes a suffix ("kΩ", "nF", "10" has ""). nullopt when it is neither a
/// prefix, a unit, nor a prefix followed by a unit.
std::optional<Unit> decode_suffix(std::string_view suffix);

/// A hint for a suffix that did not decode or does not fit `expected`
/// ("M is mega; write m for milli"), or "" when no particular advice applies.
std::string suffix_hint(std::string_view suffix, Dimension expected);

/// Whether a unit of `unit` may stand where `expected` is wanted.
bool unit_fits(Dimension unit, Dimension expected);

/// The SI value of `number` written with `unit`, for the `expected` dimension
/// (decibels become a ratio, kelvin become Celsius for a temperature).
double apply_unit(double number, const Unit& unit, Dimension expected);

}  // namespace tacet
