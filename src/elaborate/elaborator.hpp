#pragma once
// Private to elaboration: the state shared by elaborate.cpp (files, params,
// models, overrides) and elaborate_instance.cpp (elements and block expansion).

#include <functional>
#include <map>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <type_traits>
#include <utility>
#include <vector>

#include "tacet/common/name_index.hpp"
#include "tacet/language/ast.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/circuit/band.hpp"
#include "tacet/common/function_ref.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "tacet/language/expression.hpp"
#include "tacet/language/key_table.hpp"

namespace tacet::detail {

/// A syntax-tree node together with the file it came from.
template <typename Node>
struct From {
  const Node* node = nullptr;
  int file = -1;
};

struct ParsedOverride {
  Override text;
  ast::Expr value;
  int file = -1;
  bool used = false;
};

/// A key as written on a statement: `key=value`, a bare `key`, or a model's `key value`.
struct WrittenKey {
  const ast::Identifier* key = nullptr;
  const ast::Expr* value = nullptr;  ///< nullptr when written bare
  const ast::Located* whole = nullptr;
};
std::vector<WrittenKey> written_keys(const std::vector<ast::Option>& options);
std::vector<WrittenKey> written_keys(const std::vector<ast::ModelEntry>& entries);

/// How one statement's key errors read; `{0}` (or a lone `{}`) stands for the
/// key, `{1}` for `subject` (the statement's keyword or name). Views of
/// literals, so a statement pays for its wording only when a message is made.
struct KeyWording {
  std::string_view unknown;   ///< "'{1}' takes no option '{0}'"
  std::string_view choices;   ///< what a hint that lists the keys calls them: "options"
  std::string_view twice;     ///< "option '{}' is given twice"
  std::string_view needs_value = "option '{}' needs a value";
  std::string_view subject = {};
};

/// Names already defined, by kind: looked up once per element, so hashed.
/// Names defined once (elements, models, blocks, specs) and where each was.
class DefinedNames {
 public:
  void reserve(std::size_t count) {
    index_.reserve(count);
    names_.reserve(count);
    where_.reserve(count);
  }
  /// Records `name` at `at` unless it is there: where it was first defined,
  /// and whether this was the first time.
  std::pair<SourceLocation, bool> emplace(const std::string& name, SourceLocation at) {
    const auto [i, added] = index_.insert(name, static_cast<int>(names_.size()), [&](int k) -> const std::string& {
      return names_[static_cast<std::size_t>(k)];
    });
    if (!added) return {where_[static_cast<std::size_t>(i)], false};
    names_.push_back(name);
    where_.push_back(at);
    return {at, true};
  }
  /// In the order defined.
  const std::vector<std::string>& names() const { return names_; }

 private:
  NameIndex index_;
  std::vector<std::string> names_;
  std::vector<SourceLocation> where_;
};

/// An accepted key, as the statement will read it: the value of `--set
/// OWNER.key=` when there is one (then `file` is the override's own), else
/// the value written.
struct KeyValue {
  const KeyRule* rule = nullptr;
  const ast::Identifier* key = nullptr;  ///< the key as written; nullptr when only --set gives it
  const ast::Expr* value = nullptr;      ///< nullptr for a flag
  int file = -1;                         ///< the file `value` is in
  const ast::Located* written = nullptr; ///< the whole `key=value` written, or nullptr
};

struct KeysRead {
  bool ok = true;                         ///< no unknown, repeated or malformed key
  std::vector<std::string_view> missing;  ///< required keys neither written nor --set
};

/// A spec's accepted options by key.
using SpecKeys = std::map<std::string_view, KeyValue>;

/// Where an instance is being expanded: the dotted prefix ("F1.", "" at top),
/// the nodes its ports stand for, and the params it sees.
/// How deep `use` may nest blocks inside blocks: every level is a frame of
/// the recursive expansion, so the depth is bounded before the stack is.
inline constexpr std::size_t kDeepestBlockNesting = 64;

struct InstanceContext {
  std::string prefix;
  std::map<std::string, int> ports;
  const Scope* scope = nullptr;
  std::vector<std::string> block_stack;  ///< for reporting a block that uses itself
};

class Elaborator {
 public:
  Elaborator(FileReader& reader, SourceManager& sources, Diagnostics& diagnostics,
             const ElaborateOptions& options);
  std::optional<Circuit> run(const std::string& path);

 private:
  // elaborate.cpp: files and declarations
  void load_file(const std::string& path, SourceLocation included_from);
  bool report_include_cycle(const std::string& path, const std::string& identity,
                            SourceLocation included_from);
  void report_unreadable(const std::string& path, SourceLocation included_from);
  static bool ends_with_netlist_suffix(const std::string& path);
  void collect(const ast::Netlist& netlist, int file);
  void declare_param(const ast::Param& param, int file, Scope& scope, const std::string& prefix);
  void declare_supply(const ast::Supply& supply, int file);
  void declare_ambient(const ast::Ambient& ambient, int file);
  void parse_overrides();
  void resolve_models();
  std::optional<OpAmpModel> resolve_model(const ast::Model& model, int file);
  bool set_model_key(OpAmpModel& model, const KeyValue& entry);
  void report_unused_overrides();
  ParsedOverride* find_override(const std::string& name);
  bool check_unique(DefinedNames& seen, const std::string& what,
                    const ast::Identifier& name, int file, const std::string& full_name);

