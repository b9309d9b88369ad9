#pragma once
// The worst-case DC bands in linear time when stages load each other both
// ways: a tree of small blocks joined at single unknowns.
//
// The cascade's path (dc_cascade.hpp) needs stages that read the one before
// without loading it. An inverting stage loads the output before it through
// its input resistor, and with rout that output moves with it: the whole
// chain is one strongly connected block, and one solve per error is
// quadratic. What such a chain still has is a separator of one unknown
// between neighbouring stages. In the graph of the DC matrix's pattern made
// symmetric, the biconnected components (Hopcroft and Tarjan, CACM 16, 1973)
// meet at articulation points and form a tree. Unknowns one of the errors or
// one node voltage needs together are merged into one block along the tree
// path between them, so the blocks form a tree of their own, and two of them
// share at most one unknown, a cut c.
//
// Because the rest of the circuit meets a block only in row c and column c,
// eliminating everything beyond c changes a single entry of the block's
// matrix, its diagonal at c, by a 1 x 1 Schur complement
//
//   sigma = A_cU M_U^-1 A_Uc    (M_U: the block's other unknowns, reduced alike),
//
// formed from the leaves to the root and then, from the root down, for the
// other side of every cut, with the cut left out of the block's matrix (never
// as a total less a part: a stage hung on its own virtual ground adds a large
// sigma there, and what the other sides leave is small). Each block's matrix
// L, so reduced on all sides, is the exact system of its unknowns: an error
// homed in the block is solved there, and an error beyond cut c reaches
// every unknown v of the block in the proportion tau_v of the solution for
// x_c = 1 with no source in the block. The sums of dc_shares.hpp are then
// passed along the tree both ways, like the cascade's but in two sweeps, with
// prefix and suffix combinations so that no sum is ever taken back out.
//
// A cut that the block's other unknowns cannot be solved without (an ideal
// output: its current unknown is in its node's row alone) is held: by
// Cramer's rule no current moves it, nothing from beyond passes it, and the
// blocks beyond see x_c = 0. A block whose own unknowns are singular without
// its parent cut (no structural matching, or singular at the plan's values:
// an op amp's rout between its output and its internal node, hung on the
// gain row) is merged into the block above it.
//
// Each block (at most kMostBlockUnknowns unknowns) is solved densely in its
// own block triangular order (block_form.hpp), so that unknowns a right-hand
// side does not reach stay exact zeros, and every solve is measured
// (dense_lu.hpp). plan() leaves usable() false, and the caller solves one
// right-hand side per error, when a block would be larger than the limit;
// run() returns false when a solve cannot be trusted or a sum is not finite.

#include <cstddef>
#include <vector>

#include "tacet/analysis/dc_shares.hpp"
#include "tacet/solve/dense_lu.hpp"

namespace tacet {

class MnaSystem;

class DcTree {
 public:
  static constexpr int kMostBlockUnknowns = 64;  // a block is solved densely: n^3
  static constexpr int kMostTrials = 16;         // of the plan's elimination, joining what failed

  /// Plans on the entries of the DC matrix that are not zero at `values`
  /// (a capacitor's are zero at every draw) and on the errors' rows.
  void plan(const MnaSystem& mna, const double* values, const std::vector<CascadeError>& errors);
  bool planned_for(const std::vector<CascadeError>& errors) const { return same_rows(errors, planned_); }
  bool usable() const { return usable_; }
  /// The bands at `values` (the DC matrix in the pattern's CSC order); false:
  /// a solve could not be trusted, a sum is not finite, or an entry the plan
  /// found zero is not. Allocates nothing after the first run of a plan.
  bool run(const double* values, const std::vector<CascadeError>& errors);

  /// After a run, at the node whose unknown is `unknown` (as DcCascade).
  double worst(int unknown) const;
  double squares(int unknown) const;
  void largest(int unknown, std::size_t count, std::vector<CascadeShare>& out) const;
  /// Error `error`'s solution at the raw `unknown`: the product of the
  /// proportions along the tree path from its block; false past kMostWalked
  /// blocks (the caller solves it).
  bool value(std::size_t error, int unknown, double& out) const;
  static constexpr std::size_t kMostWalked = 100000;


