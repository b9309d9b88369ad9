#pragma once
// Modified nodal analysis: the linear system Y(s) x = b of a flat circuit.
//
// Unknowns, in this order:
//   node voltages, V, one per node except gnd (node id k -> unknown k - 1),
//     except in a group of nodes joined by stiff parts (below): there one node
//     (the group's root) keeps its voltage and every other node's unknown is
//     its difference from the root, delta = v_root - v_node;
//   internal nodes, V, one per op amp with rout > 0 (the gain source's node);
//   branch currents, A, one per vsource, inductor, vcvs and op-amp output,
//     each flowing from the element's first terminal through it to its second
//     (for an op amp: from its gain-source node through the source to gnd).
//
// Rows: Kirchhoff's current law at each node (sum of currents leaving = 0),
// then one constitutive equation per branch:
//   vsource  v+ - v- = V
//   inductor va - vb - s L i = 0
//   vcvs     vo+ - vo- - gain (vc+ - vc-) = 0
//   op amp   v_x / A(s) - d(s) = 0,  A(s) = aol / ((1 + s/wp)(1 + s/wp2)),
//            wp = 2 pi gbw / aol, wp2 = 2 pi fp2 (factor absent when fp2 = 0);
//            v_x is the output pin (rout = 0) or the internal node (rout > 0).
//            Dividing by A keeps the row well scaled for aol up to 1e9 and more.
//            d(s) = v+ + ((v+ + v-)/2)/CMRR(s) - v-: the common-mode error is
//            an input-referred voltage in series with the + input, with
//            1/CMRR(s) = (1 + s/wc)/cmrr, wc = 2 pi fcmrr (no s term without
//            fcmrr; no error at all without cmrr), so d = v+ - v- + k(s)(v+ + v-)
//            with k(s) = common_mode_feedthrough(model, s).
//            cin_diff stamps a capacitor between the inputs, cin_cm one from
//            each input to gnd; rin a resistor between the inputs.
// Stiff parts: a resistor (capacitor) between two nodes whose conductance
// (capacitance) is more than kStiffRatio times the sum of the small ones of
// its kind at each of its nodes would, stamped on node voltages, be summed
// with its neighbours in one entry, where 1e6 + 1e-12 is 1e6: a 1 Tohm -
// 1 uohm - 1 Tohm divider would be singular. Its nodes are written as a root
// voltage and small differences instead, and the part stamps only on the
// differences, so no entry sums values that far apart and the small voltage
// across it is an unknown of its own, exact to the last digit. Rows stay
// Kirchhoff's law at each node; only what a node's column means changes. Read
// node voltages with node_voltage() or voltage_terms(), never as
// x[node_unknown(node)].
//
// Every matrix entry is a polynomial c0 + c1 s + c2 s^2 of the Laplace
// variable s = j 2 pi f, so the pattern and its coefficients are computed once
// and assemble() only evaluates them: no allocation, no search per point.

#include <array>
#include <complex>
#include <cstddef>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

/// Which analysis the structural checks serve. DC: capacitors open, inductors short.
enum class AnalysisKind { ac, dc };

/// Throws SolveError when the circuit has no unique solution by its topology:
/// (a) nodes with no path to gnd through conducting elements (the message names
/// them; R, C (not at DC), L, vsource, vcvs output, op-amp output to gnd, rin;
/// a vccs output only when wired across its own control pair, since a
/// current source fixes no voltage), (b) a loop of voltage-defining branches (vsource, vcvs output, op-amp
/// output with rout = 0; at DC also inductors), naming the elements of the loop.
void check_solvable(const Circuit& circuit, AnalysisKind kind);

class MnaSystem;

/// Which number of an element a Parameter is: its main value (ohm, farad,
/// henry, V/V, siemens) or an entry of an op amp's model (that instance's
/// copy alone: two op amps of one model have their own gbw each).
enum class ParameterKey { value, gbw, aol, fp2, rout, rin };
/// "value", "gbw", "aol", "fp2", "rout", "rin": the model keys as written.
const char* to_string(ParameterKey key);

/// A number the matrix Y(s) depends on.
struct Parameter {
  std::size_t element;  ///< index into Circuit::elements
  ParameterKey key;
  double value;         ///< SI, as the circuit holds it
};

/// k(s) = (1 + s/(2 pi fcmrr)) / (2 cmrr): how much of v+ + v- the op amp's
/// gain source sees on top of v+ - v- (0 without cmrr).
std::complex<double> common_mode_feedthrough(const OpAmpModel& model, std::complex<double> s);

/// The SolveError for a matrix found singular at f (Hz; 0 reads "at DC"):
/// names the unknown of the singular column when the factorisation knows it.
[[noreturn]] void throw_singular(const MnaSystem& mna, int column, double f);

class MnaSystem {
 public:
  /// Runs check_solvable(circuit, AnalysisKind::ac), then builds the pattern.
  /// The circuit must outlive the system.
  explicit MnaSystem(const Circuit& circuit);
  /// The same, with the structural checks of `kind` (dc: capacitors open,
  /// inductors short), for analyses that solve only at s = 0.
  MnaSystem(const Circuit& circuit, AnalysisKind kind);

  int size() const { return pattern_.n; }
  const CscPattern& pattern() const { return pattern_; }
  const Circuit& circuit() const { return *circuit_; }

