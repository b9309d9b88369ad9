#include "tacet/language/units.hpp"

#include <array>
#include <cctype>
#include <cmath>
#include <utility>

namespace tacet {

namespace {

struct Prefix {
  std::string_view text;
  double scale;
};

constexpr std::array<Prefix, 11> kPrefixes{{{"f", 1e-15},
                                            {"p", 1e-12},
                                            {"n", 1e-9},
                                            {"u", 1e-6},
                                            {"\xC2\xB5", 1e-6},  // µ (micro sign)
                                            {"\xCE\xBC", 1e-6},  // μ (Greek mu)
                                            {"m", 1e-3},
                                            {"k", 1e3},
                                            {"M", 1e6},
                                            {"G", 1e9},
                                            {"T", 1e12}}};

struct UnitSymbol {
  std::string_view text;
  Dimension dimension;
  Transform transform;
};

constexpr std::array<UnitSymbol, 20> kUnits{{
    {"ohm", Dimension::resistance, Transform::scale},
    {"\xCE\xA9", Dimension::resistance, Transform::scale},  // Ω
    {"F", Dimension::capacitance, Transform::scale},
    {"H", Dimension::inductance, Transform::scale},
    {"V", Dimension::voltage, Transform::scale},
    {"A", Dimension::current, Transform::scale},
    {"Hz", Dimension::frequency, Transform::scale},
    {"S", Dimension::conductance, Transform::scale},
    {"A/V", Dimension::conductance, Transform::scale},
    {"dB", Dimension::gain, Transform::decibel},
    {"C", Dimension::temperature, Transform::scale},
    {"K", Dimension::temperature, Transform::kelvin},
    {"V/s", Dimension::slew, Transform::scale},
    {"V/rtHz", Dimension::voltage_density, Transform::scale},
    {"A/rtHz", Dimension::current_density, Transform::scale},
    {"W", Dimension::power, Transform::scale},
    {"deg", Dimension::angle, Transform::scale},
    {"s", Dimension::time, Transform::scale},
    {"V/C", Dimension::drift, Transform::scale},  // a step of 1 C is a step of 1 K
    {"V/K", Dimension::drift, Transform::scale},
}};

std::optional<Unit> decode_unit(std::string_view text) {
  for (const auto& u : kUnits)
    if (u.text == text) return Unit{u.dimension, 1.0, u.transform, std::string(u.text)};
  // A slew rate per prefixed second: V/us is 1e6 V/s.
  if (text.size() > 3 && text.substr(0, 2) == "V/" && text.back() == 's') {
    auto prefix = text.substr(2, text.size() - 3);
    for (const auto& p : kPrefixes)
      if (p.text == prefix) return Unit{Dimension::slew, 1.0 / p.scale, Transform::scale, std::string(text)};
  }
  return std::nullopt;
}

}  // namespace

const char* describe(Dimension dimension) {
  switch (dimension) {
    case Dimension::none: return "a plain number";
    case Dimension::resistance: return "a resistance";
    case Dimension::capacitance: return "a capacitance";
    case Dimension::inductance: return "an inductance";
    case Dimension::voltage: return "a voltage";
    case Dimension::current: return "a current";
    case Dimension::frequency: return "a frequency";
    case Dimension::conductance: return "a conductance";
    case Dimension::gain: return "a gain";
    case Dimension::ratio: return "a ratio";
    case Dimension::temperature: return "a temperature";
    case Dimension::slew: return "a slew rate";
    case Dimension::voltage_density: return "a voltage noise density";
    case Dimension::current_density: return "a current noise density";
    case Dimension::power: return "a power";
    case Dimension::angle: return "an angle";
    case Dimension::decibel: return "a level in dB";
    case Dimension::time: return "a time";
    case Dimension::drift: return "a drift (V/C)";
    case Dimension::any: return "a value";
  }
  return "a value";
}

namespace {

std::optional<Unit> decode_suffix_by_tables(std::string_view suffix);

/// A suffix of one character ("k", "p", "V") is most of what netlists write:
/// each is decoded once, by the tables, and looked up after that.
const std::optional<Unit>& decode_one_character(char c) {
  static const auto decoded = [] {
    std::array<std::optional<Unit>, 128> out{};
    for (std::size_t i = 1; i < out.size(); ++i) {
      const char one = static_cast<char>(i);
      out[i] = decode_suffix_by_tables(std::string_view(&one, 1));
    }
    return out;
  }();
  return decoded[static_cast<unsigned char>(c)];
}

}  // namespace

std::optional<Unit> decode_suffix(std::string_view suffix) {
  if (suffix.size() == 1 && static_cast<unsigned char>(suffix[0]) < 128 && suffix[0] != '\0')
    return decode_one_character(suffix[0]);
  return decode_suffix_by_tables(suffix);
}

namespace {

std::optional<Unit> decode_suffix_by_tables(std::string_view suffix) {
  if (suffix.empty()) return Unit{};
  if (suffix == "%") return Unit{Dimension::ratio, 0.01, Transform::scale, "%"};
  if (auto unit = decode_unit(suffix)) return unit;
  for (const auto& p : kPrefixes) {
    if (suffix.substr(0, p.text.size()) != p.text) continue;
    auto rest = suffix.substr(p.text.size());
    if (rest.empty()) return Unit{Dimension::none, p.scale, Transform::scale, ""};
    if (auto unit = decode_unit(rest); unit && unit->transform == Transform::scale) {
      unit->scale *= p.scale;
      return unit;
    }
  }
  return std::nullopt;
}

}  // namespace

bool unit_fits(Dimension unit, Dimension expected) {
  if (unit == Dimension::none || expected == Dimension::any || unit == expected) return true;
  if (expected == Dimension::voltage_density) return unit == Dimension::voltage;
  if (expected == Dimension::current_density) return unit == Dimension::current;
  if (expected == Dimension::decibel) return unit == Dimension::gain;
  return false;
}

double apply_unit(double number, const Unit& unit, Dimension expected) {
  switch (unit.transform) {
    case Transform::decibel:
      return expected == Dimension::decibel ? number : std::pow(10.0, number / 20.0);
    case Transform::kelvin:
      return expected == Dimension::temperature || expected == Dimension::any ? number - 273.15
                                                                              : number;
    case Transform::scale: break;
  }
  return number * unit.scale;
}

std::string suffix_hint(std::string_view suffix, Dimension expected) {
  std::string lower(suffix);
  for (auto& c : lower) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (lower.substr(0, 3) == "meg") return "M is mega; write m for milli";
  if (!suffix.empty() && suffix[0] == 'K' && expected != Dimension::temperature)
    return "K is kelvin; write k for kilo";
  if (suffix == "U") return "write u or \xC2\xB5 for micro";
  if (suffix == "N") return "write n for nano";
  if (suffix == "P") return "write p for pico";
  if (lower == "ohms" || lower == "ohm") return "write ohm (lower case) or \xCE\xA9";
  if (lower.size() >= 2 && lower.substr(lower.size() - 2) == "hz") return "write Hz, as in 10kHz";
  if (lower == "db" && suffix != "dB") return "write dB";
  if (suffix.find("/u") != std::string_view::npos || suffix.find("/s") != std::string_view::npos)
    return "slew rates are written V/s, V/ms, V/us or V/ns";
  if (expected == Dimension::ratio) return "write a fraction (0.01) or a percentage (1%)";
  return {};
}

}  // namespace tacet