 private:
  struct Block {
    int parent_cut = -1;  // the unknown shared with the block above; -1: a root
    int owned = 0;        // unknowns of its own, local 0 .. owned - 1; parent_cut is local `owned`
    int depth = 0;
    int entries_begin = 0, entries_end = 0;
    int cuts_begin = 0, cuts_end = 0;  // its own unknowns that blocks below hang on
    int tau_at = 0;                    // per cut (parent first): size() proportions
    int units_begin = 0, units_end = 0, homed_begin = 0, homed_end = 0;
    int observables_begin = 0, observables_end = 0;
    int orders_at = 0;  // its variants' orders: order_of_[orders_at + v]
    bool reduces = false;  // entries in its parent cut's row and column: a sigma there
    int size() const { return owned + (parent_cut >= 0 ? 1 : 0); }
  };
  struct Entry {
    int row, col, at;  // local row and column, position in the CSC values
  };
  struct Cut {
    int unknown = -1, block = -1, local = -1;  // owned by `block` at `local`
    int slot = 0;                              // its proportions at tau_at + slot * size
    int diagonal_at = -1;                      // A_cc's position in the CSC values; -1: none
    int reducing = 0;                          // blocks below that add a Schur complement at it
    bool owner_reduces = false;                // the owner's side reaches it both ways
    int children_begin = 0, children_end = 0;  // blocks hanging on it, in `children_`
  };
  struct Unit {
    int row, ell_at;  // local row of its 1; its solution at ell_[ell_at ..]
  };
  struct Homed {
    std::size_t error;
    int parts_begin, parts_end;  // in `homed_parts_`
  };
  struct HomedPart {
    int unit;
    double coefficient;
  };
  struct Term {
    int local;
    double coefficient;
  };
  struct Observable {
    int node = -1;  // node unknown k
    int terms_begin = 0, terms_end = 0;
  };

  bool plan_blocks(const MnaSystem& mna, const double* values, const std::vector<CascadeError>& errors);
  bool plan_errors(const MnaSystem& mna, const std::vector<CascadeError>& errors);
  bool reduce_up(std::size_t b, const double* values);
  bool solve_down(std::size_t b, const double* values);
  // The dense matrices a block is solved with: its own unknowns (M, for the
  // elimination from the leaves), all of them (L), or all but one cut.
  static constexpr int kUp = 0, kFull = 1, kSkipFirst = 2;
  struct Variant {
    bool with_parent = false;
    int skip = -1, size = 0;
    const int* order = nullptr;  // row positions, then column positions
    /// A block-local index in this variant's compact indices.
    int at(int local) const { return local - (skip >= 0 && local > skip ? 1 : 0); }
  };
  Variant variant(std::size_t b, int v) const;
  bool parent_held(const Block& block) const;
  bool parent_diagonal_there(const Block& block) const;
  template <typename Visit>
  void for_entries(std::size_t b, const Variant& v, Visit&& visit) const;
  bool plan_orders(bool all);
  void fill(std::size_t b, const double* values, const Variant& v);
  bool solve(const Variant& v, const double* rhs, double* x);
  bool held_shows_nothing(std::size_t b, const Variant& v, int local);
  void own_sums(const Block& block, int local, DcSums& out) const;
  template <typename At>
  void own_sums_at(const Block& block, At&& at, DcSums& out) const;
  double tau(const Block& block, int slot, int local) const;
  int local_in(std::size_t block, int unknown) const;
  double home_value(std::size_t error, int local) const;

  bool usable_ = false;
  std::vector<CascadeError> planned_;
  std::vector<char> live_;  // per CSC entry: not zero when planned
  std::vector<Block> blocks_;  // parents before children
  std::vector<Entry> entries_;
  std::vector<Cut> cuts_;
  std::vector<int> block_cuts_;  // per block, its cuts (indices into cuts_)
  std::vector<int> children_;    // per cut, the blocks hanging on it
  std::vector<int> owner_, local_, cut_of_;
  std::vector<Unit> units_;
  std::vector<Homed> homed_;
  std::vector<HomedPart> homed_parts_;
  std::vector<int> home_;        // per error: its block; -1: no right-hand side
  std::vector<int> home_entry_;  // per error: its place in homed_; -1: none
  std::vector<Term> terms_;
  std::vector<Observable> observables_;
  std::vector<int> node_observable_;  // per node unknown k; -1: none
  // Per run.
  std::vector<double> sigma_, parent_diagonal_, tau_, ell_;  // per block, per block, per cut slot, per unit
  std::vector<char> held_;  // per cut: no current moves it (z_c = 0)
  std::vector<char> unordered_;  // per block: its M has no matching (plan_orders)
  std::vector<int> orders_, order_of_;
  std::vector<char> forced_;          // per group of the plan: joins the block above
  std::vector<int> group_of_block_;   // per block: its group
  int leaking_cut_ = -1;              // the held cut a run found moving what its block shows
  std::vector<DcSums> up_, in_, below_, sums_, scratch_;
  DenseBlockLu<double> lu_;
  std::vector<double> rhs_, z_, ordered_rhs_, ordered_x_;
  mutable std::vector<int> walk_from_, walk_to_;  // value()'s path
};

}  // namespace tacet
