#include "tacet/elaborate/elaborate.hpp"

#include <algorithm>
#include <fmt/format.h>
#include <fmt/ranges.h>

#include <stdexcept>

#include "elaborate/elaborator.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/language/parser.hpp"

namespace tacet {

namespace detail {

Elaborator::Elaborator(FileReader& reader, SourceManager& sources, Diagnostics& diagnostics,
                       const ElaborateOptions& options)
    : reader_(reader), sources_(sources), diagnostics_(diagnostics), options_(options) {}

void Elaborator::error(int file, const ast::Located& where, std::string message, std::string hint) {
  diagnostics_.error({file, where.offset}, std::move(message), std::move(hint),
                     std::max<std::uint32_t>(1, where.length));
}

std::optional<Circuit> Elaborator::run(const std::string& path) {
  parse_overrides();
  load_file(path, {});
  resolve_models();
  if (options_.ambient_celsius) circuit_.ambient_celsius = *options_.ambient_celsius;
  InstanceContext top;
  top.scope = &globals_;
  // Most netlists are flat: one element per top-level statement, and about
  // as many nodes. Sized once, the name tables are not rehashed as they grow
  // (at 100k elements each rehash walks every entry, out of cache).
  circuit_.elements.reserve(top_instances_.size());
  element_names_.reserve(top_instances_.size());
  circuit_.reserve_nodes(top_instances_.size());
  for (const auto& [instance, file] : top_instances_) instantiate(*instance, file, top);
  check_matched_sets();
  for (const auto& [spec, file] : specs_) elaborate_spec(*spec, file);
  for (const auto& [name, value] : globals_.params) circuit_.params[name] = value.value;
  report_unused_overrides();
  if (diagnostics_.has_errors()) return std::nullopt;
  return std::move(circuit_);
}

void Elaborator::check_matched_sets() {
  std::map<std::string, const Element*> first_of_set;
  for (const Element& e : circuit_.elements) {
    if (e.match.empty()) continue;
    const auto [it, added] = first_of_set.try_emplace(e.match, &e);
    if (added || it->second->dist == e.dist) continue;
    diagnostics_.error(e.where,
                       fmt::format("'{}' spreads {} but '{}' of the same matched set '{}' spreads {}",
                                   e.name, to_string(e.dist), it->second->name, e.match,
                                   to_string(it->second->dist)),
                       "the parts of a matched set share one draw: give them the same dist=");
  }
}

// ---- files ----------------------------------------------------------------

void Elaborator::load_file(const std::string& path, SourceLocation included_from) {
  const std::string identity = reader_.identity(path);
  if (report_include_cycle(path, identity, included_from)) return;
  if (loaded_.count(identity)) return;  // a library included twice is read once
  auto text = reader_.read(path);
  if (!text) {
    report_unreadable(path, included_from);
    return;
  }
  loaded_.insert(identity);
  const int file = sources_.add(path, std::move(*text));
  if (!ends_with_netlist_suffix(path)) sources_.set_quotable(file, false);
  if (auto problem = check_encoding(sources_.file(file).text)) {
    sources_.set_quotable(file, false);
    diagnostics_.add({Severity::error, SourceLocation{file, problem->offset}, problem->length,
                      problem->message, "save the file as UTF-8 text"});
    return;
  }
  auto netlist = parse_netlist(sources_.file(file).text, file, diagnostics_);
  if (!netlist) return;
  netlists_.push_back(std::make_unique<ast::Netlist>(std::move(*netlist)));
  include_stack_.push_back(path);
  include_identities_.push_back(identity);
  collect(*netlists_.back(), file);
  include_stack_.pop_back();
  include_identities_.pop_back();
}

bool Elaborator::report_include_cycle(const std::string& path, const std::string& identity,
                                      SourceLocation included_from) {
  if (std::find(include_identities_.begin(), include_identities_.end(), identity) ==
      include_identities_.end())
    return false;
  std::string chain;
  for (const auto& p : include_stack_) chain += p + " -> ";
  diagnostics_.error(included_from, fmt::format("include cycle: {}{}", chain, path),
                     "a file may not include itself, directly or through others");
  return true;
}

void Elaborator::report_unreadable(const std::string& path, SourceLocation included_from) {
  std::string hint = included_from.file >= 0 ? "include paths are relative to the including file" : "";
  if (auto revision = split_revision(path))
    hint = fmt::format("git show {}:./{} found nothing: check the revision and the path (relative to "
                       "this folder)", revision->first, revision->second);
  const std::string why = reader_.why_unreadable(path);
  diagnostics_.error(included_from,
                     fmt::format("cannot read '{}'{}", path, why.empty() ? "" : ": " + why), hint);
}

bool Elaborator::ends_with_netlist_suffix(const std::string& path) {
  constexpr std::string_view suffix = ".tacet";
  return path.size() >= suffix.size() && path.compare(path.size() - suffix.size(), suffix.size(), suffix) == 0;
}

void Elaborator::collect(const ast::Netlist& netlist, int file) {
  struct Visitor {
    Elaborator& self;
    int file;
    void operator()(const ast::Title& t) const {
      // The top file's title names the circuit; a library's own title does not.
      if (self.include_stack_.size() == 1) self.circuit_.title = t.text;
    }
    void operator()(const ast::Include& inc) const {
      const std::string& including = self.sources_.file(file).path;
      self.load_file(resolve_relative(including, inc.path), {file, inc.offset});
    }
    void operator()(const ast::Ambient& a) const { self.declare_ambient(a, file); }
    void operator()(const ast::Supply& s) const { self.declare_supply(s, file); }
    void operator()(const ast::Param& p) const { self.declare_param(p, file, self.globals_, ""); }
    void operator()(const ast::Instance& i) const { self.top_instances_.push_back({&i, file}); }
    void operator()(const ast::Model& m) const {
      if (self.check_unique(self.model_names_, "model", m.name, file, m.name.text))
        self.model_order_.push_back({&m, file});
    }
    void operator()(const ast::Spec& s) const { self.specs_.push_back({&s, file}); }
    void operator()(const ast::Block& b) const {
      if (self.check_unique(self.block_names_, "block", b.name, file, b.name.text))
        self.blocks_[b.name.text] = {&b, file};
    }
  };
  for (const auto& statement : netlist.statements) boost::apply_visitor(Visitor{*this, file}, statement);
}

bool Elaborator::check_unique(DefinedNames& seen, const std::string& what,
                              const ast::Identifier& name, int file, const std::string& full_name) {
  const auto [first, inserted] = seen.emplace(full_name, SourceLocation{file, name.offset});
  if (inserted) return true;
  error(file, name, fmt::format("{} '{}' is already defined", what, full_name));
  diagnostics_.add({Severity::note, first, static_cast<std::uint32_t>(name.text.size()),
                    fmt::format("'{}' was first defined here", full_name), ""});
  return false;
}

// ---- params, supply, ambient ----------------------------------------------

void Elaborator::declare_param(const ast::Param& param, int file, Scope& scope,
                               const std::string& prefix) {
  const std::string full = prefix + param.name.text;
  if (param.name.text == "pi") {
    error(file, param.name, "'pi' is a constant and cannot be redefined");
    return;
  }
  if (scope.params.count(param.name.text)) {
    error(file, param.name, fmt::format("param '{}' is already defined", full));
    diagnostics_.add({Severity::note, scope.params[param.name.text].where,
                      static_cast<std::uint32_t>(param.name.text.size()),
                      fmt::format("'{}' was first defined here", full), ""});
    return;
  }
  std::optional<double> value = prefix.empty() ? overridden(full, scope, Dimension::any) : std::nullopt;
  if (!value) value = evaluate(param.value, file, scope, Dimension::any, diagnostics_);
  if (value) scope.params[param.name.text] = {*value, {file, param.name.offset}};
}

void Elaborator::declare_ambient(const ast::Ambient& ambient, int file) {
  auto t = evaluate(ambient.value, file, globals_, Dimension::temperature, diagnostics_);
  if (!t) return;
  if (const std::string problem = ambient_problem(*t); !problem.empty()) {
    error(file, extent(ambient.value), problem);
    return;
  }
  if (!ambient.high) {
    circuit_.ambient_celsius = *t;
    return;
  }
  auto high = evaluate(*ambient.high, file, globals_, Dimension::temperature, diagnostics_);
  if (!high) return;
  if (const std::string problem = ambient_problem(*high); !problem.empty()) {
    error(file, extent(*ambient.high), problem);
    return;
  }
  if (*t > *high) {
    error(file, extent(ambient.value),
          fmt::format("the ambient range runs from {} C down to {} C", format_si(*t), format_si(*high)),
          "write the cold end first: ambient 0C..70C");
    return;
  }
  // The typical point (thermal noise, the nominal bias) is the models' 25 C
  // when the range holds it, else the range's end nearest to it.
  circuit_.ambient_range = AmbientRange{*t, *high};
  circuit_.ambient_celsius = std::clamp(kModelReferenceCelsius, *t, *high);
}

namespace {

constexpr KeyRule kSupplyKeys[] = {{"ripple", Dimension::voltage}, {"ripple_f", Dimension::frequency}};

}  // namespace

void Elaborator::declare_supply(const ast::Supply& supply, int file) {
  auto high = evaluate(supply.high, file, globals_, Dimension::voltage, diagnostics_);
  auto low = evaluate(supply.low, file, globals_, Dimension::voltage, diagnostics_);
  if (!high || !low) return;
  if (*high <= *low) {
    error(file, extent(supply.high),
          fmt::format("supply rails inverted: high {} V is not above low {} V", *high, *low),
          "write the high rail first: supply +12 -12");
    return;
  }
  const KeyWording wording{"supply takes no option '{}'", "options", "option '{}' is given twice"};
  bool ok = true;
  double ripple = 0, ripple_f = kDefaultRippleHz;
  const KeysRead keys = read_keys(written_keys(supply.options), kSupplyKeys, wording, file, "",
                                  [&](const KeyValue& option) {
                                    const auto v = value_of(*option.value, option.file, globals_,
                                                            option.rule->dimension);
                                    if (!v) {
                                      ok = false;
                                    } else if (*v <= 0) {
                                      error(option.file, extent(*option.value),
                                            fmt::format("{}= must be above 0", option.rule->name));
                                      ok = false;
                                    } else {
                                      (option.rule->name == "ripple" ? ripple : ripple_f) = *v;
                                    }
                                  });
  if (!keys.ok || !ok) return;
  circuit_.supply = Rails{*high, *low};
  circuit_.supply_ripple = ripple;
  circuit_.supply_ripple_hz = ripple_f;
}

// ---- overrides --------------------------------------------------------------

void Elaborator::parse_overrides() {
  for (const auto& o : options_.overrides) {
    int file = sources_.add(fmt::format("--set {}", o.name), o.value);
    auto expr = parse_expression(sources_.file(file).text, file, diagnostics_);
    if (expr) overrides_.push_back({o, std::move(*expr), file, false});
  }
}

ParsedOverride* Elaborator::find_override(const std::string& name) {
  for (auto& o : overrides_)
    if (o.text.name == name) return &o;
  return nullptr;
}

std::optional<double> Elaborator::overridden(const std::string& name, const Scope& scope,
                                             Dimension dimension) {
  ParsedOverride* o = find_override(name);
  if (!o) return std::nullopt;
  o->used = true;
  return evaluate(o->value, o->file, scope, dimension, diagnostics_);
}

namespace {

/// The keys of `names` in sorted order: the hints consider candidates in the
/// order a sorted map would give them, whatever the table's own order.
std::vector<std::string> sorted_names(const DefinedNames& names) {
  std::vector<std::string> out = names.names();
  std::sort(out.begin(), out.end());
  return out;
}

}  // namespace

void Elaborator::report_unused_overrides() {
  if (std::all_of(overrides_.begin(), overrides_.end(), [](const ParsedOverride& o) { return o.used; }))
    return;  // the candidates for a hint are gathered only when there is one to give
  std::vector<std::string> names;
  for (const auto& [n, w] : globals_.params) names.push_back(n);
  for (std::string& n : sorted_names(element_names_)) names.push_back(std::move(n));
  for (std::string& n : sorted_names(model_names_)) names.push_back(std::move(n));
  for (const auto& o : overrides_) {
    if (o.used) continue;
    std::string near = nearest_word(o.text.name, names);
    diagnostics_.error({}, fmt::format("--set {}: no param, element or model parameter of that name",
                                       o.text.name),
                       near.empty() ? "" : fmt::format("did you mean '{}'?", near));
  }
}

// ---- models -----------------------------------------------------------------

namespace {

enum class Bound { positive, non_negative, any };

/// An op-amp model parameter: its key, the field it sets and its allowed range.
struct ModelKey {
  KeyRule rule;
  double OpAmpModel::*field = nullptr;
  std::optional<double> OpAmpModel::*optional_field = nullptr;
  Bound bound = Bound::non_negative;
};

const ModelKey kOpAmpKeys[] = {
    {{"gbw", Dimension::frequency, KeyForm::value, Need::required}, &OpAmpModel::gbw, nullptr,
     Bound::positive},
    {{"aol", Dimension::gain}, &OpAmpModel::aol, nullptr, Bound::positive},
    {{"fp2", Dimension::frequency}, &OpAmpModel::fp2, nullptr, Bound::positive},
    {{"rout", Dimension::resistance}, &OpAmpModel::rout},
    {{"rin", Dimension::resistance}, &OpAmpModel::rin, nullptr, Bound::positive},
    {{"en", Dimension::voltage_density}, &OpAmpModel::en},
    {{"fce", Dimension::frequency}, &OpAmpModel::fce},
    {{"in", Dimension::current_density}, &OpAmpModel::in},
    {{"fci", Dimension::frequency}, &OpAmpModel::fci},
    {{"vos", Dimension::voltage}, &OpAmpModel::vos},
    {{"ib", Dimension::current}, &OpAmpModel::ib, nullptr, Bound::any},  // flows either way
    {{"ios", Dimension::current}, &OpAmpModel::ios},
    {{"swing", Dimension::voltage}, &OpAmpModel::swing},
    {{"slew", Dimension::slew}, &OpAmpModel::slew, nullptr, Bound::positive},
    {{"vcm_low", Dimension::voltage}, nullptr, &OpAmpModel::vcm_low, Bound::any},
    {{"vcm_high", Dimension::voltage}, nullptr, &OpAmpModel::vcm_high, Bound::any},
    {{"cmrr", Dimension::gain}, &OpAmpModel::cmrr, nullptr, Bound::positive},
    {{"fcmrr", Dimension::frequency}, &OpAmpModel::fcmrr, nullptr, Bound::positive},
    {{"cin_diff", Dimension::capacitance}, &OpAmpModel::cin_diff},
    {{"cin_cm", Dimension::capacitance}, &OpAmpModel::cin_cm},
    {{"psrr", Dimension::gain}, &OpAmpModel::psrr, nullptr, Bound::positive},
    {{"ib_max", Dimension::current}, nullptr, &OpAmpModel::ib_max, Bound::non_negative},
    {{"vos_drift", Dimension::drift}, &OpAmpModel::vos_drift},
    {{"ib_double", Dimension::temperature}, &OpAmpModel::ib_double, nullptr, Bound::positive},
    {{"iout_max", Dimension::current}, &OpAmpModel::iout_max, nullptr, Bound::positive},
};

constexpr std::string_view kTolSuffix = "_tol";

/// "gbw_tol" -> "gbw"; empty when the key is no tolerance.
std::string_view toleranced_key(std::string_view key) {
  if (key.size() <= kTolSuffix.size() || !key.ends_with(kTolSuffix)) return {};
  return key.substr(0, key.size() - kTolSuffix.size());
}

/// The model's keys, then KEY_tol for each key that may spread and `dist`.
KeyTable opamp_key_table() {
  static const std::vector<std::string> tol_names = [] {
    std::vector<std::string> out;
    for (const std::string& key : toleranced_model_keys()) out.push_back(key + std::string(kTolSuffix));
    return out;
  }();
  static const std::vector<KeyRule> rules = [] {
    std::vector<KeyRule> out;
    for (const ModelKey& k : kOpAmpKeys) out.push_back(k.rule);
    for (const std::string& name : tol_names) out.push_back({name, Dimension::ratio});
    out.push_back({"dist", Dimension::none});
    return out;
  }();
  return rules;
}

bool is_model_key(std::string_view name) {
  return std::any_of(std::begin(kOpAmpKeys), std::end(kOpAmpKeys),
                     [&](const ModelKey& k) { return k.rule.name == name; });
}

const ModelKey& model_key(std::string_view name) {
  for (const ModelKey& k : kOpAmpKeys)
    if (k.rule.name == name) return k;
  throw std::logic_error("no op-amp key " + std::string(name));  // the table and kOpAmpKeys agree
}

}  // namespace

void Elaborator::resolve_models() {
  for (const auto& [model, file] : model_order_) {
    auto resolved = resolve_model(*model, file);
    if (!resolved) {
      model_index_[model->name.text] = -1;
      continue;
    }
    model_index_[model->name.text] = static_cast<int>(circuit_.models.size());
    circuit_.models.push_back(std::move(*resolved));
  }
}

bool Elaborator::set_model_tolerance(OpAmpModel& model, const KeyValue& entry) {
  const auto value = evaluate(*entry.value, entry.file, globals_, Dimension::ratio, diagnostics_);
  if (!value) return false;
  if (*value < 0 || *value >= 1) {
    error(entry.file, extent(*entry.value),
          fmt::format("{} of model '{}' must be from 0 up to 100%", entry.rule->name, model.name));
    return false;
  }
  model.tolerances.push_back({std::string(toleranced_key(entry.rule->name)), *value});
  return true;
}

bool Elaborator::set_model_key(OpAmpModel& model, const KeyValue& entry) {
  if (entry.rule->name == "dist")
    return read_distribution(*entry.value, entry.file, "model " + model.name, model.dist);
  if (!toleranced_key(entry.rule->name).empty()) return set_model_tolerance(model, entry);
  const ModelKey& k = model_key(entry.rule->name);
  const auto value = evaluate(*entry.value, entry.file, globals_, k.rule.dimension, diagnostics_);
  if (!value) return false;
  const bool bad = k.bound == Bound::positive ? *value <= 0 : k.bound == Bound::non_negative && *value < 0;
  if (bad) {
    error(entry.file, extent(*entry.value),
          fmt::format("{} of model '{}' must be {} than zero", k.rule.name, model.name,
                      k.bound == Bound::positive ? "greater" : "no less"));
    return false;
  }
  if (k.field) model.*k.field = *value;
  else model.*k.optional_field = *value;
  return true;
}

std::optional<OpAmpModel> Elaborator::resolve_model(const ast::Model& model, int file) {
  if (model.kind.text != "opamp") {
    error(file, model.kind, fmt::format("unknown model kind '{}'", model.kind.text),
          "the only model kind is 'opamp'");
    return std::nullopt;
  }
  OpAmpModel out;
  out.name = model.name.text;
  out.where = {file, model.name.offset};
  bool ok = true;
  const KeyWording wording{"unknown op-amp parameter '{}'", "op-amp parameters",
                           "'{0}' is given twice in model '{1}'", "option '{}' needs a value",
                           out.name};
  // KEY_tol on a key that takes none is said as such, not as an unknown key.
  std::vector<WrittenKey> written;
  for (const WrittenKey& key : written_keys(model.entries)) {
    const std::string_view base = toleranced_key(key.key->text);
    const auto& spread = toleranced_model_keys();
    if (base.empty() || !is_model_key(base) ||
        std::find(spread.begin(), spread.end(), base) != spread.end()) {
      written.push_back(key);
      continue;
    }
    error(file, *key.key, fmt::format("'{}' of model '{}' takes no tolerance", base, out.name),
          fmt::format("only the small-signal and noise parameters spread: {}",
                      fmt::join(spread, ", ")));
    ok = false;
  }
  const KeysRead keys = read_keys(written, opamp_key_table(), wording, file,
                                  out.name, [&](const KeyValue& entry) {
                                    if (!set_model_key(out, entry)) ok = false;
                                  });
  if (!keys.ok || !ok) return std::nullopt;
  if (!keys.missing.empty()) {
    error(file, model.name, fmt::format("model '{}' needs a gain-bandwidth product", out.name),
          "add for example: gbw 10M");
    return std::nullopt;
  }
  return out;
}

}  // namespace detail

std::optional<Circuit> elaborate_file(const std::string& path, FileReader& reader,
                                      SourceManager& sources, Diagnostics& diagnostics,
                                      const ElaborateOptions& options) {
  return detail::Elaborator(reader, sources, diagnostics, options).run(path);
}

Circuit load_circuit(const std::string& path, const ElaborateOptions& options,
                     std::string* warnings) {
  SourceManager sources;
  Diagnostics diagnostics(sources);
  // `REV:path` reads that revision from git, includes too (tacet diff, check).
  std::unique_ptr<FileReader> reader;
  if (auto revision = split_revision(path))
    reader = std::make_unique<RevisionFileReader>(revision->first, options.confine_includes);
  else
    reader = std::make_unique<DiskFileReader>(options.confine_includes);
  auto circuit = elaborate_file(path, *reader, sources, diagnostics, options);
  if (!circuit) throw InputError::diagnostics(diagnostics.render_all());
  if (warnings) *warnings = diagnostics.render_all();
  return std::move(*circuit);
}

}  // namespace tacet
