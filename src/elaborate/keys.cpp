// The one reader of key tables: element options, model parameters and spec
// options are all checked here against their statement's table.

#include <algorithm>

#include <boost/container/small_vector.hpp>
#include <fmt/format.h>

#include "elaborate/elaborator.hpp"

namespace tacet::detail {

namespace {

/// The keys a statement has given, by name. A statement writes a handful of
/// keys, so a short list searched from the start beats a tree that allocates
/// a node for each; it holds each name once, so it never outgrows the table.
class GivenKeys {
 public:
  bool contains(std::string_view name) const {
    return std::find(names_.begin(), names_.end(), name) != names_.end();
  }
  /// False when `name` was given before.
  bool insert(std::string_view name) {
    if (contains(name)) return false;
    names_.push_back(name);
    return true;
  }

 private:
  boost::container::small_vector<std::string_view, 16> names_;
};

}  // namespace

std::vector<WrittenKey> written_keys(const std::vector<ast::Option>& options) {
  std::vector<WrittenKey> out;
  out.reserve(options.size());
  for (const auto& o : options) out.push_back({&o.key, o.value ? &*o.value : nullptr, &o});
  return out;
}

std::vector<WrittenKey> written_keys(const std::vector<ast::ModelEntry>& entries) {
  std::vector<WrittenKey> out;
  out.reserve(entries.size());
  for (const auto& e : entries) out.push_back({&e.key, &e.value, &e});
  return out;
}

bool Elaborator::check_key(const WrittenKey& key, const KeyRule* rule, const KeyWording& wording,
                           int file, KeyTable table) {
  const std::string& name = key.key->text;
  if (!rule) {
    std::vector<std::string> names;
    for (const KeyRule& r : table) names.emplace_back(r.name);
    error(file, *key.key, fmt::format(fmt::runtime(wording.unknown), name, wording.subject),
          choice_hint(name, names, wording.choices));
    return false;
  }
  const bool flag = rule->form == KeyForm::flag;
  if (flag == !key.value) return true;
  error(file, *key.whole,
        flag ? fmt::format("'{}' is a flag and takes no value", name)
             : fmt::format(fmt::runtime(wording.needs_value), name, wording.subject),
        flag ? fmt::format("write just '{}'", name) : fmt::format("write {}=...", name));
  return false;
}

KeysRead Elaborator::read_keys(const std::vector<WrittenKey>& written, KeyTable table,
                               const KeyWording& wording, int file, const std::string& owner,
                               FunctionRef<void(const KeyValue&)> use) {
  KeysRead read;
  GivenKeys given;
  // `--set OWNER.key=` wins over the written value; a flag takes no override.
  auto override_of = [&](const KeyRule& rule) -> ParsedOverride* {
    if (owner.empty() || no_overrides() || rule.form == KeyForm::flag) return nullptr;
    ParsedOverride* o = find_override(owner + "." + std::string(rule.name));
    if (o) o->used = true;
    return o;
  };
  for (const WrittenKey& key : written) {
    const KeyRule* rule = find_key(table, key.key->text);
    if (!check_key(key, rule, wording, file, table)) {
      read.ok = false;
    } else if (!given.insert(rule->name) && rule->need != Need::repeated) {
      error(file, *key.key, fmt::format(fmt::runtime(wording.twice), key.key->text, wording.subject));
      read.ok = false;
    } else if (ParsedOverride* o = override_of(*rule)) {
      use({rule, key.key, &o->value, o->file, key.whole});
    } else {
      use({rule, key.key, key.value, file, key.whole});
    }
  }
  for (const KeyRule& rule : table) {  // --set OWNER.key for a key not written
    if (given.contains(rule.name)) continue;
    if (ParsedOverride* o = override_of(rule)) {
      given.insert(rule.name);
      use({&rule, nullptr, &o->value, o->file, nullptr});
    } else if (rule.need == Need::required) {
      read.missing.push_back(rule.name);
    }
  }
  return read;
}

}  // namespace tacet::detail
