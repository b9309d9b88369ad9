#include "tacet/analysis/diff.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <memory>
#include <optional>
#include <set>

#include <fmt/format.h>

#include "tacet/analysis/bias.hpp"
#include "tacet/solve/response.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/circuit/circuit_text.hpp"

namespace tacet {

namespace {
constexpr double kRoundingDb = 1e-9;   // dB: 1.2e-10 relative in magnitude
constexpr double kRoundingDeg = 1e-8;  // degrees: 1.7e-10 rad
}  // namespace

const char* to_string(ChangeKind kind) {
  switch (kind) {
    case ChangeKind::added: return "added";
    case ChangeKind::removed: return "removed";
    case ChangeKind::changed: return "changed";
  }
  return "changed";
}

namespace {

/// An element as one comparable line: kind, connections by node name, value.
std::string describe(const Circuit& c, const Element& e) {
  return fmt::format("{} {} {}", to_keyword(e.kind), connection_list(c, e), element_value(c, e));
}

std::string describe(const OpAmpModel& m) {
  std::string line = model_line(m);
  while (!line.empty() && line.back() == '\n') line.pop_back();
  return line;
}

/// Matches items by name; each side is described by its own function (an
/// element's connections are named after its own side's nodes).
template <typename Item, typename DescribeOld, typename DescribeNew>
void diff_named(const std::vector<Item>& old_items, const std::vector<Item>& new_items, const char* what,
                DescribeOld describe_old, DescribeNew describe_new, std::vector<CircuitChange>& out) {
  std::map<std::string, const Item*> old_by_name;
  for (const auto& item : old_items) old_by_name[item.name] = &item;
  std::set<std::string> seen;
  for (const auto& item : new_items) {
    seen.insert(item.name);
    auto it = old_by_name.find(item.name);
    const std::string after = describe_new(item);
    if (it == old_by_name.end()) {
      out.push_back({ChangeKind::added, what, item.name, "", after});
    } else if (const std::string before = describe_old(*it->second); before != after) {
      out.push_back({ChangeKind::changed, what, item.name, before, after});
    }
  }
  for (const auto& item : old_items)
    if (!seen.count(item.name)) out.push_back({ChangeKind::removed, what, item.name, describe_old(item), ""});
}

/// Models that some op amp uses; library models nobody uses are not news.
std::vector<OpAmpModel> used_models(const Circuit& c) {
  std::vector<OpAmpModel> out;
  std::set<int> used;
  for (const auto& e : c.elements)
    if (e.kind == ElementKind::opamp) used.insert(e.model);
  for (int i : used) out.push_back(c.models[static_cast<std::size_t>(i)]);
  return out;
}

double wrap_degrees(double d) {
  while (d > 180) d -= 360;
  while (d <= -180) d += 360;
  return d;
}

const AcTrace* find_trace(const AcResult& r, const std::string& probe) {
  for (const auto& t : r.traces)
    if (t.probe.text == probe) return &t;
  return nullptr;
}

void check_probes(const Circuit& circuit, const AcOptions& options, const char* side) {
  for (const auto& probe : options.probes) {
    try {
      resolve_probe(probe, circuit);
    } catch (const InputError& e) {
      throw e.on_side(std::string(side) + " revision");
    }
  }
}

// One side's analyses, each run once and shared by every section of the diff:
// one MNA system with its factorisation, one DC analysis.
struct Side {
  const Circuit& circuit;
  std::unique_ptr<FrequencyResponse> response;
  std::optional<BiasResult> bias;
  std::optional<SolveError> bias_error;  // why there is no DC point

