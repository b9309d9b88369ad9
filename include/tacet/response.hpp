#pragma once
// The small-signal solution at one frequency at a time, for analyses that
// choose their frequencies as they go (the AC sweep, spec checks searching a
// corner or a band's worst point). The MNA pattern and the symbolic analysis
// are made once; each new frequency costs one assemble, refactor and solve.

#include <complex>
#include <memory>
#include <vector>

#include "tacet/circuit.hpp"
#include "tacet/mna.hpp"
#include "tacet/probe.hpp"
#include "tacet/sparse_solver.hpp"

namespace tacet {

/// The SolveError for a matrix found singular at f: names the unknown of the
/// singular column when the factorisation knows it.
[[noreturn]] void throw_singular(const MnaSystem& mna, int column, double f);

class FrequencyResponse {
 public:
  /// Builds the MNA system (throws SolveError when the circuit has no unique
  /// solution). The circuit must outlive this object.
  explicit FrequencyResponse(const Circuit& circuit, SolverKind solver = SolverKind::klu);

  /// Solves at f (Hz) unless f is the last frequency solved. Throws SolveError
  /// naming the unknown when the matrix is singular there.
  void solve_at(double f);
  /// The probe's phasor at the last frequency solved; SolveError if not finite.
  std::complex<double> value(const Probe& probe);
  /// solve_at(f), then value(probe).
  std::complex<double> at(const Probe& probe, double f);

  const MnaSystem& mna() const { return mna_; }
  SparseLu& lu() { return *lu_; }
  double frequency() const { return frequency_; }

 private:
  MnaSystem mna_;
  std::unique_ptr<SparseLu> lu_;
  std::vector<std::complex<double>> values_, excitation_, x_;
  std::vector<ProbeTerm> scratch_;
  double frequency_ = -1;
};

}  // namespace tacet
