#pragma once
// The small-signal solution at one frequency at a time, for analyses that
// choose their frequencies as they go (the AC sweep, spec checks searching a
// corner or a band's worst point). The MNA pattern and the symbolic analysis
// are made once; each new frequency costs one assemble, refactor and solve.
//
// The refactor reuses the pivots of the first frequency factored (the
// anchor), and what a frequency gets never depends on the frequencies before
// it (sparse_solver.hpp). worker() makes a response for another thread on the
// same MNA system and symbolic analysis, with its own values, factors and
// buffers, anchored at this one's anchor: every frequency then comes out bit
// for bit the same whichever worker solves it.

#include <complex>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/probe.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

class FrequencyResponse {
 public:
  /// Builds the MNA system (throws SolveError when the circuit has no unique
  /// solution). The circuit must outlive this object.
  explicit FrequencyResponse(const Circuit& circuit, SolverKind solver = SolverKind::klu);

  /// Assembles and refactors at f (Hz) unless f is the frequency factored
  /// last. Throws SolveError naming the unknown when the matrix is singular.
  void factor_at(double f);
  /// factor_at(f), then the forward solve with every source's AC phasor,
  /// unless f is the frequency solved last.
  void solve_at(double f);
  /// The probe's phasor at the last frequency solved; SolveError if not finite.
  /// An impedance probe costs one more solve on the same factorisation.
  std::complex<double> value(const Probe& probe);
  /// solve_at(f), then value(probe).
  std::complex<double> at(const Probe& probe, double f);
  /// The probe's value with a unit (1 V or 1 A, phase 0) at the independent
  /// source `source` (an index into Circuit::elements) and every other
  /// source's ac zeroed: the transfer from that source alone, in V/V, V/A,
  /// A/V or A/A. One more solve on the factorisation at f, kept for the next
  /// probe at the same f and source.
  std::complex<double> transfer_at(const Probe& probe, std::size_t source, double f);
  /// The adjoint solution y of A(s)^T y = c at the frequency factored last, c
  /// the probe's functional: y_k is the transfer from a unit injected into row
  /// k to the probe (the noise analysis reads every source's transfer here).
  const std::vector<std::complex<double>>& adjoint(const Probe& probe);

  /// A response of its own for another thread: the same MNA system and
  /// symbolic analysis (shared, read-only), its own values, factors and
  /// buffers; its first factorisation is at this one's anchor. Call it after
  /// the anchor is set (anchor_at) and never restamp() while workers live.
  std::unique_ptr<FrequencyResponse> worker() const;
  /// Factors at f unless some frequency has already been factored: the
  /// pivots that every later frequency reuses are taken at the anchor.
  void anchor_at(double f);
  /// Hz of the anchor; -1 before the first factorisation.
  double anchor() const { return anchor_ >= 0 ? anchor_ : pending_anchor_; }

  /// The circuit's values have changed (not its structure): the matrix is
  /// restamped on the same pattern and symbolic analysis, and the next
  /// frequency asked for is factored anew. No allocation.
  void restamp();
  /// How many times restamp() has run: what a caller keeps of the matrix at
  /// an earlier count is out of date.
  unsigned restamps() const { return restamps_; }

  const MnaSystem& mna() const { return *mna_; }
  /// The factorisation at the frequency factored last, for callers that solve
  /// right-hand sides of their own.
  SparseLu& lu() { return *lu_; }

 private:
  std::complex<double> impedance(const Probe& probe);
  /// `v`, or SolveError when it is not finite.
  std::complex<double> value_after_solve(const Probe& probe, double f, std::complex<double> v) const;

  explicit FrequencyResponse(const FrequencyResponse& main);  // worker()
  void allocate_work();
  /// Assembles at f and factors; SolveError when singular.
  void factor_values_at(double f);

  std::shared_ptr<MnaSystem> mna_;  ///< shared with the workers
  std::unique_ptr<SparseLu> lu_;
  SolverKind solver_;
  std::vector<std::complex<double>> values_, excitation_, x_, y_, z_, w_;
  std::vector<ProbeTerm> scratch_;
  double factored_ = -1;  ///< Hz of the current factorisation; -1: none
  double solved_ = -1;    ///< Hz of x_; -1: none
  double single_solved_ = -1;    ///< Hz of w_, the response to one source; -1: none
  std::size_t single_source_ = 0;  ///< the source of w_
  double anchor_ = -1;          ///< Hz of the first factorisation; -1: none yet
  double pending_anchor_ = -1;  ///< a worker's anchor, factored before its first frequency; -1: none
  unsigned restamps_ = 0;
};


}  // namespace tacet
