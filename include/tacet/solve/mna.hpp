#pragma once
// Modified nodal analysis: the linear system Y(s) x = b of a flat circuit.
//
// Unknowns, in this order:
//   node voltages, V, one per node except gnd (node id k -> unknown k - 1);
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
  /// Writes the real matrix Y(0) (the DC system) into `values`.
  void assemble_dc(double* values) const;
  /// Writes b (size() entries) from every source's AC phasor.
  void excitation(std::complex<double>* rhs) const;

  /// Unknown of a node's voltage; -1 for gnd.
  int node_unknown(int node) const { return node - 1; }
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

  /// Position of entry (row, col) in the values array; -1 if not in the pattern.
  int slot(int row, int col) const;

 private:
  // Every stamp is real in powers of s: entry = c0 + c1 s + c2 s^2.
  struct Coefficients {
    double c0, c1, c2;
  };
  void number_unknowns();
  template <typename Visit>
  void for_each_term(Visit&& visit) const;
  void build_pattern();

  const Circuit* circuit_;
  CscPattern pattern_;
  std::vector<Coefficients> coefficients_;  // one per pattern entry
  std::vector<int> varying_;                // entries with c1 or c2 non-zero
  std::vector<int> branch_of_;              // per element
  std::vector<int> internal_of_;            // per element: internal node unknown or -1
  std::vector<std::size_t> owner_of_;       // per non-node unknown: element index
  int node_unknowns_ = 0;
};

}  // namespace tacet
