#pragma once
// The element kinds of the language, one row each: how an element is written
// (keyword, connections, value, options) and what it is electrically (a
// branch current, a voltage it sets, a path it gives, the noise it makes).
// Every stage reads its facts here, from the parser's keywords to the MNA
// numbering and the noise sources, instead of testing kinds one by one.
//
// The table lives with the language, the first stage, so that the parser can
// read the keywords without including a later stage; circuit/circuit.hpp
// includes it for `Element::kind`.
//
// Adding a kind: a value in ElementKind, then a case in count_element_kinds()
// (the build stops until there is one), then its row in kElementKinds (the
// static_asserts below stop the build until the row is there, in enum order).
// Behaviour that depends on more than the kind (its stamps, what i(NAME)
// measures, how it is written back) is in switches without a default, so the
// compiler lists each of them too. DEVELOPERS.md has the whole checklist.

#include <array>
#include <cstddef>
#include <optional>
#include <string_view>

#include "tacet/language/key_table.hpp"
#include "tacet/language/units.hpp"

namespace tacet {

enum class ElementKind { resistor, capacitor, inductor, vsource, isource, vcvs, vccs, opamp };

/// What follows an element's connections: `res R1 (a, b) 10k`,
/// `vsrc V1 (a, gnd) dc=1`, `opamp U1 (+a, -b, out) model_name`.
enum class ValueSyntax { expression, none, model_name };

/// How an element connects: `(a, b)`; `(out_p, out_n; ctl_p, ctl_n)`;
/// `(+in, -in, out)` with the inputs marked, in any order.
enum class Pins { pair, two_pairs, opamp };

/// What a source's dc= and ac= set: the voltage across it or the current
/// through it; `none` for an element that is not a source.
enum class Drive { none, voltage, current };

/// When a property holds between an element's first two nodes.
enum class When { never, always, dc_only, ac_only };

constexpr bool holds(When when, bool at_dc) {
  switch (when) {
    case When::never: return false;
    case When::always: return true;
    case When::dc_only: return at_dc;
    case When::ac_only: return !at_dc;
  }
  return false;
}

struct ElementTraits {
  ElementKind kind;
  const char* keyword;             ///< "res"
  ValueSyntax value_syntax;
  Pins pins;
  Dimension value_dimension;       ///< of Element::value; none when the kind has none
  std::string_view value_noun;     ///< "resistance", for messages about a value after the pins
  std::string_view zero_hint;      ///< hint when that value is zero
  std::string_view value_option;   ///< the option that holds Element::value ("gain"), or ""
  std::string_view value_example;  ///< its value in the hint "write gain=10"
  Drive drive;
  bool has_branch;                 ///< an MNA branch-current unknown (an op amp's output)
  When defines_voltage;            ///< sets the voltage between nodes[0] and nodes[1]
  When conducts;                   ///< a path between nodes[0] and nodes[1] that fixes voltages
  bool thermal_noise;              ///< 4kT/R of its value, unless `noiseless`
  KeyTable options;                ///< the options it accepts, in the order hints list them
};

namespace element_options {
// tol= the largest deviation; dist= how it spreads (uniform, normal); match=
// the matched set the part belongs to and ratio= its own deviation inside it.
inline constexpr KeyRule kResistor[] = {{"tol", Dimension::ratio},
                                        {"noiseless", Dimension::none, KeyForm::flag},
                                        {"dist", Dimension::none},
                                        {"match", Dimension::none},
                                        {"ratio", Dimension::ratio}};
inline constexpr KeyRule kReactive[] = {{"tol", Dimension::ratio},
                                        {"dist", Dimension::none},
                                        {"match", Dimension::none},
                                        {"ratio", Dimension::ratio}};
inline constexpr KeyRule kVoltageSource[] = {
    {"dc", Dimension::voltage},       {"ac", Dimension::voltage},
    {"phase", Dimension::angle},      {"level", Dimension::any},
    {"load", Dimension::resistance},  {"band_low", Dimension::frequency},
    {"band_high", Dimension::frequency}};
inline constexpr KeyRule kCurrentSource[] = {
    {"dc", Dimension::current}, {"ac", Dimension::current}, {"phase", Dimension::angle}};
inline constexpr KeyRule kVcvs[] = {{"gain", Dimension::gain, KeyForm::value, Need::required}};
inline constexpr KeyRule kVccs[] = {{"gm", Dimension::conductance, KeyForm::value, Need::required}};
inline constexpr KeyRule kOpAmp[] = {{"rails", Dimension::voltage},
                                     {"noiseless", Dimension::none, KeyForm::flag}};
}  // namespace element_options

// clang-format off
inline constexpr ElementTraits kElementKinds[] = {
  // kind, keyword, value syntax, pins, value dimension, noun, zero hint, value option, example,
  // drive, branch, sets voltage, conducts, thermal noise, options
  {ElementKind::resistor, "res", ValueSyntax::expression, Pins::pair, Dimension::resistance,
   "resistance", "for a short, connect the nodes directly", "", "",
   Drive::none, false, When::never, When::always, true, element_options::kResistor},
  {ElementKind::capacitor, "cap", ValueSyntax::expression, Pins::pair, Dimension::capacitance,
   "capacitance", "", "", "",
   Drive::none, false, When::never, When::ac_only, false, element_options::kReactive},
  {ElementKind::inductor, "ind", ValueSyntax::expression, Pins::pair, Dimension::inductance,
   "inductance", "", "", "",
   Drive::none, true, When::dc_only, When::always, false, element_options::kReactive},
  {ElementKind::vsource, "vsrc", ValueSyntax::none, Pins::pair, Dimension::none,
   "", "", "", "",
   Drive::voltage, true, When::always, When::always, false, element_options::kVoltageSource},
  {ElementKind::isource, "isrc", ValueSyntax::none, Pins::pair, Dimension::none,
   "", "", "", "",
   Drive::current, false, When::never, When::never, false, element_options::kCurrentSource},
  {ElementKind::vcvs, "vcvs", ValueSyntax::none, Pins::two_pairs, Dimension::gain,
   "", "", "gain", "10",
   Drive::none, true, When::always, When::always, false, element_options::kVcvs},
  // A vccs gives a path only wired across its own control pair (mna.cpp).
  {ElementKind::vccs, "vccs", ValueSyntax::none, Pins::two_pairs, Dimension::conductance,
   "", "", "gm", "1m",
   Drive::none, false, When::never, When::never, false, element_options::kVccs},
  // An op amp's output sets a voltage to gnd and its inputs conduct through
  // rin, both by its model (mna.cpp); nothing holds between its inputs alone.
  {ElementKind::opamp, "opamp", ValueSyntax::model_name, Pins::opamp, Dimension::none,
   "", "", "", "",
   Drive::none, true, When::never, When::never, false, element_options::kOpAmp},
};
// clang-format on

// The number of kinds, counted by a switch with one case per kind and no
// default: a kind added to the enum without a case here stops the build.
#pragma GCC diagnostic push
#pragma GCC diagnostic error "-Wswitch"
constexpr std::size_t count_element_kinds() {
  std::size_t n = 0;
  for (;; ++n) {
    switch (static_cast<ElementKind>(n)) {
      case ElementKind::resistor:
      case ElementKind::capacitor:
      case ElementKind::inductor:
      case ElementKind::vsource:
      case ElementKind::isource:
      case ElementKind::vcvs:
      case ElementKind::vccs:
      case ElementKind::opamp:
        continue;
    }
    return n;
  }
}
#pragma GCC diagnostic pop

constexpr bool rows_in_enum_order() {
  for (std::size_t i = 0; i < std::size(kElementKinds); ++i)
    if (static_cast<std::size_t>(kElementKinds[i].kind) != i) return false;
  return true;
}

static_assert(std::size(kElementKinds) == count_element_kinds(),
              "every ElementKind needs its row in kElementKinds");
static_assert(rows_in_enum_order(), "kElementKinds lists the kinds in enum order");

constexpr const ElementTraits& traits(ElementKind kind) {
  return kElementKinds[static_cast<std::size_t>(kind)];
}

/// The keyword that declares the kind ("res", "cap", ...).
constexpr const char* to_keyword(ElementKind kind) { return traits(kind).keyword; }

/// The kind a keyword declares; nullopt for any other word.
constexpr std::optional<ElementKind> element_kind_of(std::string_view keyword) {
  for (const ElementTraits& row : kElementKinds)
    if (keyword == row.keyword) return row.kind;
  return std::nullopt;
}

}  // namespace tacet
