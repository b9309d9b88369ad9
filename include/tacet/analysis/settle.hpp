#pragma once
// Step response and settling: the linear small-signal circuit's response to a
// unit step of one source (1 V for a vsrc, 1 A for an isrc; its ac value plays
// no part, so `final` is the DC gain to the probe), from rest, every other
// independent source zeroed.
//
// Method (docs/analyses/settle.md): the MNA system as the linear DAE
// C x' + G x = b u(t) (solve/pencil.hpp, an op amp's second pole a state of
// its own), integrated by Radau IIA of order 5 with error control
// (solve/radau.hpp): error-controlled, not exact. The local error is held to
// kSettleTolerance of each unknown's scale (the larger of its final value and
// the largest it has reached) and of each probe's, tighter for narrow bands,
// which keeps every printed point within 1e-6 of `final` (tests check 1e-7
// against closed forms). Printed points come from each step's collocation
// polynomial (dense output), not from extra steps.
//
//   final          c^T x(inf), x(inf) from the DC system G x = b (one real LU)
//   peak           the extreme of the response in the direction of final
//   overshoot      (peak - final) / final, 0 when it never passes final;
//                  null when final is 0 (no DC gain)
//   settling_time  the last time |v - final| = band |final|, located by root
//                  finding on each step's polynomial (to 1e-13 of the step);
//                  0 when the response never leaves the band, null when
//                  final is 0 or the response had not settled
//
// How long it integrates: until every unknown is within kQuietFraction x band
// of its final value (relative to its scale), so no mode can still carry a
// probe out of its band (a stable linear system's state only decays from
// there, up to its transient growth), and at least to --to (after which it
// takes at most as many steps again as the window did). Default --to: 2 x
// the largest settling time (the response and as much again), or the quiet
// time when no probe leaves its band.

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

/// At most this many accepted steps before the response counts as unsettled.
inline constexpr int kSettleMaxSteps = 100000;
/// Quiet: every unknown within this fraction of the band of its final value.
inline constexpr double kQuietFraction = 1e-3;

struct SettleOptions {
  std::vector<std::string> probes;  ///< at least one; voltages and non-capacitor currents
  std::string input;                ///< a vsrc or isrc; empty: the only source with an ac value
  std::optional<double> to;         ///< s, end of the printed response; default: see above
  double band = 1e-4;               ///< fraction of final (0.01%)
  int points = 201;                 ///< printed points, evenly spaced from 0 to `to`
  SolverKind solver = SolverKind::klu;

  /// The first problem as a sentence, or "" when the options are usable.
  std::string validate() const;
};

struct SettleTrace {
  std::string probe;
  const char* unit = "V";
  std::vector<double> values;            ///< at SettleResult::times
  double final = 0;                      ///< V or A per unit step
  double peak = 0;
  std::optional<double> overshoot;       ///< fraction; null when final is 0
  std::optional<double> settling_time;   ///< s
  double band = 0;                       ///< fraction of final
};

struct SettleResult {
  std::string input;
  const char* input_unit = "V";  ///< the step's height: 1 V or 1 A
  std::vector<double> times;     ///< s, from 0 to `to`
  double to = 0;
  std::vector<SettleTrace> traces;
  bool settled = true;      ///< false: the response was still moving when integration stopped
  int steps = 0;            ///< accepted steps
  int factorisations = 0;   ///< sparse LU factorisations (real and complex)
  int unknowns = 0;         ///< size of the DAE integrated
};

/// Throws InputError for bad options, probes or input (nearest names as
/// hints) and SolveError for a circuit without a DC point or a response that
/// grows without bound.
SettleResult run_settle(const Circuit& circuit, const SettleOptions& options);

}  // namespace tacet
