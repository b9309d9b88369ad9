// Elaboration of `spec` lines: the kind, its options with their units, the
// probe and every name checked against the flat circuit.

#include <cmath>

#include <fmt/format.h>

#include "elaborate/elaborator.hpp"

namespace tacet::detail {

namespace {

constexpr KeyRule kAt{"at", Dimension::frequency, KeyForm::value, Need::required};
constexpr KeyRule kFrom{"from", Dimension::frequency, KeyForm::value, Need::required};
constexpr KeyRule kTo{"to", Dimension::frequency, KeyForm::value, Need::required};
constexpr KeyRule kCurrent{"current", Dimension::none};  // an element name: current=R1
constexpr KeyRule kWeight{"weight", Dimension::none};    // a weighting's name: weight=a

constexpr KeyRule kGainKeys[] = {kAt, {"min", Dimension::gain}, {"max", Dimension::gain}, kCurrent};
constexpr KeyRule kFlatnessKeys[] = {
    kFrom, kTo, {"ref", Dimension::frequency},
    {"max", Dimension::decibel, KeyForm::value, Need::required}, kCurrent};
constexpr KeyRule kPhaseKeys[] = {kAt, {"min", Dimension::angle}, {"max", Dimension::angle}, kCurrent};
constexpr KeyRule kCornerKeys[] = {
    {"ref", Dimension::frequency, KeyForm::value, Need::required},
    {"min", Dimension::frequency}, {"max", Dimension::frequency}, {"drop", Dimension::decibel},
    {"from", Dimension::frequency}, {"to", Dimension::frequency}, kCurrent};
constexpr KeyRule kNoiseKeys[] = {kFrom, kTo,
                                  {"max", Dimension::voltage, KeyForm::value, Need::required},
                                  kWeight};
constexpr KeyRule kSnrKeys[] = {kFrom, kTo,
                                {"input", Dimension::none, KeyForm::value, Need::required},
                                {"level", Dimension::voltage, KeyForm::value, Need::required},
                                {"min", Dimension::decibel, KeyForm::value, Need::required},
                                kWeight};
constexpr KeyRule kOffsetKeys[] = {{"max", Dimension::voltage, KeyForm::value, Need::required}};
constexpr KeyRule kRailsKeys[] = {{"margin", Dimension::voltage}};

KeyTable options_for(SpecKind kind) {
  switch (kind) {
    case SpecKind::gain: return kGainKeys;
    case SpecKind::flatness: return kFlatnessKeys;
    case SpecKind::phase: return kPhaseKeys;
    case SpecKind::upper_corner:
    case SpecKind::lower_corner: return kCornerKeys;
    case SpecKind::noise: return kNoiseKeys;
    case SpecKind::snr: return kSnrKeys;
    case SpecKind::offset: return kOffsetKeys;
    case SpecKind::rails: return kRailsKeys;
  }
  return {};
}

bool takes_weight(SpecKind kind) { return kind == SpecKind::noise || kind == SpecKind::snr; }

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
  if (spec.unit != SpecUnit::ratio && spec.unit != SpecUnit::amps_per_volt) return nullptr;
  if (spec.min && *spec.min < 0) return "min";
  if (spec.max && *spec.max < 0) return "max";
  return nullptr;
}

}  // namespace

