#pragma once
// Bias analysis: the DC operating point of the circuit with capacitors open and
// inductors shorted (the MNA matrix at s = 0, op amps with their finite aol and
// rout), and the worst-case band of every node over the op amps' unknown-sign
// DC errors.
//
// Nominal point: vos = 0, ios = 0, and each op amp's bias current `ib` flowing
// into both input pins (KCL row of the pin: rhs -= ib), plus every source's dc=.
//
// Offsets: each op amp k contributes two sources of unknown sign,
//   vos_k: a voltage in series with its + input, rhs[gain row of k] += vos;
//   ios_k: I(+) = ib + s ios/2, I(-) = ib - s ios/2, s in {-1, +1}.
// The DC system is linear, so node n moves by S_nj x_j for source j with
// sensitivity S_nj (one extra right-hand side per source on the one DC
// factorisation). Over all sign combinations
//   worst_n = sum_j |S_nj| limit_j      (the exact worst case of the signs),
//   rss_n   = sqrt(sum_j (S_nj limit_j)^2)  (a statistical estimate).
// An op-amp output is then bounded by nominal -/+ worst and checked against
// [rail_low + swing, rail_high - swing].
//
// Temperature and limits (dc_limits): the model's vos, ib, ib_max and ios are
// at 25 C. Over the ambient range [T1, T2] (Circuit::ambient_range, else the
// ambient alone):
//   vos limit = |vos| + |vos_drift| max(|T1 - 25|, |T2 - 25|);
//   currents scale by 2^((T - 25)/ib_double) (no scaling without ib_double):
//   ios limit = |ios| 2^((T2 - 25)/d); the nominal ib = ib 2^((Tambient - 25)/d);
//   ib_max band = the largest departure of the bias current's magnitude from
//   that nominal over the range: max(ib_max 2^((T2-25)/d) - |ib nominal|,
//   |ib nominal| - |ib| 2^((T1-25)/d), 0), a source of unknown sign drawn
//   into both pins alike (ib_max defaults to |ib|, so without ib_max and a
//   range it is 0).

#include <cstddef>
#include <limits>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

struct BiasOptions {
  SolverKind solver = SolverKind::klu;  ///< sparse LU backend
  /// Workers for the DC errors' solves and sums (0: one per core); the
  /// result is the same to the bit for any number.
  int threads = 1;
  /// Take a linear-time path (dc_cascade.hpp, dc_tree.hpp) where the circuit
  /// suits one; false: one solve per error always (the tests compare them).
  bool cascade = true;
  /// Likewise the tree's path (dc_tree.hpp), tried when the cascade's is not taken.
  bool tree = true;
};

/// How the DC error bands were summed: down a cascade of stages, along a
/// tree of blocks joined at single unknowns, or one solve per error.
enum class BiasPath { per_error, cascade, tree };

/// Which DC error of an op amp a contribution comes from.
/// ib is the nominal shift of the typical bias current; ib_max the band term
/// of its worst departure from typical (ib_max and temperature).
enum class DcErrorKind { vos, ios, ib, ib_max };
/// "vos", "ios", "ib", "ib_max".
const char* to_string(DcErrorKind kind);

/// One DC error's share at a node.
struct OffsetContribution {
  std::string opamp;   ///< the op amp's name
  DcErrorKind kind = DcErrorKind::vos;
  double gain = 0;     ///< |dV/dsource|: V/V for vos, ohm for ios and ib
  double volts = 0;    ///< V: |S| limit for vos and ios; the signed shift for ib
  /// ios and ib: the resistor that turns the current into the most voltage
  /// (largest |v_a - v_b| in that error's solution), "" when none does.
  std::string through;
};

struct NodeBias {
  std::string name;
  double nominal = 0;  ///< V
  double worst = 0;    ///< V, sum over sources of |sensitivity| x limit
  double rss = 0;      ///< V, root-sum-square of the same terms
};

constexpr double kNotGiven = std::numeric_limits<double>::quiet_NaN();

