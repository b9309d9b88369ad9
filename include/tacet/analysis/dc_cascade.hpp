#pragma once
// The worst-case DC bands of a cascade in time linear in its size.
//
// A node's band is worst_v = sum_e |S_ve| limit_e over every DC error e, and
// one solve per error gives every S_ve: O(nodes x errors), quadratic on a
// chain of stages where every error reaches every later node. A cascade has
// more structure than the sums use. Permuted to block upper triangular form
// (BTF: a maximum matching, then the strongly connected components; Duff and
// Reid, ACM TOMS 4, 1978; SuiteSparse's btf_order), the DC system is a
// sequence of diagonal blocks A_jj, each reading the blocks upstream of it
// through off-diagonal entries. When block j reads one unknown u from
// upstream (a stage fed from the one output before it: an op amp's + input
// draws no signal current, so the stage does not load what feeds it), every
// upstream error reaches j through u alone:
//
//   x_j = t_j x_u + (the errors with a right-hand side in j),  A_jj t_j = -A_ju,
//
// so for an error e with no right-hand side in j, S_ve = tau_v S_ue with one
// number tau_v per node, and its share of the band scales with it:
//
//   sum_e |S_ve| limit_e = |tau_v| sum_e |S_ue| limit_e,   (and squared for rss)
//
// and the largest contributors at v are those at u, in the same order. The
// sums over u are carried down the cascade instead of re-summed per node.
// An error with right-hand sides in two blocks (an op amp's ios and ib: a
// current at each input pin, the + pin fed from the stage before) is kept
// apart from the sums, with its value at every node, from its first block
// down to its last, where it joins them: no term is ever taken back out of a
// sum. A block may read more unknowns than u when no error has joined the
// sums at them yet (an inverting stage's + pin on its own resistor to gnd,
// holding only that op amp's pin currents): their errors are all kept apart,
// and add in with the t of each.
//
// Every block is solved densely (solve/dense_lu.hpp: rows scaled, pivots
// kept on BTF's diagonal while they are large enough) and each of its solves
// is measured with the componentwise backward error (backward_error.hpp)
// under the thresholds of every other solve, refined when poor. Only the blocks some node voltage
// depends on are solved (an op amp's output current may read what it likes).
//
// Stages that load each other both ways (an inverting stage on an output
// with rout; an op amp with rin) are one strongly connected block, solved
// whole. The circuit is no cascade, and usable() is false so that the caller
// solves one right-hand side per error as before, when a block reads two
// unknowns that both carry sums (a difference stage fed from two outputs), a
// block has more than kMostBlockUnknowns unknowns, a node voltage (a stiff
// part's root and difference) spans two blocks, or more than kMostKeptApart
// errors are kept apart at once. A run whose block solve cannot be trusted,
// or whose sums do not stay finite, returns false for the same fallback
// (which then names what went wrong).

#include <array>
#include <cstddef>
#include <vector>

#include "tacet/analysis/dc_shares.hpp"
#include "tacet/solve/block_form.hpp"
#include "tacet/solve/dense_lu.hpp"

namespace tacet {

class MnaSystem;

class DcCascade {
 public:
  static constexpr int kMostBlockUnknowns = 64;  // a block is solved densely: n^3
  static constexpr int kMostKeptApart = 64;      // errors between their blocks at once

  /// Plans on the system's structure and the errors' rows (no values).
  void plan(const MnaSystem& mna, const std::vector<CascadeError>& errors);
  /// Whether plan() saw these errors' rows and coefficients (spread's draws do).
  bool planned_for(const std::vector<CascadeError>& errors) const;
  /// The circuit is a cascade in the sense above.
  bool usable() const { return usable_; }
  /// The bands at `values` (the DC matrix in the pattern's CSC order); false:
  /// a block solve could not be trusted or a sum is not finite (the caller
  /// solves per error). Allocates nothing after the first run of a plan.
  bool run(const double* values, const std::vector<CascadeError>& errors);

  /// After a run: the band's sums at the node whose unknown is `unknown`.
  double worst(int unknown) const;
  double squares(int unknown) const;
  /// The `count` largest shares |S limit| at that node, largest first,
  /// earlier errors first among equals; zero shares left out.
  void largest(int unknown, std::size_t count, std::vector<CascadeShare>& out) const;
  /// Error `error`'s solution at `unknown` (the raw unknown, not a node
  /// voltage), summed over the paths from its right-hand sides; false when
  /// more than kMostWalked steps would be needed (the caller solves it).
  bool value(std::size_t error, int unknown, double& out) const;
  static constexpr std::size_t kMostWalked = 100000;

 private:
  struct Interface {  // an upstream unknown a block reads
    int unknown = -1, observable = -1, t_at = 0, couple_begin = 0, couple_end = 0;
  };
  struct Block {
    int size = 0;  // unknowns (form_ has where they are)
    int interfaces_begin = 0, interfaces_end = 0;
    int primary = -1;     // the interface that carries sums; -1: none does
    bool sums = false;    // some error has joined the sums here or upstream
    int units_begin = 0, units_end = 0, observables_begin = 0, observables_end = 0;
    int entries_begin = 0, entries_end = 0, pending = 0;
  };
  struct CoupleEntry {
    int row, at;
  };
  struct Unit {
    int block, row, ell_at;  // local row of its 1; its solution at ell_[ell_at ..]
  };
  struct Term {
    int col;  // local column
    double coefficient;
  };
  struct Observable {
    int block = 0, terms_begin = 0, terms_end = 0, pending_at = 0;
  };
  struct From {
    int interface, slot;  // the error's kept-apart value at that interface
  };
  struct Entry {
    std::size_t error;
    int froms_begin, froms_end, parts_begin, parts_end;
    int slot;  // kept apart here; -1: joins the sums here
  };
  struct EntryPart {
    int unit;
    double coefficient;
  };

  bool plan_blocks(const MnaSystem& mna);
  bool plan_entries(const std::vector<CascadeError>& errors);
  bool solve_block(std::size_t j, const double* values);
  template <typename Visit>
  void for_apart(int observable, Visit&& visit) const;
  double local_value(std::size_t error, int block, int local) const;

  bool usable_ = false;
  std::vector<CascadeError> planned_;
  std::vector<Block> blocks_;
  std::vector<Interface> interfaces_;
  BlockForm form_;
  std::vector<bool> needed_;                // per block: some node voltage depends on it
  std::vector<int> node_observable_;        // per node unknown; -1: none
  std::vector<CoupleEntry> couple_;
  std::vector<Unit> units_;
  std::vector<int> unit_of_row_;
  std::vector<Term> terms_;
  std::vector<Observable> observables_;
  std::vector<Entry> entries_;
  std::vector<From> froms_;
  std::vector<EntryPart> entry_parts_;
  std::vector<int> error_last_block_;  // per error: its most upstream block; -1: none solved
  // Per run.
  std::vector<double> t_, ell_, pending_;
  std::vector<DcSums> sums_;
  DenseBlockLu<double> lu_;
  std::vector<double> rhs_;
  mutable std::vector<std::pair<int, double>> walk_;  // value()'s work list
};

}  // namespace tacet
