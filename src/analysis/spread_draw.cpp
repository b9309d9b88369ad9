// The spread's evaluator: a circuit copy set to a draw's values, measured on
// the AC response and DC system it built once.

#include "tacet/analysis/spread_draw.hpp"

#include <algorithm>
#include <limits>
#include <map>
#include <string_view>
#include <unordered_map>
#include <utility>

#include "tacet/analysis/bias.hpp"
#include "tacet/solve/response.hpp"

namespace tacet {

namespace {

bool needs_dc(const std::vector<Spec>& specs) {
  return std::any_of(specs.begin(), specs.end(),
                     [](const Spec& s) { return s.kind == SpecKind::offset || s.kind == SpecKind::rails; });
}

}  // namespace

SpreadEvaluator::SpreadEvaluator(const Circuit& circuit, const SpreadPlan& plan)
    : work_(circuit), specs_(circuit.specs), plan_(plan) {
  std::map<std::string, std::size_t> own_model;  // op-amp instance -> its model copy
  std::unordered_map<std::string_view, std::size_t> index;
  for (std::size_t e = 0; e < work_.elements.size(); ++e) index.emplace(work_.elements[e].name, e);
  for (const SpreadParameter& p : plan.parameters) {
    Element& element = work_.elements[index.at(p.name)];
    if (p.param == "value") {
      targets_.push_back(&element.value);
      continue;
    }
    auto [it, added] = own_model.try_emplace(p.name, work_.models.size());
    if (added) {
      work_.models.push_back(work_.model_of(element));
      element.model = static_cast<int>(it->second);
    }
    targets_.push_back(nullptr);  // filled below: models may still grow
    model_targets_.push_back({targets_.size() - 1, it->second, p.param});
  }
  for (const auto& t : model_targets_) targets_[t.target] = model_parameter(work_.models[t.model], t.key);
  for (double* target : targets_) nominal_.push_back(*target);
  try {
    response_ = std::make_unique<FrequencyResponse>(work_);
  } catch (const SolveError&) {
    // No AC solution for any draw: check reports every AC spec unsolved.
  }
  anchor_at_nominal();
  if (needs_dc(specs_)) {
    try {
      dc_ = std::make_unique<DcSystem>(work_);
    } catch (const SolveError& e) {
      dc_error_ = e;  // the same for every draw: no DC path is a matter of structure
    }
  }
}

SpreadEvaluator::~SpreadEvaluator() = default;

// Every later factorisation refactors on the anchor's pivots (response.hpp).
// Taken at the nominal values, where check takes them, the anchor is the same
// in every worker, so a draw's values do not depend on which worker ran it or
// on the draws that worker ran before it.
void SpreadEvaluator::anchor_at_nominal() {
  if (!response_) return;
  try {
    response_->anchor_at(check_anchor(work_));
  } catch (const SolveError&) {
    // Singular there at nominal: the first draw's first frequency anchors, as in check.
  }
}

void SpreadEvaluator::set_values(const std::vector<double>& deviations) {
  for (std::size_t k = 0; k < targets_.size(); ++k) *targets_[k] = nominal_[k] * (1 + deviations[k]);
}

CheckResult SpreadEvaluator::check() {
  SharedAnalyses shared;
  if (response_) {
    response_->restamp();
    shared.response = response_.get();
  }
  shared.bias_error = dc_error_;
  if (dc_ && needs_dc(work_.specs)) {
    try {
      dc_->restamp();
      run_bias(*dc_, 1, bias_);  // into the last draw's tables: nothing allocated
      shared.bias = &bias_;
    } catch (const SolveError& e) {
      shared.bias_error = e;  // singular, or not finite, at this draw's values
    }
  }
  return run_check(work_, shared);
}

void SpreadEvaluator::evaluate(std::uint64_t seed, std::uint64_t index, double* values, std::uint8_t* pass) {
  draw_deviations(plan_, seed, index, deviations_);
  set_values(deviations_);
  const CheckResult result = check();
  for (std::size_t s = 0; s < result.specs.size(); ++s) {
    const SpecResult& r = result.specs[s];
    values[s] = r.value ? *r.value : std::numeric_limits<double>::quiet_NaN();
    pass[s] = r.pass ? 1 : 0;
  }
}

SpecResult SpreadEvaluator::measure(std::size_t spec, const std::vector<double>& deviations) {
  set_values(deviations);
  work_.specs.assign(1, specs_.at(spec));
  CheckResult result;
  try {
    result = check();
  } catch (...) {
    work_.specs = specs_;
    throw;
  }
  work_.specs = specs_;
  return std::move(result.specs.front());
}

}  // namespace tacet
