#include "tacet/circuit/spec.hpp"

#include <array>

namespace tacet {

namespace {

constexpr std::array<std::pair<SpecKind, const char*>, 18> kKindNames{{
    {SpecKind::gain, "gain"},
    {SpecKind::flatness, "flatness"},
    {SpecKind::phase, "phase"},
    {SpecKind::upper_corner, "upper_corner"},
    {SpecKind::lower_corner, "lower_corner"},
    {SpecKind::noise, "noise"},
    {SpecKind::snr, "snr"},
    {SpecKind::offset, "offset"},
    {SpecKind::rails, "rails"},
    {SpecKind::deviation, "deviation"},
    {SpecKind::mask, "mask"},
    {SpecKind::settling, "settling"},
    {SpecKind::overshoot, "overshoot"},
    {SpecKind::phase_margin, "phase_margin"},
    {SpecKind::gain_margin, "gain_margin"},
    {SpecKind::peaking, "peaking"},
    {SpecKind::impedance, "impedance"},
    {SpecKind::stable, "stable"},
}};

}  // namespace

const char* to_string(SpecKind kind) {
  for (const auto& [k, name] : kKindNames)
    if (k == kind) return name;
  return "gain";
}

std::optional<SpecKind> parse_spec_kind(std::string_view text) {
  for (const auto& [k, name] : kKindNames)
    if (text == name) return k;
  return std::nullopt;
}

const std::vector<std::string>& spec_kind_names() {
  static const std::vector<std::string> names = [] {
    std::vector<std::string> out;
    for (const auto& [k, name] : kKindNames) out.emplace_back(name);
    return out;
  }();
  return names;
}

const char* to_string(SpecUnit unit) {
  switch (unit) {
    case SpecUnit::db: return "dB";
    case SpecUnit::ratio: return "V/V";
    case SpecUnit::amps_per_volt: return "A/V";
    case SpecUnit::degrees: return "deg";
    case SpecUnit::hertz: return "Hz";
    case SpecUnit::volts: return "V";
    case SpecUnit::amps: return "A";
    case SpecUnit::volts_per_amp: return "V/A";
    case SpecUnit::amps_per_amp: return "A/A";
    case SpecUnit::seconds: return "s";
    case SpecUnit::fraction: return "fraction";
    case SpecUnit::ohms: return "ohm";
  }
  return "";
}

}  // namespace tacet
