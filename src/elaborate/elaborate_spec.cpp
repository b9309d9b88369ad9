// Elaboration of `spec` lines: the kind, its options with their units, the
// probe and every name checked against the flat circuit.

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "elaborate/elaborator.hpp"

namespace tacet::detail {

namespace {

constexpr KeyRule kAt{"at", Dimension::frequency, KeyForm::value, Need::required};
constexpr KeyRule kFrom{"from", Dimension::frequency, KeyForm::value, Need::required};
constexpr KeyRule kTo{"to", Dimension::frequency, KeyForm::value, Need::required};
constexpr KeyRule kCurrent{"current", Dimension::none};  // an element name: current=R1
constexpr KeyRule kInput{"input", Dimension::none};      // a source's name: input=Vin
constexpr KeyRule kWeight{"weight", Dimension::none};    // a weighting's name: weight=a

constexpr KeyRule kGainKeys[] = {kAt, {"min", Dimension::gain}, {"max", Dimension::gain}, kCurrent,
                                 kInput};
constexpr KeyRule kFlatnessKeys[] = {
    kFrom, kTo, {"ref", Dimension::frequency},
    {"max", Dimension::decibel, KeyForm::value, Need::required}, kCurrent, kInput};
constexpr KeyRule kPhaseKeys[] = {kAt, {"min", Dimension::angle}, {"max", Dimension::angle}, kCurrent,
                                  kInput};
constexpr KeyRule kCornerKeys[] = {
    {"ref", Dimension::frequency, KeyForm::value, Need::required},
    {"min", Dimension::frequency}, {"max", Dimension::frequency}, {"drop", Dimension::decibel},
    {"from", Dimension::frequency}, {"to", Dimension::frequency}, kCurrent, kInput};
constexpr KeyRule kNoiseKeys[] = {kFrom, kTo,
                                  {"max", Dimension::voltage, KeyForm::value, Need::required},
                                  kCurrent, kWeight};
constexpr KeyRule kSnrKeys[] = {kFrom, kTo,
                                {"input", Dimension::none, KeyForm::value, Need::required},
                                {"level", Dimension::voltage, KeyForm::value, Need::required},
                                {"min", Dimension::decibel, KeyForm::value, Need::required},
                                {"ref", Dimension::frequency}, kCurrent, kWeight};
constexpr KeyRule kOffsetKeys[] = {{"max", Dimension::voltage, KeyForm::value, Need::required}};
constexpr KeyRule kRailsKeys[] = {{"margin", Dimension::voltage}};
constexpr KeyRule kDeviationKeys[] = {
    kFrom, kTo, {"ref", Dimension::frequency},
    {"target", Dimension::none, KeyForm::value, Need::required},
    {"max", Dimension::decibel, KeyForm::value, Need::required}, kCurrent, kInput};
// A mask's points: each at= starts one, the min= and max= after it bound it.
constexpr KeyRule kMaskKeys[] = {
    {"at", Dimension::frequency, KeyForm::value, Need::repeated},
    {"min", Dimension::decibel, KeyForm::value, Need::repeated},
    {"max", Dimension::decibel, KeyForm::value, Need::repeated},
    {"ref", Dimension::frequency}, kCurrent, kInput};
constexpr KeyRule kSettlingKeys[] = {{"input", Dimension::none}, {"band", Dimension::ratio},
                                     {"max", Dimension::time, KeyForm::value, Need::required},
                                     kCurrent};
constexpr KeyRule kOvershootKeys[] = {{"input", Dimension::none},
                                      {"max", Dimension::ratio, KeyForm::value, Need::required},
                                      kCurrent};
// Stability: the op amp by name; the loop's range defaults to default_loop_sweep's.
constexpr KeyRule kOpAmp{"opamp", Dimension::none, KeyForm::value, Need::required};
constexpr KeyRule kPhaseMarginKeys[] = {
    kOpAmp, {"min", Dimension::angle, KeyForm::value, Need::required},
    {"from", Dimension::frequency}, {"to", Dimension::frequency}};
constexpr KeyRule kGainMarginKeys[] = {
    kOpAmp, {"min", Dimension::decibel, KeyForm::value, Need::required},
    {"from", Dimension::frequency}, {"to", Dimension::frequency}};
constexpr KeyRule kPeakingKeys[] = {
    kFrom, kTo, {"ref", Dimension::frequency},
    {"max", Dimension::decibel, KeyForm::value, Need::required}, kCurrent};
constexpr KeyRule kImpedanceKeys[] = {
    {"at", Dimension::frequency}, {"from", Dimension::frequency}, {"to", Dimension::frequency},
    {"min", Dimension::resistance}, {"max", Dimension::resistance}};

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
    case SpecKind::deviation: return kDeviationKeys;
    case SpecKind::mask: return kMaskKeys;
    case SpecKind::settling: return kSettlingKeys;
    case SpecKind::overshoot: return kOvershootKeys;
    case SpecKind::phase_margin: return kPhaseMarginKeys;
    case SpecKind::gain_margin: return kGainMarginKeys;
    case SpecKind::peaking: return kPeakingKeys;
    case SpecKind::impedance: return kImpedanceKeys;
    case SpecKind::stable: return {};  // no option: every key is unknown
  }
  return {};
}

