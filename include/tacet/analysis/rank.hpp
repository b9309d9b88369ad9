#pragma once
// rank: which op-amp models suit a slot. Every model the netlist can see (or
// the ones named) is tried in each slot, every combination once, and every
// spec is checked per variant; the variants are ranked by how many specs fail,
// then by the worst margin relative to its limit (largest first).
//
// Relative margin of a spec: its margin over |limit| for the limit that sets
// the margin (the nearer one of a window); over 1 in the spec's unit when that
// limit is 0 (a 0 dB ceiling). A spec that cannot be measured counts as
// failed with margin -infinity.

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "tacet/circuit/circuit.hpp"

namespace tacet {

struct RankOptions {
  std::vector<std::string> slots;   ///< op-amp instances ("U2", "F1.U1")
  std::vector<std::string> models;  ///< the models to try; empty: every model of the netlist
};

struct RankRow {
  std::vector<std::pair<std::string, std::string>> slots;  ///< slot, model, in slot order
  bool pass = false;
  int failed = 0;
  std::string worst_spec;
  std::optional<double> worst_margin;  ///< relative; nullopt: a spec could not be measured
};

struct RankResult {
  std::vector<std::string> slots;
  std::size_t specs = 0;
  std::vector<RankRow> rows;  ///< best first
};

/// The most variants rank tries (models ^ slots); more is a usage error.
inline constexpr std::size_t kMostRankVariants = 4096;

/// Throws InputError for a slot that is no op amp (with the nearest op amp's
/// name), an unknown model (with the nearest model's), or too many variants.
RankResult run_rank(const Circuit& circuit, const RankOptions& options);

/// The relative margin above, for one measured spec.
double relative_margin(double margin, double value, std::optional<double> min, std::optional<double> max);

}  // namespace tacet
