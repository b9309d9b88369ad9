#include "tacet/analysis/rank.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "tacet/analysis/check.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/spelling.hpp"

namespace tacet {

double relative_margin(double margin, double value, std::optional<double> min, std::optional<double> max) {
  // The limit that sets the margin: the nearer one of a window.
  std::optional<double> limit;
  if (min && max) limit = (value - *min) <= (*max - value) ? min : max;
  else limit = min ? min : max;
  if (!limit || *limit == 0) return margin;
  return margin / std::abs(*limit);
}

namespace {

std::vector<std::string> opamp_names(const Circuit& circuit) {
  std::vector<std::string> names;
  for (const Element& e : circuit.elements)
    if (e.kind == ElementKind::opamp) names.push_back(e.name);
  return names;
}

std::size_t slot_element(const Circuit& circuit, const std::string& slot) {
  const auto index = circuit.find_element(slot);
  const std::vector<std::string> opamps = opamp_names(circuit);
  const std::string near = nearest_word(slot, opamps);
  std::string hint = fmt::format("did you mean '{}'?", near);
  if (near.empty() && opamps.empty()) hint = "the netlist has no op amp";
  else if (near.empty() && opamps.size() <= 8) hint = fmt::format("the op amps are {}", fmt::join(opamps, ", "));
  else if (near.empty())
    hint = fmt::format("the op amps include {}, ...", fmt::join(opamps.begin(), opamps.begin() + 8, ", "));
  if (!index) throw InputError::usage(fmt::format("--slot '{}' is no element of the netlist", slot), hint);
  const Element& e = circuit.elements[*index];
  if (e.kind != ElementKind::opamp)
    throw InputError::usage(fmt::format("--slot '{}' is a {}, not an op amp", slot, to_keyword(e.kind)), hint);
  return *index;
}

std::vector<int> chosen_models(const Circuit& circuit, const std::vector<std::string>& names) {
  std::vector<std::string> all;
  for (const OpAmpModel& m : circuit.models) all.push_back(m.name);
  std::vector<int> out;
  if (names.empty()) {
    for (std::size_t k = 0; k < all.size(); ++k) out.push_back(static_cast<int>(k));
    return out;
  }
  for (const std::string& name : names) {
    const auto it = std::find(all.begin(), all.end(), name);
    if (it == all.end()) throw InputError::unknown("model", name, "--models", nearest_word(name, all));
    out.push_back(static_cast<int>(it - all.begin()));
  }
  return out;
}

RankRow rank_variant(const Circuit& variant, const RankOptions& options) {
  RankRow row;
  for (const std::string& slot : options.slots)
    row.slots.emplace_back(slot, variant.model_of(variant.elements[*variant.find_element(slot)]).name);
  const CheckResult check = run_check(variant);
  row.failed = check.failed();
  row.pass = row.failed == 0;
  double worst = std::numeric_limits<double>::infinity();
  for (const SpecResult& r : check.specs) {
    const double m = r.value ? relative_margin(r.margin, *r.value, r.spec.min, r.spec.max)
                             : -std::numeric_limits<double>::infinity();
    if (m < worst || row.worst_spec.empty()) worst = m, row.worst_spec = r.spec.name;
  }
  if (std::isfinite(worst)) row.worst_margin = worst;
  return row;
}

}  // namespace

RankResult run_rank(const Circuit& circuit, const RankOptions& options) {
  if (options.slots.empty()) throw InputError::usage("tacet rank needs a slot to fill", "write --slot U1");
  RankResult result;
  result.slots = options.slots;
  result.specs = circuit.specs.size();
  std::vector<std::size_t> slots;
  for (const std::string& slot : options.slots) {
    const std::size_t e = slot_element(circuit, slot);
    if (std::find(slots.begin(), slots.end(), e) != slots.end())
      throw InputError::usage(fmt::format("--slot '{}' is given twice", slot));
    slots.push_back(e);
  }
  const std::vector<int> models = chosen_models(circuit, options.models);
  std::size_t variants = 1;
  for (std::size_t k = 0; k < slots.size(); ++k) {
    variants *= models.size();
    if (variants > kMostRankVariants)
      throw InputError::usage(fmt::format("{} models in {} slots is more than {} variants", models.size(),
                                          slots.size(), kMostRankVariants),
                              "name fewer models with --models a,b,c");
  }
  Circuit variant = circuit;
  std::vector<std::size_t> choice(slots.size(), 0);  // an odometer over the models
  for (std::size_t v = 0; v < variants; ++v) {
    for (std::size_t k = 0; k < slots.size(); ++k) variant.elements[slots[k]].model = models[choice[k]];
    result.rows.push_back(rank_variant(variant, options));
    for (std::size_t k = slots.size(); k-- > 0;) {
      if (++choice[k] < models.size()) break;
      choice[k] = 0;
    }
  }
  // Fewest failing specs first, then the largest worst margin; ties keep the
  // order tried.
  std::stable_sort(result.rows.begin(), result.rows.end(), [](const RankRow& a, const RankRow& b) {
    if (a.failed != b.failed) return a.failed < b.failed;
    const double ma = a.worst_margin.value_or(-std::numeric_limits<double>::infinity());
    const double mb = b.worst_margin.value_or(-std::numeric_limits<double>::infinity());
    return ma > mb;
  });
  return result;
}

}  // namespace tacet