bool takes_weight(SpecKind kind) { return kind == SpecKind::noise || kind == SpecKind::snr; }

bool needs_probe(SpecKind kind) {
  return kind != SpecKind::rails && kind != SpecKind::phase_margin &&
         kind != SpecKind::gain_margin && kind != SpecKind::stable;
}

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

bool Elaborator::read_input_source(Spec& spec, const SpecKeys& given) {
  if (!given.count("input")) return true;
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

// settling and overshoot: the limit, the band, and the source that steps
// (input=, or else the circuit's one source with an ac value).
bool Elaborator::read_step_spec(Spec& spec, const ast::Spec& ast_spec, const SpecKeys& given,
                                bool& ok) {
  const bool settling = spec.kind == SpecKind::settling;
  spec.unit = settling ? SpecUnit::seconds : SpecUnit::fraction;
  spec.max = spec_number(given, "max", settling ? Dimension::time : Dimension::ratio, ok);
  if (ok && !(*spec.max >= 0 && std::isfinite(*spec.max))) {
    const KeyValue& max = given.at("max");
    error(max.file, extent(*max.value),
          settling ? "max= must be a time of 0 s or more" : "max= must be a fraction of 0 or more",
          settling ? "write max=10us" : "write max=5%");
    return false;
  }
  if (const auto band = spec_number(given, "band", Dimension::ratio, ok)) {
    spec.band = *band;
    if (ok && !(spec.band > 0 && spec.band < 1)) {
      const KeyValue& b = given.at("band");
      error(b.file, extent(*b.value), "band= must be a fraction above 0 and below 1",
            "write band=0.01% or band=1e-4");
      return false;
    }
  }
  if (!ok) return false;
  if (given.count("input")) return read_input_source(spec, given);
  std::vector<std::string> sources, with_ac;
  for (const auto& e : circuit_.elements) {
    if (traits(e.kind).drive == Drive::none) continue;
    sources.push_back(e.name);
    if (e.ac_magnitude != 0) with_ac.push_back(e.name);
  }
  if (with_ac.size() == 1 || sources.size() == 1) return true;
  error(spec.where.file, ast_spec.name,
        fmt::format("spec '{}' needs input=: the circuit has {} sources{}", spec.name,
                    sources.size(), with_ac.size() > 1 ? " with an ac value" : ""),
        choice_hint("", with_ac.size() > 1 ? with_ac : sources, "sources"));
  return false;
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
      if (given.count("current")) {  // the rms of a branch current, in A
        spec.unit = SpecUnit::amps;
        spec.max = spec_number(given, "max", Dimension::current, ok);
        return true;
      }
      [[fallthrough]];
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
      return true;
    case SpecKind::rails:
      spec.unit = SpecUnit::volts;
      spec.margin = spec_number(given, "margin", Dimension::voltage, ok).value_or(0);
      spec.min = spec.margin;
      return true;
    case SpecKind::deviation:
      spec.unit = SpecUnit::db;
      spec.max = spec_number(given, "max", Dimension::decibel, ok);
      if (!given.count("ref")) spec.ref = spec.from;
      return ok && read_target(spec, given);
    case SpecKind::mask:
      spec.unit = SpecUnit::db;
      spec.min = 0.0;  // the closest approach to the mask, inside it
      spec.relative = given.count("ref") > 0;
      return ok && read_mask(spec, ast_spec, spec.where.file);
    case SpecKind::settling:
    case SpecKind::overshoot: return read_step_spec(spec, ast_spec, given, ok);
    case SpecKind::phase_margin:
    case SpecKind::gain_margin:
    case SpecKind::peaking:
    case SpecKind::impedance:
    case SpecKind::stable: return read_stability_limits(spec, ast_spec, given, ok);
  }
  return true;
}

bool Elaborator::read_stability_limits(Spec& spec, const ast::Spec& ast_spec,
                                       const SpecKeys& given, bool& ok) {
  switch (spec.kind) {
    case SpecKind::phase_margin:
    case SpecKind::gain_margin: {
      const bool phase = spec.kind == SpecKind::phase_margin;
      spec.unit = phase ? SpecUnit::degrees : SpecUnit::db;
      spec.min = spec_number(given, "min", phase ? Dimension::angle : Dimension::decibel, ok);
      return read_spec_opamp(spec, given);
    }
    case SpecKind::peaking:
      spec.unit = SpecUnit::db;
      spec.max = spec_number(given, "max", Dimension::decibel, ok);
      if (!given.count("ref")) spec.ref = spec.from;
      return true;
    case SpecKind::impedance: return read_impedance_limits(spec, ast_spec, given, ok);
    case SpecKind::stable:
      spec.unit = SpecUnit::hertz;
      spec.max = 0;
      return true;
    default: return true;
  }
}

