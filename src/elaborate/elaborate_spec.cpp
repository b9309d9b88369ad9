// Elaboration of `spec` lines: the kind, its options with their units, the
// probe and every name checked against the flat circuit.

#include <fmt/format.h>

#include "elaborate/elaborator.hpp"

namespace tacet::detail {

namespace {

enum class Need { required, optional };

/// What one option of a spec kind is, and whether the kind needs it.
struct SpecOption {
  const char* key;
  Dimension dimension;  ///< `none` marks a name (input=Vin, current=R1)
  Need need;
};

std::vector<SpecOption> options_for(SpecKind kind) {
  const SpecOption at{"at", Dimension::frequency, Need::required};
  const SpecOption from{"from", Dimension::frequency, Need::required};
  const SpecOption to{"to", Dimension::frequency, Need::required};
  const SpecOption current{"current", Dimension::none, Need::optional};
  switch (kind) {
    case SpecKind::gain:
      return {at, {"min", Dimension::gain, Need::optional}, {"max", Dimension::gain, Need::optional}, current};
    case SpecKind::flatness:
      return {from, to, {"ref", Dimension::frequency, Need::optional},
              {"max", Dimension::decibel, Need::required}, current};
    case SpecKind::phase:
      return {at, {"min", Dimension::angle, Need::optional}, {"max", Dimension::angle, Need::optional}, current};
    case SpecKind::upper_corner:
    case SpecKind::lower_corner:
      return {{"ref", Dimension::frequency, Need::required}, {"min", Dimension::frequency, Need::optional},
              {"max", Dimension::frequency, Need::optional}, {"drop", Dimension::decibel, Need::optional},
              {"from", Dimension::frequency, Need::optional}, {"to", Dimension::frequency, Need::optional},
              current};
    case SpecKind::noise: return {from, to, {"max", Dimension::voltage, Need::required}};
    case SpecKind::snr:
      return {from, to, {"input", Dimension::none, Need::required},
              {"level", Dimension::voltage, Need::required}, {"min", Dimension::decibel, Need::required}};
    case SpecKind::offset: return {{"max", Dimension::voltage, Need::required}};
    case SpecKind::rails: return {{"margin", Dimension::voltage, Need::optional}};
  }
  return {};
}

std::vector<std::string> kind_names() {
  std::vector<std::string> out;
  for (auto k : {SpecKind::gain, SpecKind::flatness, SpecKind::phase, SpecKind::upper_corner,
                 SpecKind::lower_corner, SpecKind::noise, SpecKind::snr, SpecKind::offset, SpecKind::rails})
    out.emplace_back(to_string(k));
  return out;
}

bool needs_probe(SpecKind kind) { return kind != SpecKind::rails; }

/// Whether a limit is written in decibels (`19.9dB`, `-3dB`): then the spec
/// compares in dB, else as a ratio.
bool written_in_db(const ast::Expr& expr) {
  const ast::Expr* e = &unwrap(expr);
  if (const auto* u = boost::get<ast::x3::forward_ast<ast::Unary>>(e)) e = &unwrap(u->get().operand);
  const auto* q = boost::get<ast::Quantity>(e);
  return q && q->suffix == "dB";
}

/// The limit of a gain spec written as a ratio that lies below 0, if any: a
/// ratio limit bounds |H|, a magnitude, so it can never be met.
const char* negative_ratio_limit(const Spec& spec) {
  if (spec.unit != SpecUnit::ratio) return nullptr;
  if (spec.min && *spec.min < 0) return "min";
  if (spec.max && *spec.max < 0) return "max";
  return nullptr;
}

}  // namespace

std::optional<std::string> Elaborator::spec_probe(const ast::Spec& spec, int file,
                                                  const ast::Option* current) {
  if (current) {
    const auto* id = current->value ? boost::get<ast::Identifier>(&unwrap(*current->value)) : nullptr;
    if (!id) {
      error(file, *current, "current= takes an element name", "write current=R1");
      return std::nullopt;
    }
    if (!circuit_.find_element(id->text)) {
      std::vector<std::string> names;
      for (const auto& e : circuit_.elements) names.push_back(e.name);
      std::string near = nearest_word(id->text, names);
      error(file, *id, fmt::format("no element named '{}'", id->text),
            near.empty() ? "" : fmt::format("did you mean '{}'?", near));
      return std::nullopt;
    }
    return fmt::format("i({})", id->text);
  }
  if (!spec.probe) {
    error(file, spec.kind, fmt::format("spec '{}' needs the node it measures", spec.name.text),
          fmt::format("write spec {} {} (out) ... or (out, ref)", spec.name.text, spec.kind.text));
    return std::nullopt;
  }
  const auto& c = *spec.probe;
  if (!c.second.empty() || c.first.empty() || c.first.size() > 2) {
    error(file, c, "a spec measures one node, (out), or a node pair, (out, ref)");
    return std::nullopt;
  }
  std::string probe;
  for (const auto& t : c.first) {
    if (t.polarity != 0) {
      error(file, t, "spec nodes are not marked + or -");
      return std::nullopt;
    }
    if (!circuit_.find_node(t.node)) {
      std::string near = nearest_word(t.node, circuit_.node_names);
      error(file, t, fmt::format("no node named '{}'", t.node),
            near.empty() ? "" : fmt::format("did you mean '{}'?", near));
      return std::nullopt;
    }
    probe += (probe.empty() ? "" : ",") + t.node;
  }
  return probe;
}

void Elaborator::elaborate_spec(const ast::Spec& ast_spec, int file) {
  auto kind = parse_spec_kind(ast_spec.kind.text);
  if (!kind) {
    error(file, ast_spec.kind, fmt::format("unknown kind of spec '{}'", ast_spec.kind.text),
          choice_hint(ast_spec.kind.text, kind_names(), "kinds"));
    return;
  }
  if (!check_unique(spec_names_, "spec", ast_spec.name, file, ast_spec.name.text)) return;
  Spec spec;
  spec.name = ast_spec.name.text;
  spec.kind = *kind;
  spec.where = {file, ast_spec.name.offset};
  bool ok = true;

  const auto specs = options_for(*kind);
  std::map<std::string, const ast::Option*> given;
  for (const auto& option : ast_spec.options) {
    const std::string& key = option.key.text;
    auto it = std::find_if(specs.begin(), specs.end(), [&](const SpecOption& s) { return key == s.key; });
    if (it == specs.end()) {
      std::vector<std::string> keys;
      for (const auto& s : specs) keys.emplace_back(s.key);
      error(file, option.key, fmt::format("a {} spec takes no option '{}'", ast_spec.kind.text, key),
            choice_hint(key, keys, "options"));
      ok = false;
    } else if (!option.value) {
      error(file, option, fmt::format("option '{}' needs a value", key), fmt::format("write {}=...", key));
      ok = false;
    } else if (!given.emplace(key, &option).second) {
      error(file, option.key, fmt::format("option '{}' is given twice", key));
      ok = false;
    }
  }
  for (const auto& s : specs)
    if (s.need == Need::required && !given.count(s.key)) {
      error(file, ast_spec.name, fmt::format("spec '{}' needs {}=", spec.name, s.key));
      ok = false;
    }
  if (!ok) return;

  auto number = [&](const char* key, Dimension dimension) -> std::optional<double> {
    auto it = given.find(key);
    if (it == given.end()) return std::nullopt;
    auto v = value_of(*it->second->value, file, globals_, dimension);
    if (!v) ok = false;
    return v;
  };
  auto positive = [&](const char* key, std::optional<double> v) {
    if (v && *v <= 0) {
      error(file, extent(*given.at(key)->value), fmt::format("{}= must be above 0 Hz", key));
      ok = false;
    }
    return v.value_or(0);
  };
  spec.at = positive("at", number("at", Dimension::frequency));
  spec.from = positive("from", number("from", Dimension::frequency));
  spec.to = positive("to", number("to", Dimension::frequency));
  spec.ref = positive("ref", number("ref", Dimension::frequency));
  if (given.count("from") && given.count("to") && ok && spec.from >= spec.to) {
    error(file, extent(*given.at("from")->value),
          fmt::format("from={}Hz must be below to={}Hz", spec.from, spec.to), "a band is written from=low to=high");
    ok = false;
  }

  // Limits, in the unit the spec reports.
  switch (*kind) {
    case SpecKind::gain: {
      const ast::Option* first = given.count("min") ? given.at("min") : given.count("max") ? given.at("max") : nullptr;
      if (!first) {
        error(file, ast_spec.name, fmt::format("spec '{}' needs min= or max=", spec.name));
        return;
      }
      const bool db = written_in_db(*first->value);
      for (const char* key : {"min", "max"})
        if (given.count(key) && written_in_db(*given.at(key)->value) != db) {
          error(file, extent(*given.at(key)->value), "write both limits in dB, or both as ratios");
          return;
        }
      spec.unit = db ? SpecUnit::db : SpecUnit::ratio;
      spec.min = number("min", db ? Dimension::decibel : Dimension::gain);
      spec.max = number("max", db ? Dimension::decibel : Dimension::gain);
      if (const char* key = negative_ratio_limit(spec)) {
        error(file, extent(*given.at(key)->value),
              fmt::format("a gain spec's {}= as a ratio bounds |H|, which is never below 0", key),
              "for an inversion add a phase spec (180deg); for a level below the reference write dB, "
              "min=-20dB");
        return;
      }
      break;
    }
    case SpecKind::phase:
      spec.unit = SpecUnit::degrees;
      spec.min = number("min", Dimension::angle);
      spec.max = number("max", Dimension::angle);
      if (!spec.min && !spec.max && ok) {
        error(file, ast_spec.name, fmt::format("spec '{}' needs min= or max=", spec.name));
        return;
      }
      break;
    case SpecKind::flatness:
      spec.unit = SpecUnit::db;
      spec.max = number("max", Dimension::decibel);
      if (!given.count("ref")) spec.ref = spec.from;
      break;
    case SpecKind::upper_corner:
    case SpecKind::lower_corner:
      spec.unit = SpecUnit::hertz;
      spec.min = number("min", Dimension::frequency);
      spec.max = number("max", Dimension::frequency);
      if (auto drop = number("drop", Dimension::decibel)) spec.drop = std::abs(*drop);
      if (!given.count("from")) spec.from = *kind == SpecKind::upper_corner ? spec.ref : spec.ref * 1e-6;
      if (!given.count("to")) spec.to = *kind == SpecKind::upper_corner ? spec.ref * 1e6 : spec.ref;
      if (!spec.min && !spec.max && ok) {
        error(file, ast_spec.name, fmt::format("spec '{}' needs min= or max=", spec.name));
        return;
      }
      break;
    case SpecKind::noise:
      spec.unit = SpecUnit::volts;
      spec.max = number("max", Dimension::voltage);
      break;
    case SpecKind::snr: {
      spec.unit = SpecUnit::db;
      spec.min = number("min", Dimension::decibel);
      spec.level = number("level", Dimension::voltage).value_or(0);
      const ast::Option& input = *given.at("input");
      const auto* id = boost::get<ast::Identifier>(&unwrap(*input.value));
      auto index = id ? circuit_.find_element(id->text) : std::nullopt;
      if (!index || (circuit_.elements[*index].kind != ElementKind::vsource &&
                     circuit_.elements[*index].kind != ElementKind::isource)) {
        error(file, extent(*input.value), "input= must name a voltage or current source", "write input=Vin");
        return;
      }
      spec.input = id->text;
      break;
    }
    case SpecKind::offset:
      spec.unit = SpecUnit::volts;
      spec.max = number("max", Dimension::voltage);
      break;
    case SpecKind::rails:
      spec.unit = SpecUnit::volts;
      spec.margin = number("margin", Dimension::voltage).value_or(0);
      spec.min = spec.margin;
      break;
  }
  if (needs_probe(*kind)) {
    auto current = given.find("current");
    auto probe = spec_probe(ast_spec, file, current == given.end() ? nullptr : current->second);
    if (!probe) return;
    if (*kind == SpecKind::offset && probe->find(',') != std::string::npos) {
      error(file, *ast_spec.probe, "an offset spec measures one node against gnd", "write (out)");
      return;
    }
    spec.probe = *probe;
  } else if (ast_spec.probe) {
    error(file, *ast_spec.probe, fmt::format("a {} spec takes no connections", ast_spec.kind.text));
    return;
  }
  if (ok) circuit_.specs.push_back(std::move(spec));
}

}  // namespace tacet::detail
