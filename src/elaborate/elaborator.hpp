#pragma once
// Private to elaboration: the state shared by elaborate.cpp (files, params,
// models, overrides) and elaborate_instance.cpp (elements and block expansion).

#include <map>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <vector>

#include "tacet/language/ast.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "tacet/language/expression.hpp"

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
  void report_unused_overrides();
  ParsedOverride* find_override(const std::string& name);
  bool check_unique(std::map<std::string, SourceLocation>& seen, const std::string& what,
                    const ast::Identifier& name, int file, const std::string& full_name);

  // elaborate_spec.cpp: the budget
  void elaborate_spec(const ast::Spec& spec, int file);
  std::optional<std::string> spec_probe(const ast::Spec& spec, int file,
                                        const ast::Option* current);

  // elaborate_instance.cpp: elements and blocks
  void instantiate(const ast::Instance& instance, int file, const InstanceContext& context);
  void build_element(const ast::Instance& instance, int file, const InstanceContext& context,
                     ElementKind kind);
  void expand_block(const ast::Instance& use, int file, const InstanceContext& context);
  bool check_connections(const ast::Instance& instance, int file, ElementKind kind);
  std::vector<int> connect(const ast::Instance& instance, const InstanceContext& context,
                           ElementKind kind, int file);
  int resolve_node(const std::string& name, const InstanceContext& context, SourceLocation where);
  std::optional<double> value_of(const ast::Expr& expr, int file, const Scope& scope,
                                 Dimension dimension);
  std::optional<double> overridden(const std::string& name, const Scope& scope,
                                   Dimension dimension);
  std::optional<Rails> rails_of(const ast::Expr& expr, int file, const Scope& scope);
  std::optional<SignalLevel> level_of(const ast::Expr& expr, int file, const Scope& scope);
  bool check_level(const Element& e, const ast::Instance& instance, int file);

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
  std::map<std::string, SourceLocation> spec_names_;
  std::map<std::string, int> model_index_;  // name -> Circuit::models index, -1 if bad
  std::map<std::string, SourceLocation> model_names_, block_names_, element_names_;
  std::vector<ParsedOverride> overrides_;
};

}  // namespace tacet::detail
