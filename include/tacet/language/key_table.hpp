#pragma once
// The keys a statement accepts, as data: an element's options (`tol=1%`,
// `noiseless`), an op-amp model's parameters (`gbw 10M`) and a spec's options
// (`from=20Hz`). One reader in elaboration checks every statement against its
// table (unknown key with a nearest-name hint, a key given twice, a flag given
// a value or a value left out, a required key missing) and applies the
// `--set NAME.key=` overrides, so the three statements cannot drift apart.

#include <span>
#include <string_view>

#include "tacet/language/units.hpp"

namespace tacet {

/// Whether a key is written with a value (`tol=1%`) or bare (`noiseless`).
enum class KeyForm { value, flag };

/// Whether a statement must give the key. A `repeated` key may be given more
/// than once (a mask's points: `at= min= max=` for each), read in order by the
/// statement itself.
enum class Need { optional, required, repeated };

/// One key of a statement. A value key of Dimension::none is a name
/// (`current=R1`, `input=Vin`), read by the statement itself.
struct KeyRule {
  std::string_view name;
  Dimension dimension = Dimension::none;
  KeyForm form = KeyForm::value;
  Need need = Need::optional;
};

/// A statement's keys, in the order hints list them.
using KeyTable = std::span<const KeyRule>;

/// The rule for `name`, or nullptr when the table has none.
constexpr const KeyRule* find_key(KeyTable table, std::string_view name) {
  for (const KeyRule& rule : table)
    if (rule.name == name) return &rule;
  return nullptr;
}

}  // namespace tacet