  explicit Side(const Circuit& c) : circuit(c) {}
  FrequencyResponse& ac() {
    if (!response) response = std::make_unique<FrequencyResponse>(circuit);
    return *response;
  }
  // An AC-coupled circuit without DC paths has no DC point to compare.
  void run_dc() {
    try {
      bias = run_bias(circuit);
    } catch (const SolveError& e) {
      bias_error = e;
    }
  }
  SharedAnalyses shared() { return {response.get(), bias ? &*bias : nullptr, bias_error}; }
};

bool moved(const SpecResult& a, const SpecResult& b) {
  if (a.pass != b.pass || a.value.has_value() != b.value.has_value()) return true;
  if (!a.value) return false;
  const double scale = std::max({std::abs(*a.value), std::abs(*b.value), 1e-300});
  return std::abs(*a.value - *b.value) > 1e-9 * scale;
}

NoiseChange noise_change(Side& old_side, Side& new_side, const std::string& probe, const Band& band) {
  NoiseOptions options;
  options.sweep.kind = SweepKind::list;
  options.sweep.at = {band.from, band.to};
  options.probe = probe;
  options.band = band;
  const NoiseResult before = run_noise(old_side.circuit, options, old_side.ac());
  const NoiseResult after = run_noise(new_side.circuit, options, new_side.ac());
  NoiseChange change{probe, before.total_rms, after.total_rms, {}};
  auto rms_of = [](const NoiseResult& r, const NoiseContributor& c) {
    for (const auto& x : r.contributors)
      if (x.source == c.source && x.mechanism == c.mechanism) return x.rms;
    return 0.0;
  };
  for (const NoiseResult* side : {&after, &before})
    for (std::size_t i = 0; i < side->contributors.size() && i < 3; ++i) {
      const auto& c = side->contributors[i];
      const bool listed = std::any_of(change.top.begin(), change.top.end(), [&](const ContributorChange& t) {
        return t.source == c.source && t.mechanism == c.mechanism;
      });
      if (!listed) change.top.push_back({c.source, c.mechanism, rms_of(before, c), rms_of(after, c)});
    }
  return change;
}

/// DC points of the nodes both sides have, where they moved by more than 1 nV.
std::vector<NodeChange> dc_changes(const BiasResult& before, const BiasResult& after) {
  std::map<std::string, const NodeBias*> old_by_name;
  for (const auto& n : before.nodes) old_by_name[n.name] = &n;
  std::vector<NodeChange> out;
  for (const auto& n : after.nodes) {
    auto it = old_by_name.find(n.name);
    if (it == old_by_name.end()) continue;
    const NodeBias& o = *it->second;
    if (std::abs(n.nominal - o.nominal) > 1e-9 || std::abs(n.worst - o.worst) > 1e-9)
      out.push_back({n.name, o.nominal, n.nominal, o.worst, n.worst});
  }
  auto size = [](const NodeChange& c) {
    return std::max(std::abs(c.new_nominal - c.old_nominal), std::abs(c.new_worst - c.old_worst));
  };
  std::stable_sort(out.begin(), out.end(), [&](const NodeChange& a, const NodeChange& b) { return size(a) > size(b); });
  return out;
}

}  // namespace

std::vector<CircuitChange> diff_circuits(const Circuit& old_circuit, const Circuit& new_circuit) {
  std::vector<CircuitChange> out;
  diff_named(old_circuit.elements, new_circuit.elements, "element",
             [&](const Element& e) { return describe(old_circuit, e); },
             [&](const Element& e) { return describe(new_circuit, e); }, out);
  diff_named(used_models(old_circuit), used_models(new_circuit), "model",
             [](const OpAmpModel& m) { return describe(m); }, [](const OpAmpModel& m) { return describe(m); },
             out);

  struct NamedValue {
    std::string name;
    double value;
  };
  auto params = [](const Circuit& c) {
    std::vector<NamedValue> v;
    for (const auto& [name, value] : c.params) v.push_back({name, value});
    return v;
  };
  // Six digits read well; a change hidden by them is shown in full.
  diff_named(params(old_circuit), params(new_circuit), "param",
             [](const NamedValue& p) { return format_si(p.value, 6); },
             [](const NamedValue& p) { return format_si(p.value, 6); }, out);
  std::map<std::string, double> old_params(old_circuit.params.begin(), old_circuit.params.end());
  for (const auto& [name, value] : new_circuit.params) {
    auto it = old_params.find(name);
    if (it != old_params.end() && it->second != value && format_si(it->second, 6) == format_si(value, 6))
      out.push_back({ChangeKind::changed, "param", name, format_exact(it->second), format_exact(value)});
  }
  return out;
}

std::vector<std::string> spec_probes(const Circuit& old_circuit, const Circuit& new_circuit) {
  std::vector<std::string> out;
  for (const Circuit* c : {&new_circuit, &old_circuit})
    for (const auto& s : c->specs)
      if (!s.probe.empty() && std::find(out.begin(), out.end(), s.probe) == out.end()) out.push_back(s.probe);
  return out;
}

DiffResult run_diff(const Circuit& old_circuit, const Circuit& new_circuit, const DiffOptions& options) {
  DiffResult result;
  result.circuit = diff_circuits(old_circuit, new_circuit);
  AcOptions ac = options.ac;
  if (ac.probes.empty()) ac.probes = spec_probes(old_circuit, new_circuit);
  Side old_side(old_circuit), new_side(new_circuit);
  if (!ac.probes.empty()) {
    check_probes(old_circuit, ac, "old");
    check_probes(new_circuit, ac, "new");
    result.old_response = run_ac(old_circuit, ac, old_side.ac());
    result.new_response = run_ac(new_circuit, ac, new_side.ac());
  }
  for (const auto& new_trace : result.new_response.traces) {
    const AcTrace* old_trace = find_trace(result.old_response, new_trace.probe.text);
    ProbeChange change{new_trace.probe.text, 0, 0, 0, 0};
    for (std::size_t i = 0; i < new_trace.values.size(); ++i) {
      const double f = result.new_response.frequencies[i];
      const double ddb = to_db(new_trace.values[i]) - to_db(old_trace->values[i]);
      const double ddeg = wrap_degrees(to_degrees(new_trace.values[i]) - to_degrees(old_trace->values[i]));
      // Two revisions solved apart differ in the last bits even where nothing
      // changed (a part that turns stiff changes how a node is written):
      // below kRoundingDb / kRoundingDeg (1e-10 relative) is no change.
      if (std::isfinite(ddb) && std::abs(ddb) > kRoundingDb && std::abs(ddb) > std::abs(change.max_db_change))
        change.max_db_change = ddb, change.db_at = f;
      if (std::isfinite(ddeg) && std::abs(ddeg) > kRoundingDeg && std::abs(ddeg) > std::abs(change.max_deg_change))
        change.max_deg_change = ddeg, change.deg_at = f;
    }
    result.probes.push_back(change);
  }
  if (options.band)
    for (const auto& trace : result.new_response.traces)
      if (trace.probe.kind == ProbeKind::voltage)
        result.noise.push_back(noise_change(old_side, new_side, trace.probe.text, *options.band));
  old_side.run_dc();
  new_side.run_dc();
  if (old_side.bias && new_side.bias) result.dc = dc_changes(*old_side.bias, *new_side.bias);
  const auto& dc_error = old_side.bias ? new_side.bias_error : old_side.bias_error;
  if (dc_error) result.dc_note = dc_error->sentence();
  if (static_cast<bool>(old_side.bias) != static_cast<bool>(new_side.bias))
    result.dc_unsolved_side = old_side.bias ? "new" : "old";
  if (!old_circuit.specs.empty() || !new_circuit.specs.empty()) {
    const CheckResult before = run_check(old_circuit, old_side.shared());
    const CheckResult after = run_check(new_circuit, new_side.shared());
    std::map<std::string, const SpecResult*> old_by_name;
    for (const auto& r : before.specs) old_by_name[r.spec.name] = &r;
    std::set<std::string> seen;
    for (const auto& r : after.specs) {
      seen.insert(r.spec.name);
      auto it = old_by_name.find(r.spec.name);
      if (it == old_by_name.end())
        result.specs.push_back({r.spec.name, std::nullopt, r});
      else if (moved(*it->second, r))
        result.specs.push_back({r.spec.name, *it->second, r});
    }
    for (const auto& r : before.specs)
      if (!seen.count(r.spec.name)) result.specs.push_back({r.spec.name, r, std::nullopt});
  }
  return result;
}

}  // namespace tacet