bool Elaborator::read_impedance_limits(Spec& spec, const ast::Spec& ast_spec,
                                       const SpecKeys& given, bool& ok) {
  spec.unit = SpecUnit::ohms;
  spec.min = spec_number(given, "min", Dimension::resistance, ok);
  spec.max = spec_number(given, "max", Dimension::resistance, ok);
  const bool at = given.count("at"), from = given.count("from"), to = given.count("to");
  if (at && (from || to)) {
    const KeyValue& band = given.at(from ? "from" : "to");
    error(band.file, extent(*band.value), "an impedance spec is measured at= one frequency or over from= to=",
          "write at=100kHz, or from=10kHz to=1MHz");
    return false;
  }
  if (!at && from != to) {
    const KeyValue& half = given.at(from ? "from" : "to");
    error(half.file, extent(*half.value), from ? "from= needs to=: a band has two ends" : "to= needs from=: a band has two ends",
          "write from=10kHz to=1MHz");
    return false;
  }
  if (!at && !from) {
    error(spec.where.file, ast_spec.name,
          fmt::format("spec '{}' needs at= or a band from= to=", spec.name));
    return false;
  }
  if (!at && spec.min) {  // the largest |Z| over a band is what is bounded
    const KeyValue& min = given.at("min");
    error(min.file, extent(*min.value), "over a band an impedance spec bounds the largest |Z|: max= only",
          "for a smallest impedance write min= with at=");
    return false;
  }
  if (spec.min || spec.max || !ok) return true;
  error(spec.where.file, ast_spec.name, fmt::format("spec '{}' needs min= or max=", spec.name));
  return false;
}

bool Elaborator::read_spec_opamp(Spec& spec, const SpecKeys& given) {
  const KeyValue& option = given.at("opamp");
  const auto* id = boost::get<ast::Identifier>(&unwrap(*option.value));
  if (!id) {
    error(option.file, extent(*option.value), "opamp= takes an op amp's name", "write opamp=U1");
    return false;
  }
  std::vector<std::string> opamps;
  for (const auto& e : circuit_.elements)
    if (e.kind == ElementKind::opamp) opamps.push_back(e.name);
  if (std::find(opamps.begin(), opamps.end(), id->text) != opamps.end()) {
    spec.opamp = id->text;
    return true;
  }
  std::string message = fmt::format("no op amp named '{}'", id->text);
  if (const auto element = circuit_.find_element(id->text))
    message += fmt::format(" ('{}' is a {})", id->text, to_keyword(circuit_.elements[*element].kind));
  error(option.file, *id, message,
        opamps.empty() ? std::string("the circuit has no op amp")
                       : choice_hint(id->text, opamps, "op amps"));
  return false;
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
  if ((spec.kind == SpecKind::settling || spec.kind == SpecKind::overshoot) &&
      current != given.end()) {
    const auto element = circuit_.find_element(probe->substr(2, probe->size() - 3));
    if (element && circuit_.elements[*element].kind == ElementKind::capacitor) {
      error(file, extent(*current->second.value),
            "a step response gives no capacitor current; measure the voltage across it",
            "or the current of an element in series with it");
      return false;
    }
  }
  spec.probe = spec.kind == SpecKind::impedance ? "z(" + *probe + ")" : *probe;
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
  const KeyWording wording{"a {1} spec takes no option '{0}'", "options",
                           "option '{}' is given twice", "option '{}' needs a value",
                           ast_spec.kind.text};
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
  if (!read_input_source(spec, given)) return;
  if (!read_spec_weight(spec, given)) return;
  if (!attach_spec_probe(spec, ast_spec, given, file)) return;
  // A gain on a branch current i(NAME) is amperes per volt of the source, not V/V.
  if (spec.unit == SpecUnit::ratio && spec.probe.rfind("i(", 0) == 0) spec.unit = SpecUnit::amps_per_volt;
  // From a current source alone (input=I1) a gain is V/A, or A/A on a current.
  if (!spec.input.empty() && spec.kind != SpecKind::snr &&
      traits(circuit_.elements[*circuit_.find_element(spec.input)].kind).drive == Drive::current) {
    if (spec.unit == SpecUnit::ratio) spec.unit = SpecUnit::volts_per_amp;
    if (spec.unit == SpecUnit::amps_per_volt) spec.unit = SpecUnit::amps_per_amp;
  }
  if (ok) circuit_.specs.push_back(std::move(spec));
}

}  // namespace tacet::detail