  /// Writes the matrix Y(s) into `values` (pattern().nonzeros() entries, CSC order).
  void assemble(std::complex<double> s, std::complex<double>* values) const;
  /// Rewrites only the entries that depend on s (capacitors, inductors, op-amp
  /// gain rows); `values` must hold an earlier assemble() of this system. Most
  /// entries of a circuit matrix are conductances, so a sweep that keeps its
  /// values array pays for the few that change.
  void assemble_varying(std::complex<double> s, std::complex<double>* values) const;
  /// Recomputes every entry's coefficients from the circuit's values as they
  /// are now, on the same pattern: no allocation, no sorting. For analyses
  /// that change element values or model parameters between solves (spread);
  /// the circuit's structure (its elements, nodes, which op amps have rout,
  /// rin or fp2) must be the one the system was built from.
  void restamp();
  /// Writes the real matrix Y(0) (the DC system) into `values`.
  void assemble_dc(double* values) const;
  /// Writes b (size() entries) from every source's AC phasor.
  void excitation(std::complex<double>* rhs) const;
  /// Adds one source's drive with the given phasor to b (V for a vsource, A
  /// for an isource; nothing for an element that is no source).
  void add_excitation(std::size_t element, std::complex<double> phasor,
                      std::complex<double>* rhs) const;

  /// The row of a node's Kirchhoff equation (inject a current there), which
  /// is also the unknown of its voltage unless the node sits in a stiff
  /// group; -1 for gnd.
  int node_unknown(int node) const { return node - 1; }
  /// A node's voltage as at most two terms c * x[unknown] (none for gnd).
  struct VoltageTerm {
    int unknown;
    double coefficient;
  };
  struct VoltageTerms {
    std::array<VoltageTerm, 2> term{};
    int count = 0;
  };
  VoltageTerms voltage_terms(int node) const;
  /// Voltage of the node whose unknown (row) is `unknown` in a solution x.
  template <typename T>
  T voltage_at_unknown(const T* x, int unknown) const {
    if (unknown < 0) return T{};
    const int root = unknown < node_unknowns_ ? root_of_[static_cast<std::size_t>(unknown)] : -1;
    return root < 0 ? x[unknown] : x[root] - x[unknown];
  }
  /// Voltage of node id `node` in a solution x (0 for gnd).
  template <typename T>
  T node_voltage(const T* x, int node) const {
    return voltage_at_unknown(x, node_unknown(node));
  }
  /// How many parts were found stiff (for tests and the docs).
  int stiff_parts() const { return stiff_parts_; }
  /// Branch current unknown of an element; -1 if it has none.
  int branch_unknown(std::size_t element) const { return branch_of_[element]; }
  /// Row of an op amp's gain equation (its branch unknown's row); -1 if not an
  /// op amp. A voltage e in series with the + input enters as rhs[row] += e.
  int opamp_gain_row(std::size_t element) const;
  /// Unknown of the voltage an op amp's gain source sets (its internal node
  /// when rout > 0, else its output pin); -1 if not an op amp.
  int opamp_source_unknown(std::size_t element) const;
  /// For people: "node out", "current in V1", "internal node of U1".
  std::string unknown_name(int unknown) const;

  /// One matrix entry as the polynomial c0 + c1 s + c2 s^2 it is.
  struct EntryPolynomial {
    int row, col;
    double c0, c1, c2;
  };
  /// Every pattern entry (CSC order), for analyses that need the matrices
  /// themselves rather than their value at one s (poles: G, C and the s^2 part).
  std::vector<EntryPolynomial> polynomials() const;

  /// Every number Y(s) depends on, in element order: the main value of each
  /// resistor, capacitor, inductor, vcvs and vccs; per op amp its gbw and aol,
  /// and fp2, rout and rin where the model sets them (a zero there means "no
  /// second pole", "no output resistance", "open input": no value to vary).
  /// Sources have none: their phasors are the excitation, not the matrix.
  std::vector<Parameter> parameters() const;
  /// dY/dx for x = p, as polynomials in s (entries whose derivative is zero
  /// left out), into `out` (cleared first; its capacity reused). Computed by
  /// forward-mode differentiation of the same stamp code that builds Y, so
  /// the two cannot disagree; O(1) entries per parameter.
  void derivative(const Parameter& p, std::vector<EntryPolynomial>& out) const;

  /// Position of entry (row, col) in the values array; -1 if not in the pattern.
  int slot(int row, int col) const;
  /// The entry at position `at` of the values array at s, as assemble()
  /// writes it: for analyses that need a few entries, not the whole matrix.
  std::complex<double> entry(int at, std::complex<double> s) const {
    const Coefficients& c = coefficients_[static_cast<std::size_t>(at)];
    return c.c0 + s * (c.c1 + s * c.c2);
  }

 private:
  // Every stamp is real in powers of s: entry = c0 + c1 s + c2 s^2.
  struct Coefficients {
    double c0, c1, c2;
  };
  void number_unknowns();
  template <typename Visit>
  void for_each_term(Visit&& visit) const;
  void build_pattern();
  void group_stiff_nodes();
  template <typename Place>
  void on_columns(std::size_t element, int col, Place&& place) const;

  const Circuit* circuit_;
  CscPattern pattern_;
  std::vector<Coefficients> coefficients_;  // one per pattern entry
  std::vector<int> varying_;                // entries with a term whose c1 or c2 is non-zero
  std::vector<int> term_slot_;              // per stamp term, in for_each_term order: its entry
  std::vector<int> branch_of_;              // per element
  std::vector<int> internal_of_;            // per element: internal node unknown or -1
  std::vector<std::size_t> owner_of_;       // per non-node unknown: element index
  std::vector<int> root_of_;                // per node unknown: its group root's unknown, or -1
  std::vector<bool> stiff_;                 // per element: stamped on differences
  int node_unknowns_ = 0;
  int stiff_parts_ = 0;
};

}  // namespace tacet