struct OpAmpBias {
  std::string name;
  std::size_t element = 0;  ///< index into Circuit::elements
  std::string out;          ///< output node name
  double nominal = 0;       ///< V at the output
  double low = 0;           ///< V, nominal - worst
  double high = 0;          ///< V, nominal + worst
  std::optional<Rails> rails;          ///< the instance's rails=, else the supply; none: unchecked
  double limit_low = kNotGiven;        ///< V, rails.low + swing
  double limit_high = kNotGiven;       ///< V, rails.high - swing
  std::optional<bool> ok;              ///< nullopt: no rails to check against
  std::vector<OffsetContribution> largest;  ///< up to three, largest |volts| first
};

/// An op amp's DC error limits over the circuit's ambient range (see above).
struct DcLimits {
  double vos = 0;        ///< V, magnitude with drift
  double ios = 0;        ///< A, magnitude at the hottest
  double ib = 0;         ///< A, signed: the typical current at the ambient
  double ib_excess = 0;  ///< A, the worst departure of |ib| from typical over the range
};
DcLimits dc_limits(const Circuit& circuit, const OpAmpModel& model);

struct BiasResult {
  AmbientRange range;             ///< C, the temperatures the band covers
  std::vector<NodeBias> nodes;    ///< node id k at index k - 1 (gnd left out)
  std::vector<OpAmpBias> opamps;  ///< in the order of the netlist
  std::vector<std::string> warnings;  ///< for people: saturation, unchecked rails
  /// Where the bands came from: a linear-time path (dc_cascade.hpp,
  /// dc_tree.hpp) or one solve per error; the same figures to rounding.
  BiasPath path = BiasPath::per_error;

  /// The bias of node id `node`; gnd is 0 V with no band.
  const NodeBias& node(int node) const;
};

/// The rails an op amp is checked against: rails= on the instance, else the
/// circuit's supply, else none.
std::optional<Rails> rails_for(const Circuit& circuit, const Element& opamp);

/// Throws SolveError naming the nodes when some node has no DC path to gnd, or
/// when the DC matrix is singular.
BiasResult run_bias(const Circuit& circuit, const BiasOptions& options = {});

class MnaSystem;

/// The real DC system Y(0) of a circuit, its pattern and symbolic analysis
/// built once and factored; restamp() takes new values on the same
/// structure (spread: one per draw) without a new pattern or analysis.
class DcSystem {
 public:
  /// Throws SolveError like run_bias. The circuit must outlive the system.
  explicit DcSystem(const Circuit& circuit, SolverKind kind = SolverKind::klu);
  ~DcSystem();
  DcSystem(const DcSystem&) = delete;
  DcSystem& operator=(const DcSystem&) = delete;

  /// The circuit's values have changed, not its structure (the elements,
  /// nodes, which op amps have rout, rin, fp2): restamp and refactor. Throws
  /// SolveError when the matrix is singular at the new values.
  void restamp();

  const Circuit& circuit() const;
  const MnaSystem& mna() const { return *mna_; }
  std::size_t size() const;
  SolverKind kind() const { return kind_; }
  /// The factored matrix's values in the pattern's CSC order.
  const double* values() const { return values_.data(); }
  /// `count` right-hand sides of size() values each, solved in place.
  void solve(std::vector<double>& block, int count) const;
  /// How many times restamp() has run: a copy factored at an earlier count
  /// (a bias worker's) is out of date.
  unsigned restamps() const { return restamps_; }

  /// What run_bias works in besides its result, kept for its next run on
  /// this system (one run at a time per system, as the factors also hold
  /// KLU's solve workspace).
  struct Scratch;
  Scratch& scratch() const;

 private:
  void factor();
  mutable std::unique_ptr<Scratch> scratch_;
  unsigned restamps_ = 0;
  std::unique_ptr<MnaSystem> mna_;
  std::unique_ptr<RealSparseLu> lu_;
  std::vector<double> values_;  // the factored matrix: the solution check reads it
  SolverKind kind_;
};

/// run_bias on a system already built (and restamped to the circuit's values),
/// on `threads` workers (0: one per core).
BiasResult run_bias(const DcSystem& dc, int threads = 1);
/// The same into `result`, its tables assigned in place: a run on a result
/// and a system that served a run before allocates nothing but the text of
/// warnings (and a contributor's name longer than the string whose storage
/// it takes over).
/// `cascade` as BiasOptions::cascade.
void run_bias(const DcSystem& dc, int threads, BiasResult& result, bool cascade = true, bool tree = true);

}  // namespace tacet