std::optional<std::string> Elaborator::spec_probe(const ast::Spec& spec, int file,
                                                  const KeyValue* current) {
  if (current) {
    const auto* id = current->value ? boost::get<ast::Identifier>(&unwrap(*current->value)) : nullptr;
    if (!id) {
      error(file, *current->written, "current= takes an element name", "write current=R1");
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

std::optional<double> Elaborator::spec_number(const SpecKeys& given, std::string_view key,
                                              Dimension dimension, bool& ok) {
  const auto it = given.find(key);
  if (it == given.end()) return std::nullopt;
  auto v = value_of(*it->second.value, it->second.file, globals_, dimension);
  if (!v) ok = false;
  return v;
}

bool Elaborator::read_spec_band(Spec& spec, const SpecKeys& given) {
  bool ok = true;
  auto positive = [&](std::string_view key) {
    const auto v = spec_number(given, key, Dimension::frequency, ok);
    if (v && *v <= 0) {
      const KeyValue& option = given.at(key);
      error(option.file, extent(*option.value), fmt::format("{}= must be above 0 Hz", key));
      ok = false;
    }
    return v.value_or(0);
  };
  spec.at = positive("at");
  spec.from = positive("from");
  spec.to = positive("to");
  spec.ref = positive("ref");
  if (given.count("from") && given.count("to") && ok && !Band{spec.from, spec.to}.valid()) {
    const KeyValue& from = given.at("from");
    error(from.file, extent(*from.value),
          fmt::format("from={}Hz must be below to={}Hz", spec.from, spec.to),
          "a band is written from=low to=high");
    ok = false;
  }
  return ok;
}

bool Elaborator::read_gain_limits(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given,
                                  bool& ok) {
  const auto min = given.find("min"), max = given.find("max");
  const KeyValue* first = min != given.end() ? &min->second : max != given.end() ? &max->second : nullptr;
  if (!first) {
    error(spec.where.file, ast_spec.name,
          fmt::format("spec '{}' needs min= or max=", spec.name));
    return false;
  }
  const bool db = written_in_db(*first->value);
  for (const auto& it : {min, max})
    if (it != given.end() && written_in_db(*it->second.value) != db) {
      error(it->second.file, extent(*it->second.value), "write both limits in dB, or both as ratios");
      return false;
    }
  spec.unit = db ? SpecUnit::db : SpecUnit::ratio;
  spec.min = spec_number(given, "min", db ? Dimension::decibel : Dimension::gain, ok);
  spec.max = spec_number(given, "max", db ? Dimension::decibel : Dimension::gain, ok);
  if (const char* key = negative_ratio_limit(spec)) {
    const KeyValue& limit = given.at(key);
    error(limit.file, extent(*limit.value),
          fmt::format("a gain spec's {}= as a ratio bounds |H|, which is never below 0", key),
          "for an inversion add a phase spec (180deg); for a level below the reference write dB, "
          "min=-20dB");
    return false;
  }
  return true;
}

bool Elaborator::read_snr_input(Spec& spec, const SpecKeys& given) {
  const KeyValue& input = given.at("input");
  const auto* id = boost::get<ast::Identifier>(&unwrap(*input.value));
  const auto index = id ? circuit_.find_element(id->text) : std::nullopt;
  if (!index || traits(circuit_.elements[*index].kind).drive == Drive::none) {
    error(input.file, extent(*input.value), "input= must name a voltage or current source",
          "write input=Vin");
    return false;
  }
  spec.input = id->text;
  return true;
}

bool Elaborator::read_spec_weight(Spec& spec, const SpecKeys& given) {
  const auto it = given.find("weight");
  if (it == given.end()) return true;
  const KeyValue& weight = it->second;
  const auto* id = boost::get<ast::Identifier>(&unwrap(*weight.value));
  const auto parsed = id ? parse_weighting(id->text) : std::nullopt;
  if (!parsed) {
    error(weight.file, extent(*weight.value),
          id ? fmt::format("unknown weighting '{}'", id->text) : "weight= takes a weighting's name",
          choice_hint(id ? id->text : "", weighting_names(), "weightings"));
    return false;
  }
  spec.weight = *parsed;
  return true;
}

bool Elaborator::read_spec_limits(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given,
                                  bool& ok) {
  auto needs_a_limit = [&] {
    if (spec.min || spec.max || !ok) return true;
    error(spec.where.file, ast_spec.name, fmt::format("spec '{}' needs min= or max=", spec.name));
    return false;
  };
  switch (spec.kind) {
    case SpecKind::gain: return read_gain_limits(spec, ast_spec, given, ok);
    case SpecKind::phase:
      spec.unit = SpecUnit::degrees;
      spec.min = spec_number(given, "min", Dimension::angle, ok);
      spec.max = spec_number(given, "max", Dimension::angle, ok);
      return needs_a_limit();
    case SpecKind::flatness:
      spec.unit = SpecUnit::db;
      spec.max = spec_number(given, "max", Dimension::decibel, ok);
      if (!given.count("ref")) spec.ref = spec.from;
      return true;
    case SpecKind::upper_corner:
    case SpecKind::lower_corner: {
      const bool upper = spec.kind == SpecKind::upper_corner;
      spec.unit = SpecUnit::hertz;
      spec.min = spec_number(given, "min", Dimension::frequency, ok);
      spec.max = spec_number(given, "max", Dimension::frequency, ok);
      if (auto drop = spec_number(given, "drop", Dimension::decibel, ok)) spec.drop = std::abs(*drop);
      if (ok && !(spec.drop > 0)) {  // a 0 dB drop finds the reference itself and always passes
        const KeyValue& drop = given.at("drop");
        error(drop.file, extent(*drop.value), "drop= must be above 0 dB", "write drop=3dB");
        return false;
      }
      if (!given.count("from")) spec.from = upper ? spec.ref : spec.ref * 1e-6;
      if (!given.count("to")) spec.to = upper ? spec.ref * 1e6 : spec.ref;
      return needs_a_limit();
    }
    case SpecKind::noise:
    case SpecKind::offset:
      spec.unit = SpecUnit::volts;
      spec.max = spec_number(given, "max", Dimension::voltage, ok);
      return true;
    case SpecKind::snr:
      spec.unit = SpecUnit::db;
      spec.min = spec_number(given, "min", Dimension::decibel, ok);
      spec.level = spec_number(given, "level", Dimension::voltage, ok).value_or(0);
      if (ok && !(spec.level > 0 && std::isfinite(spec.level))) {
        const KeyValue& level = given.at("level");
        error(level.file, extent(*level.value), "level= must be a finite level above 0 V",
              "the signal's rms level at the input, e.g. level=2V");
        return false;
      }
      return read_snr_input(spec, given);
    case SpecKind::rails:
      spec.unit = SpecUnit::volts;
      spec.margin = spec_number(given, "margin", Dimension::voltage, ok).value_or(0);
      spec.min = spec.margin;
      return true;
  }
  return true;
}

bool Elaborator::attach_spec_probe(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given,
                                   int file) {
  if (!needs_probe(spec.kind)) {
    if (!ast_spec.probe) return true;
    error(file, *ast_spec.probe, fmt::format("a {} spec takes no connections", ast_spec.kind.text));
    return false;
  }
  const auto current = given.find("current");
  auto probe = spec_probe(ast_spec, file, current == given.end() ? nullptr : &current->second);
  if (!probe) return false;
  if (spec.kind == SpecKind::offset && probe->find(',') != std::string::npos) {
    error(file, *ast_spec.probe, "an offset spec measures one node against gnd", "write (out)");
    return false;
  }
  spec.probe = *probe;
  return true;
}

bool Elaborator::weight_fits(SpecKind kind, const ast::Spec& ast_spec, int file) {
  if (takes_weight(kind)) return true;
  for (const auto& option : ast_spec.options)
    if (option.key.text == "weight") {
      error(file, option.key,
            fmt::format("a {} spec takes no weight=: a weighting applies to noise", to_string(kind)),
            "weight= goes on a noise or snr spec");
      return false;
    }
  return true;
}

void Elaborator::elaborate_spec(const ast::Spec& ast_spec, int file) {
  auto kind = parse_spec_kind(ast_spec.kind.text);
  if (!kind) {
    error(file, ast_spec.kind, fmt::format("unknown kind of spec '{}'", ast_spec.kind.text),
          choice_hint(ast_spec.kind.text, spec_kind_names(), "kinds"));
    return;
  }
  if (!check_unique(spec_names_, "spec", ast_spec.name, file, ast_spec.name.text)) return;
  Spec spec;
  spec.name = ast_spec.name.text;
  spec.kind = *kind;
  spec.where = {file, ast_spec.name.offset};

  if (!weight_fits(*kind, ast_spec, file)) return;
  SpecKeys given;
  const KeyWording wording{fmt::format("a {} spec takes no option '{{}}'", ast_spec.kind.text),
                           "options", "option '{}' is given twice"};
  const KeysRead keys = read_keys(written_keys(ast_spec.options), options_for(*kind), wording, file,
                                  "", [&](const KeyValue& option) {
                                    given.emplace(option.rule->name, option);
                                  });
  bool ok = keys.ok;
  for (const std::string_view key : keys.missing) {
    error(file, ast_spec.name, fmt::format("spec '{}' needs {}=", spec.name, key));
    ok = false;
  }
  if (!ok) return;
  ok = read_spec_band(spec, given);
  if (!read_spec_limits(spec, ast_spec, given, ok)) return;  // limits in the unit the spec reports
  if (!read_spec_weight(spec, given)) return;
  if (!attach_spec_probe(spec, ast_spec, given, file)) return;
  // A gain on a branch current i(NAME) is amperes per volt of the source, not V/V.
  if (spec.unit == SpecUnit::ratio && spec.probe.rfind("i(", 0) == 0) spec.unit = SpecUnit::amps_per_volt;
  if (ok) circuit_.specs.push_back(std::move(spec));
}

}  // namespace tacet::detail
