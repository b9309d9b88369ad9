#pragma once
// check: measures every `spec` of a circuit and compares it with its limits.
// Each analysis a spec needs is set up once and shared by all specs that
// need it (one FrequencyResponse for every gain, phase, flatness and corner).

#include <optional>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/circuit/spec.hpp"
#include "tacet/common/errors.hpp"

namespace tacet {

struct SpecResult {
  Spec spec;
  std::optional<double> value;  ///< measured, in spec.unit; nullopt: could not be measured
  double margin = 0;            ///< how far inside the limits (negative: outside), in spec.unit
  bool pass = false;
  double where = 0;             ///< Hz of the worst point (flatness) or 0
  std::string note;             ///< why there is no value, or what was measured where
  /// The solver's sentence when the analysis this spec needs cannot run (no
  /// DC path, a singular matrix), and its hint; empty when it ran.
  std::string unsolved, unsolved_hint;
};

struct CheckResult {
  std::vector<SpecResult> specs;  ///< in the order written
  int failed() const;    ///< specs that did not pass, the unsolved ones included
  int unsolved() const;  ///< specs whose analysis could not run
  /// The error of exit status 3 naming every unsolved spec with the first
  /// one's reason and hint: "circuit cannot be solved: spec 'dc' at DC: ...".
  SolveError unsolved_error() const;
};

/// Measures every spec. A spec whose analysis cannot run (SolveError) fails
/// with the reason in its note and `unsolved`; the other specs are still
/// measured. Throws InputError for a probe that does not resolve.
CheckResult run_check(const Circuit& circuit);

class FrequencyResponse;
struct BiasResult;
class DcSystem;

/// Analyses of the same circuit a caller has already set up (diff does, for
/// its own comparisons), so that every analysis runs once per circuit.
struct SharedAnalyses {
  FrequencyResponse* response = nullptr;  ///< the circuit's; nullptr: check makes its own
  const BiasResult* bias = nullptr;       ///< the DC analysis; nullptr: check runs it if needed
  std::optional<SolveError> bias_error;   ///< why the DC analysis could not run; empty: it could
  /// The circuit's DC system, restamped to its values (spread); nullptr:
  /// check builds one when a spec needs the DC analysis.
  const DcSystem* dc = nullptr;
};
CheckResult run_check(const Circuit& circuit, const SharedAnalyses& shared);

struct CheckOptions {
  /// Worker threads for the specs; 0: one per core. The specs are shared out
  /// in groups (those that share a loop trace, a step response or the
  /// headroom sweep go together), each worker with a frequency response of
  /// its own anchored at check_anchor(); the DC analysis runs once before
  /// them. The result is the same bit for bit for any number.
  int threads = 1;
};
CheckResult run_check(const Circuit& circuit, const CheckOptions& options);

/// Hz where a check's own frequency response takes the pivots every later
/// frequency reuses (response.hpp), so that no spec's value depends on which
/// spec was measured before it: the first spec's at=, else its ref=, else its
/// from= (the frequency it would factor first), else 1 kHz.
double check_anchor(const Circuit& circuit);

/// A phase compared with its limits modulo 360 degrees: of the angles that
/// differ from `degrees` by whole turns, the one nearest the window's centre
/// (or its one limit). -180.6 and 179.4 deg are the same angle.
double phase_in_window(double degrees, std::optional<double> min, std::optional<double> max);

/// Margin of `value` inside the optional window [min, max]: the smaller
/// distance to a given limit, negative when outside.
double window_margin(double value, std::optional<double> min, std::optional<double> max);

}  // namespace tacet
