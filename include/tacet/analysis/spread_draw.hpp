#pragma once
// The spread's evaluator: one copy of the circuit whose toleranced values are
// set to a draw (or a corner) and every spec measured as tacet check measures
// it, on the AC pattern and the DC system built once and restamped per draw:
// no parse, no elaboration, no new pattern, no new symbolic analysis.
// One evaluator per worker thread; not shared.

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/spread.hpp"
#include "tacet/circuit/circuit.hpp"

namespace tacet {

class FrequencyResponse;
class DcSystem;

class SpreadEvaluator {
 public:
  /// Copies the circuit; each op amp with a toleranced model parameter gets a
  /// model of its own in the copy, so two instances of one model spread apart.
  SpreadEvaluator(const Circuit& circuit, const SpreadPlan& plan);
  ~SpreadEvaluator();
  SpreadEvaluator(const SpreadEvaluator&) = delete;
  SpreadEvaluator& operator=(const SpreadEvaluator&) = delete;

  /// Measures every spec at draw `index` of `seed`: values[s] (NaN when not
  /// measured) and pass[s] (1: passed) per spec.
  void evaluate(std::uint64_t seed, std::uint64_t index, double* values, std::uint8_t* pass);

  /// Sets parameter k of the plan to nominal (1 + deviations[k]) and measures
  /// spec `spec` alone (a corner, or one side of a difference).
  SpecResult measure(std::size_t spec, const std::vector<double>& deviations);

 private:
  void set_values(const std::vector<double>& deviations);
  void anchor_at_nominal();
  CheckResult check();

  struct ModelTarget {
    std::size_t target, model;
    std::string key;
  };
  Circuit work_;
  std::vector<Spec> specs_;  ///< every spec, as written; work_.specs holds those measured
  const SpreadPlan& plan_;
  std::vector<double*> targets_;
  std::vector<ModelTarget> model_targets_;
  std::vector<double> nominal_, deviations_;
  std::unique_ptr<FrequencyResponse> response_;
  std::unique_ptr<DcSystem> dc_;
  BiasResult bias_;  ///< the last draw's DC analysis, its tables reused by the next
  std::optional<SolveError> dc_error_;  ///< why the DC system cannot be built; empty: it was
};

}  // namespace tacet
