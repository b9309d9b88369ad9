#pragma once
// AC analysis: the small-signal response to every source's `ac=` phasor,
// superposed, at each frequency of a sweep.

#include <complex>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/probe.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

class FrequencyResponse;

enum class SweepKind { log, linear, list };
const char* to_string(SweepKind kind);

/// The most points one sweep may have: far more than any plot or spec needs,
/// few enough that a typo (--points 2000000000) is refused instead of
/// exhausting memory.
inline constexpr long long kMostSweepPoints = 1000000;

struct Sweep {
  SweepKind kind = SweepKind::log;
  double from = 10;      ///< Hz, first point of a log or linear sweep
  double to = 100e3;     ///< Hz, last point
  int per_decade = 20;   ///< log sweep: points per decade
  int points = 101;      ///< linear sweep: number of points, ends included
  std::vector<double> at;  ///< list: the frequencies, Hz

  /// Empty when valid, else a message naming the option, its value and the rule.
  std::string validate() const;
  /// The frequencies in order. A log sweep starts at `from`, steps by
  /// 10^(1/per_decade) and ends at `to` (included even when off the grid).
  std::vector<double> frequencies() const;
};

struct AcOptions {
  Sweep sweep;
  std::vector<std::string> probes;  ///< probe texts, resolved by run_ac
  /// A source's name: the transfer from it alone (a unit at it, every other
  /// source's ac zeroed); empty: every source's ac, superposed.
  std::string input;
  SolverKind solver = SolverKind::klu;  ///< sparse LU backend (Eigen: for comparison)
  /// Worker threads for the points; 0: one per core. The result is the same
  /// bit for bit for any number.
  int threads = 1;
};

struct AcTrace {
  Probe probe;
  std::vector<std::complex<double>> values;  ///< one per frequency, V or A
};

struct AcResult {
  std::vector<double> frequencies;  ///< Hz
  std::vector<AcTrace> traces;      ///< one per probe, in the order asked
  std::string input;                ///< the one source driving it, or empty (AcOptions::input)
  std::string input_unit;           ///< "V" or "A": what a unit at `input` is; empty without input
};

/// Throws InputError for a bad sweep or probe, SolveError when the circuit is
/// singular at some frequency (the message names the unknown involved).
AcResult run_ac(const Circuit& circuit, const AcOptions& options);
/// The same on a caller's FrequencyResponse of `circuit` (options.solver is
/// then the response's), so several analyses share one MNA system.
AcResult run_ac(const Circuit& circuit, const AcOptions& options, FrequencyResponse& response);

}  // namespace tacet
