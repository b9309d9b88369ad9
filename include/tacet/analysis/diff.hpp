#pragma once
// diff: two revisions of a netlist analysed alike. What changed in the circuit
// (elements, models, params, matched by hierarchical name) and what changed in
// the results: each probe's largest change in gain and phase and where; with a
// band, each voltage probe's noise total and its largest contributors; every
// node whose DC point or worst-case band moved; every spec whose verdict or
// margin moved. The fields of DiffResult below are what the writers show.

#include <optional>
#include <string>
#include <vector>

#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/analysis/noise.hpp"

namespace tacet {

enum class ChangeKind { added, removed, changed };
const char* to_string(ChangeKind kind);

/// One line of the circuit's change: `what` is "element", "model" or "param".
struct CircuitChange {
  ChangeKind kind = ChangeKind::changed;
  std::string what;
  std::string name;
  std::string before;  ///< as `tacet show` would print it; empty when added
  std::string after;   ///< empty when removed
};

struct ProbeChange {
  std::string probe;
  double max_db_change = 0;   ///< largest |dB(new) - dB(old)|, dB, with its sign
  double db_at = 0;           ///< Hz
  double max_deg_change = 0;  ///< largest |phase(new) - phase(old)| wrapped to +-180, degrees
  double deg_at = 0;          ///< Hz
};

struct SpecChange {
  std::string name;
  std::optional<SpecResult> before;  ///< nullopt: the spec is new
  std::optional<SpecResult> after;   ///< nullopt: the spec was removed
};

/// A noise source's rms at the probe on each side (0 where it does not exist).
struct ContributorChange {
  std::string source;
  NoiseMechanism mechanism = NoiseMechanism::thermal;
  double old_rms = 0;  ///< V
  double new_rms = 0;  ///< V
};

struct NoiseChange {
  std::string probe;
  double old_rms = 0;  ///< V over the band
  double new_rms = 0;  ///< V
  std::vector<ContributorChange> top;  ///< the three largest of each side, largest new first
};

/// A node's DC point and worst-case offset band on each side.
struct NodeChange {
  std::string node;
  double old_nominal = 0, new_nominal = 0;  ///< V
  double old_worst = 0, new_worst = 0;      ///< V
};

struct DiffOptions {
  AcOptions ac;  ///< probes and sweep shared by both sides; probes from the specs when empty
  std::optional<Band> band;  ///< noise totals are compared over this band when given
};

struct DiffResult {
  std::vector<CircuitChange> circuit;
  std::vector<ProbeChange> probes;
  std::vector<SpecChange> specs;  ///< only those whose verdict or margin moved
  std::vector<NoiseChange> noise;  ///< per voltage probe, when a band is given
  std::vector<NodeChange> dc;      ///< nodes on both sides whose DC point or band moved, largest first
  std::string dc_note;             ///< why there is no DC comparison (no DC path), or empty
  /// "old" or "new" when only that side has no DC point: the revision broke
  /// (or mended) a DC path, which the diff reports and then fails on (exit 3).
  std::string dc_unsolved_side;
  AcResult old_response;
  AcResult new_response;
};

/// Element, model and param changes, in a stable order (elements as in the
/// new file, then removed ones, then models, then params).
std::vector<CircuitChange> diff_circuits(const Circuit& old_circuit, const Circuit& new_circuit);

/// The probes a diff looks at when none are given: every distinct spec probe
/// of either side, in order.
std::vector<std::string> spec_probes(const Circuit& old_circuit, const Circuit& new_circuit);

/// The whole diff. A probe missing on one side is an InputError naming that side.
DiffResult run_diff(const Circuit& old_circuit, const Circuit& new_circuit, const DiffOptions& options);

}  // namespace tacet
