// Elaboration of elements and block instances: connections, values, options.

#include <fmt/format.h>

#include <stdexcept>
#include <string_view>

#include "elaborate/elaborator.hpp"

namespace tacet::detail {

namespace {

Dimension drive_dimension(Drive drive) {
  switch (drive) {
    case Drive::voltage: return Dimension::voltage;
    case Drive::current: return Dimension::current;
    case Drive::none: break;
  }
  return Dimension::none;
}

/// The plain numbers an option sets; tol, load, rails, level and the flag
/// are read by apply_option itself.
double* numeric_field(Element& e, std::string_view key) {
  if (key == traits(e.kind).value_option) return &e.value;  // gain=, gm=
  struct Field {
    std::string_view key;
    double Element::*member;
  };
  static constexpr Field kFields[] = {{"dc", &Element::dc},
                                      {"ac", &Element::ac_magnitude},
                                      {"phase", &Element::ac_phase},
                                      {"band_low", &Element::band_low},
                                      {"band_high", &Element::band_high}};
  for (const Field& field : kFields)
    if (key == field.key) return &(e.*field.member);
  return nullptr;
}

}  // namespace

void Elaborator::instantiate(const ast::Instance& instance, int file, const InstanceContext& context) {
  const std::string& keyword = instance.keyword.text;
  if (keyword == "use") return expand_block(instance, file, context);
  if (const auto kind = element_kind_of(keyword)) return build_element(instance, file, context, *kind);
  error(file, instance.keyword, fmt::format("unknown element kind '{}'", keyword));
}

int Elaborator::resolve_node(const std::string& name, const InstanceContext& context,
                             SourceLocation where) {
  if (name == "gnd") return 0;
  if (auto it = context.ports.find(name); it != context.ports.end()) return it->second;
  if (context.prefix.empty()) {  // the top level: the name as written, without a copy
    if (name == "0" && !circuit_.find_node(name))
      diagnostics_.warning(where, "node '0' is an ordinary node here, not the reference",
                           "the reference node is called gnd");
    return circuit_.node(name, where);
  }
  if (name == "0" && !circuit_.find_node(context.prefix + name))
    diagnostics_.warning(where, "node '0' is an ordinary node here, not the reference",
                         "the reference node is called gnd");
  return circuit_.node(context.prefix + name, where);
}

bool Elaborator::check_connections(const ast::Instance& instance, int file, ElementKind kind) {
  const auto& c = instance.connections;
  const std::string& name = instance.name.text;
  auto wrong = [&](const std::string& message, const std::string& hint) {
    error(file, c, message, hint);
    return false;
  };
  auto marks = [](const std::vector<ast::Terminal>& ts, char sign) {
    return std::count_if(ts.begin(), ts.end(), [&](const ast::Terminal& t) { return t.polarity == sign; });
  };
  const Pins pins = traits(kind).pins;
  if (pins == Pins::opamp) {
    if (!c.second.empty() || c.first.size() != 3 || marks(c.first, '+') != 1 || marks(c.first, '-') != 1)
      return wrong(fmt::format("op amp '{}' needs three connections: +input, -input and output", name),
                   "mark the inputs with + and -, in any order: (+in, -fb, out)");
    return true;
  }
  for (const auto* list : {&c.first, &c.second})
    for (const auto& t : *list)
      if (t.polarity != 0) {
        error(file, t, fmt::format("'{}{}': only op-amp inputs are marked + or -", t.polarity, t.node));
        return false;
      }
  switch (pins) {
    case Pins::two_pairs:
      if (c.first.size() != 2 || c.second.size() != 2)
        return wrong(fmt::format("'{}' needs an output pair and a controlling pair", name),
                     "write (out_p, out_n; ctl_p, ctl_n)");
      return true;
    case Pins::pair:
      if (c.first.size() != 2 || !c.second.empty())
        return wrong(fmt::format("'{}' needs exactly two connections", name), "write (a, b)");
      return true;
    case Pins::opamp: break;  // checked above
  }
  return true;
}

std::vector<int> Elaborator::connect(const ast::Instance& instance, const InstanceContext& context,
                                     ElementKind kind, int file) {
  const auto& c = instance.connections;
  auto node = [&](const ast::Terminal& t) { return resolve_node(t.node, context, {file, t.offset}); };
  std::vector<int> nodes;
  if (traits(kind).pins == Pins::opamp) {
    int plus = 0, minus = 0, out = 0;
    for (const auto& t : c.first) (t.polarity == '+' ? plus : t.polarity == '-' ? minus : out) = node(t);
    return {plus, minus, out};
  }
  for (const auto& t : c.first) nodes.push_back(node(t));
  for (const auto& t : c.second) nodes.push_back(node(t));
  return nodes;
}

std::optional<double> Elaborator::value_of(const ast::Expr& expr, int file, const Scope& scope,
                                           Dimension dimension) {
  return evaluate(expr, file, scope, dimension, diagnostics_);
}

std::optional<Rails> Elaborator::rails_of(const ast::Expr& expr, int file, const Scope& scope) {
  // rails=+15/-15 reads as high/low, not as a division.
  const auto* chain = boost::get<ast::x3::forward_ast<ast::Chain>>(&unwrap(expr));
  if (!chain || chain->get().rest.size() != 1 || chain->get().rest[0].op != '/') {
    error(file, extent(expr), "rails= takes the high and the low rail", "write rails=+15/-15");
    return std::nullopt;
  }
  auto high = value_of(chain->get().first, file, scope, Dimension::voltage);
  auto low = value_of(chain->get().rest[0].operand, file, scope, Dimension::voltage);
  if (!high || !low) return std::nullopt;
  if (*high <= *low) {
    error(file, extent(expr), fmt::format("rails inverted: high {} V is not above low {} V", *high, *low),
          "write the high rail first: rails=+15/-15");
    return std::nullopt;
  }
  return Rails{*high, *low};
}

std::optional<SignalLevel> Elaborator::level_of(const ast::Expr& expr, int file,
                                                const Scope& scope) {
  // The unit says what the number means (rms, peak or power), so the level is
  // a number written with its unit, optionally negated (to be refused below).
  const ast::Expr* inner = &unwrap(expr);
  double sign = 1;
  if (const auto* unary = boost::get<ast::x3::forward_ast<ast::Unary>>(inner)) {
    if (unary->get().op == '-') sign = -1;
    inner = &unwrap(unary->get().operand);
  }
  struct Tail {
    std::string_view text;
    LevelUnit unit;
    const char* si_unit;
    Dimension dimension;
  };
  static const Tail kTails[] = {{"Vrms", LevelUnit::rms, "V", Dimension::voltage},
                                {"Vpk", LevelUnit::peak, "V", Dimension::voltage},
                                {"W", LevelUnit::power, "W", Dimension::power}};
  const auto* quantity = boost::get<ast::Quantity>(inner);
  for (const auto& tail : kTails) {
    if (!quantity || !std::string_view(quantity->suffix).ends_with(tail.text)) continue;
    ast::Quantity plain = *quantity;
    plain.suffix.resize(plain.suffix.size() - tail.text.size());
    plain.suffix += tail.si_unit;
    auto v = value_of(ast::Expr(plain), file, scope, tail.dimension);
    if (!v) return std::nullopt;
    if (sign * *v <= 0) {
      error(file, extent(expr), fmt::format("level= must be above zero, not {:g} {}", sign * *v,
                                            tail.unit == LevelUnit::power ? "W" : tail.text));
      return std::nullopt;
    }
    return SignalLevel{tail.unit, sign * *v, 0};
  }
  error(file, extent(expr), "level= needs its unit: Vrms, Vpk or W",
        "write level=2Vrms, level=2.83Vpk or level=200W load=8ohm");
  return std::nullopt;
}

bool Elaborator::check_level(const Element& e, const ast::Instance& instance, int file) {
  const bool power = e.level && e.level->unit == LevelUnit::power;
  if (power && e.level->load <= 0) {
    error(file, instance.name, fmt::format("'{}' gives its level in W and needs load=", e.name),
          "name the resistance the power is delivered into: load=8ohm");
    return false;
  }
  if (!power && e.level && e.level->load > 0) {
    error(file, instance.name, fmt::format("'{}': load= goes only with a level in W", e.name));
    return false;
  }
  if ((e.band_low > 0) != (e.band_high > 0)) {
    error(file, instance.name, fmt::format("'{}' needs both band_low= and band_high=", e.name),
          "write band_low=20Hz band_high=20kHz");
    return false;
  }
  if (e.band_low > 0 && !Band{e.band_low, e.band_high}.valid()) {
    error(file, instance.name,
          fmt::format("'{}': band_low= {:g} Hz must be below band_high= {:g} Hz", e.name,
                      e.band_low, e.band_high));
    return false;
  }
  return true;
}

bool Elaborator::read_element_value(Element& e, const ast::Instance& instance, int file,
                                    const Scope& scope) {
  const ElementTraits& t = traits(e.kind);
  if (!instance.value) return true;
  switch (t.value_syntax) {
    case ValueSyntax::none: return true;
    case ValueSyntax::model_name: return read_model_name(e, *instance.value, file);
    case ValueSyntax::expression: break;
  }
  auto v = overridden(e.name, scope, t.value_dimension);
  if (!v) v = value_of(*instance.value, file, scope, t.value_dimension);
  if (!v) return false;
  if (*v <= 0) {
    error(file, extent(*instance.value),
          fmt::format("{} of '{}' must be greater than zero, not {}", t.value_noun, e.name, *v),
          *v == 0 ? std::string(t.zero_hint) : "");
    return false;
  }
  e.value = *v;
  return true;
}

bool Elaborator::read_model_name(Element& e, const ast::Expr& value, int file) {
  const auto* id = boost::get<ast::Identifier>(&unwrap(value));
  if (!id) {
    error(file, extent(value), "expected an op-amp model name");
    return false;
  }
  const auto it = model_index_.find(id->text);
  if (it == model_index_.end()) {
    std::vector<std::string> names;
    for (const auto& [n, i] : model_index_) names.push_back(n);
    std::string near = nearest_word(id->text, names);
    error(file, *id, fmt::format("no model named '{}'", id->text),
          near.empty() ? "declare it with 'model NAME opamp { gbw ... }' or include a library"
                       : fmt::format("did you mean '{}'?", near));
    return false;
  }
  if (it->second < 0) return false;  // the model's own errors are already reported
  e.model = it->second;
  return true;
}

bool Elaborator::read_distribution(const ast::Expr& value, int file, const std::string& owner,
                                   Distribution& dist) {
  const auto* id = boost::get<ast::Identifier>(&unwrap(value));
  if (id && id->text == "uniform") dist = Distribution::uniform;
  else if (id && id->text == "normal") dist = Distribution::normal;
  else {
    error(file, extent(value), fmt::format("dist of '{}' must be uniform or normal", owner),
          "uniform: evenly over +-tol (the default); normal: sigma = tol/3, cut at +-tol");
    return false;
  }
  return true;
}

bool Elaborator::read_match(Element& e, const ast::Expr& value, int file) {
  const auto* id = boost::get<ast::Identifier>(&unwrap(value));
  if (!id) {
    error(file, extent(value), "match= takes the name of a matched set", "write match=RA");
    return false;
  }
  // A set is named like the parts in it: inside block instance F1, RA is F1.RA.
  const auto dot = e.name.rfind('.');
  e.match = (dot == std::string::npos ? std::string() : e.name.substr(0, dot + 1)) + id->text;
  return true;
}

bool Elaborator::apply_option(Element& e, const KeyValue& option, const Scope& scope, double& load) {
  const std::string_view key = option.rule->name;
  if (option.rule->form == KeyForm::flag) {  // noiseless, the only flag
    e.noiseless = true;
    return true;
  }
  if (key == "rails") return (e.rails = rails_of(*option.value, option.file, scope)).has_value();
  if (key == "level") return (e.level = level_of(*option.value, option.file, scope)).has_value();
  if (key == "dist") return read_distribution(*option.value, option.file, e.name, e.dist);
  if (key == "match") return read_match(e, *option.value, option.file);
  const auto v = value_of(*option.value, option.file, scope, option.rule->dimension);
  if (!v) return false;
  const ast::Located at = extent(*option.value);
  if (key == "tol") {
    if (*v < 0 || *v >= 1) {
      error(option.file, at, fmt::format("tolerance of '{}' must be from 0 up to 100%", e.name));
      return false;
    }
    e.tolerance = *v;
  } else if (key == "ratio") {
    if (*v < 0 || *v >= 1) {
      error(option.file, at, fmt::format("ratio tolerance of '{}' must be from 0 up to 100%", e.name));
      return false;
    }
    e.ratio = *v;
  } else if (key == "load") {  // kept aside: load= may come before level=
    if (*v <= 0) {
      error(option.file, at, fmt::format("load of '{}' must be greater than zero", e.name));
      return false;
    }
    load = *v;
  } else if (double* field = numeric_field(e, key)) {
    *field = *v;
  } else {
    throw std::logic_error("option '" + std::string(key) + "' has no field in numeric_field");
  }
  return true;
}

void Elaborator::build_element(const ast::Instance& instance, int file,
                               const InstanceContext& context, ElementKind kind) {
  const ElementTraits& t = traits(kind);
  Element e;
  e.kind = kind;
  e.name = context.prefix + instance.name.text;
  e.where = {file, instance.name.offset};
  if (!check_unique(element_names_, "element", instance.name, file, e.name)) return;
  if (!check_connections(instance, file, kind)) return;
  e.nodes = connect(instance, context, kind, file);
  const Scope& scope = *context.scope;
  bool ok = read_element_value(e, instance, file, scope);

  const KeyWording wording{"'{1}' takes no option '{0}'", "options", "option '{}' is given twice",
                           "option '{}' needs a value", instance.keyword.text};
  double load = 0;
  const KeysRead keys = read_keys(written_keys(instance.options), t.options, wording, file, e.name,
                                  [&](const KeyValue& option) {
                                    if (!apply_option(e, option, scope, load)) ok = false;
                                  });
  ok = ok && keys.ok;
  if (e.level) e.level->load = load;
  if (ok && !check_level(e, instance, file)) ok = false;
  if (ok && e.ratio > 0 && e.match.empty()) {
    error(file, instance.name, fmt::format("'{}' has a ratio tolerance but no matched set", e.name),
          "ratio= is a part's own deviation inside a matched set: add match=NAME");
    ok = false;
  }
  if (ok && !keys.missing.empty()) {
    error(file, instance.name, fmt::format("'{}' needs {}=", e.name, keys.missing.front()),
          fmt::format("write {}={}", keys.missing.front(), t.value_example));
    ok = false;
  }
  // --set NAME=value: the value of a controlled source, the AC magnitude of a source.
  if (!t.value_option.empty()) {
    if (auto v = overridden(e.name, scope, t.value_dimension)) e.value = *v;
  } else if (t.drive != Drive::none) {
    if (auto v = overridden(e.name, scope, drive_dimension(t.drive))) e.ac_magnitude = *v;
  }
  if (ok) circuit_.elements.push_back(std::move(e));
}

const From<ast::Block>* Elaborator::find_block(const ast::Instance& use, int file,
                                               const InstanceContext& context) {
  const auto* id = use.value ? boost::get<ast::Identifier>(&unwrap(*use.value)) : nullptr;
  auto it = id ? blocks_.find(id->text) : blocks_.end();
  if (it == blocks_.end()) {
    std::vector<std::string> names;
    for (const auto& [n, b] : blocks_) names.push_back(n);
    std::string near = id ? nearest_word(id->text, names) : "";
    error(file, id ? static_cast<const ast::Located&>(*id) : static_cast<const ast::Located&>(use.name),
          fmt::format("no block named '{}'", id ? id->text : ""),
          near.empty() ? "declare it with 'block NAME (ports) { ... }'" : fmt::format("did you mean '{}'?", near));
    return nullptr;
  }
  const std::string& name = it->second.node->name.text;
  if (std::find(context.block_stack.begin(), context.block_stack.end(), name) != context.block_stack.end()) {
    error(file, *id, fmt::format("block '{}' uses itself", name));
    return nullptr;
  }
  if (context.block_stack.size() >= kDeepestBlockNesting) {
    error(file, *id, fmt::format("blocks nested more than {} deep", kDeepestBlockNesting),
          "a chain of blocks this deep is a generated netlist gone wrong; flatten it");
    return nullptr;
  }
  return &it->second;
}

bool Elaborator::bind_ports(const ast::Instance& use, const ast::Block& block, int file,
                            const InstanceContext& context, InstanceContext& inner) {
  if (!use.connections.second.empty() || use.connections.first.size() != block.ports.size()) {
    error(file, use.connections,
          fmt::format("block '{}' has {} ports, but '{}' connects {}", block.name.text,
                      block.ports.size(), use.name.text,
                      use.connections.first.size() + use.connections.second.size()));
    return false;
  }
  for (std::size_t i = 0; i < block.ports.size(); ++i) {
    const auto& t = use.connections.first[i];
    if (t.polarity != 0) {
      error(file, t, "block connections are not marked + or -");
      return false;
    }
    inner.ports[block.ports[i].node] = resolve_node(t.node, context, {file, t.offset});
  }
  return true;
}

// Every argument names a parameter; a parameter without a default must be given.
bool Elaborator::bind_arguments(const ast::Instance& use, int file, const From<ast::Block>& block,
                                const std::string& full, const Scope& outer, Scope& scope) {
  std::vector<KeyRule> parameters;
  for (const auto& p : block.node->parameters) parameters.push_back({p.key.text, Dimension::any});
  const KeyWording wording{"block '{1}' has no parameter '{0}'", "parameters",
                           "argument '{}' is given twice", "argument '{}' needs a value",
                           block.node->name.text};
  bool ok = true;
  // Arguments are evaluated where the block is used; --set F1.r= wins.
  const KeysRead keys = read_keys(written_keys(use.options), parameters, wording, file, "",
                                  [&](const KeyValue& arg) {
                                    const std::string name(arg.rule->name);
                                    auto v = overridden(full + "." + name, outer, Dimension::any);
                                    if (!v) v = value_of(*arg.value, file, outer, Dimension::any);
                                    if (v) scope.params[name] = {*v, {file, arg.key->offset}};
                                    else ok = false;
                                  });
  ok = ok && keys.ok;
  for (const auto& p : block.node->parameters) {
    if (scope.params.count(p.key.text)) continue;
    // A default may refer to the parameters before it (g=2*r) and to the file's params.
    std::optional<double> v = overridden(full + "." + p.key.text, scope, Dimension::any);
    if (!v && p.value) v = value_of(*p.value, block.file, scope, Dimension::any);
    if (!v && !p.value) {
      error(file, use.name, fmt::format("'{}' needs a value for parameter '{}' of block '{}'",
                                        use.name.text, p.key.text, block.node->name.text),
            fmt::format("write {}=...", p.key.text));
    }
    if (v) scope.params[p.key.text] = {*v, {block.file, p.key.offset}}; else ok = false;
  }
  return ok;
}

void Elaborator::expand_block(const ast::Instance& use, int file, const InstanceContext& context) {
  const std::string full = context.prefix + use.name.text;
  if (!check_unique(element_names_, "instance", use.name, file, full)) return;
  const From<ast::Block>* block = find_block(use, file, context);
  if (!block) return;
  InstanceContext inner;
  inner.prefix = full + ".";
  inner.block_stack = context.block_stack;
  inner.block_stack.push_back(block->node->name.text);
  if (!bind_ports(use, *block->node, file, context, inner)) return;
  Scope scope;
  scope.parent = &globals_;
  if (!bind_arguments(use, file, *block, full, *context.scope, scope)) return;
  inner.scope = &scope;
  for (const auto& statement : block->node->body) {
    if (const auto* param = boost::get<ast::Param>(&statement))
      declare_param(*param, block->file, scope, inner.prefix);
    else
      instantiate(boost::get<ast::Instance>(statement), block->file, inner);
  }
}

}  // namespace tacet::detail