  // keys.cpp: the one reader of key tables. Checks each written key against
  // `table` (unknown, malformed, twice: reported, and then skipped) and calls
  // `use` for each accepted key in the order written, then for each key not
  // written that `--set OWNER.key=` gives (no overrides when `owner` is empty).
  KeysRead read_keys(const std::vector<WrittenKey>& written, KeyTable table,
                     const KeyWording& wording, int file, const std::string& owner,
                     FunctionRef<void(const KeyValue&)> use);
  bool check_key(const WrittenKey& key, const KeyRule* rule, const KeyWording& wording, int file,
                 KeyTable table);

  // elaborate_spec.cpp: the budget
  void elaborate_spec(const ast::Spec& spec, int file);
  std::optional<std::string> spec_probe(const ast::Spec& spec, int file, const KeyValue* current);
  std::optional<double> spec_number(const SpecKeys& given, std::string_view key,
                                    Dimension dimension, bool& ok);
  bool read_spec_band(Spec& spec, const SpecKeys& given);
  bool read_spec_limits(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given, bool& ok);
  bool read_gain_limits(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given, bool& ok);
  bool read_input_source(Spec& spec, const SpecKeys& given);
  bool read_target(Spec& spec, const SpecKeys& given);
  bool read_mask(Spec& spec, const ast::Spec& ast_spec, int file);
  bool read_step_spec(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given, bool& ok);
  bool read_stability_limits(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given, bool& ok);
  bool read_impedance_limits(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given, bool& ok);
  bool read_spec_opamp(Spec& spec, const SpecKeys& given);
  bool read_spec_weight(Spec& spec, const SpecKeys& given);
  bool weight_fits(SpecKind kind, const ast::Spec& ast_spec, int file);
  bool attach_spec_probe(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given, int file);

  // elaborate_instance.cpp: elements and blocks
  void instantiate(const ast::Instance& instance, int file, const InstanceContext& context);
  void build_element(const ast::Instance& instance, int file, const InstanceContext& context,
                     ElementKind kind);
  void expand_block(const ast::Instance& use, int file, const InstanceContext& context);
  const From<ast::Block>* find_block(const ast::Instance& use, int file,
                                     const InstanceContext& context);
  bool bind_ports(const ast::Instance& use, const ast::Block& block, int file,
                  const InstanceContext& context, InstanceContext& inner);
  bool bind_arguments(const ast::Instance& use, int file, const From<ast::Block>& block,
                      const std::string& full, const Scope& outer, Scope& scope);
  bool check_connections(const ast::Instance& instance, int file, ElementKind kind);
  std::vector<int> connect(const ast::Instance& instance, const InstanceContext& context,
                           ElementKind kind, int file);
  int resolve_node(const std::string& name, const InstanceContext& context, SourceLocation where);
  /// `--set` names none of the statements: the common case, which needs no lookup.
  bool no_overrides() const { return overrides_.empty(); }
  std::optional<double> value_of(const ast::Expr& expr, int file, const Scope& scope,
                                 Dimension dimension);
  std::optional<double> overridden(const std::string& name, const Scope& scope,
                                   Dimension dimension);
  std::optional<Rails> rails_of(const ast::Expr& expr, int file, const Scope& scope);
  std::optional<SignalLevel> level_of(const ast::Expr& expr, int file, const Scope& scope);
  bool check_level(const Element& e, const ast::Instance& instance, int file);
  bool read_element_value(Element& e, const ast::Instance& instance, int file, const Scope& scope);
  bool read_model_name(Element& e, const ast::Expr& value, int file);
  bool apply_option(Element& e, const KeyValue& option, const Scope& scope, double& load);
  bool read_distribution(const ast::Expr& value, int file, const std::string& owner,
                         Distribution& dist);
  bool set_model_tolerance(OpAmpModel& model, const KeyValue& entry);
  bool read_match(Element& e, const ast::Expr& value, int file);
  /// Every part of a matched set spreads the same way (their common draw is one).
  void check_matched_sets();

  void error(int file, const ast::Located& where, std::string message, std::string hint = {});

  FileReader& reader_;
  SourceManager& sources_;
  Diagnostics& diagnostics_;
  const ElaborateOptions& options_;

  Circuit circuit_;
  Scope globals_;
  std::vector<std::unique_ptr<ast::Netlist>> netlists_;  // keeps nodes alive
  std::vector<std::string> include_stack_;       ///< the paths as written, for messages
  std::vector<std::string> include_identities_;  ///< the same files by FileReader::identity
  std::set<std::string> loaded_;
  std::vector<From<ast::Instance>> top_instances_;
  std::map<std::string, From<ast::Block>> blocks_;
  std::vector<From<ast::Model>> model_order_;
  std::vector<From<ast::Spec>> specs_;
  DefinedNames spec_names_;
  std::map<std::string, int> model_index_;  // name -> Circuit::models index, -1 if bad
  DefinedNames model_names_, block_names_, element_names_;
  std::vector<ParsedOverride> overrides_;
};

}  // namespace tacet::detail
