#pragma once
// The block upper triangular form (BTF) of a square sparse pattern: a
// maximum matching puts a nonzero on every diagonal position, then the
// strongly connected components of the matched graph are the diagonal blocks
// (Duff and Reid, ACM TOMS 4, 1978; SuiteSparse's btf_order, which KLU uses
// for the same permutation). Block b's rows read only its own columns and
// those of blocks after it: in a circuit, a stage reads what feeds it, and a
// solution with right-hand sides in block b alone is zero in every block
// after b. Used where a whole-matrix solve would do far more than asked: the
// bias cascade (analysis/dc_cascade.hpp) and the loop gain of one op amp.

#include <optional>
#include <vector>

#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

struct BlockForm {
  struct Block {
    int first = 0, size = 0;                 // positions first .. first + size of the permuted matrix
    int entries_begin = 0, entries_end = 0;  // its own entries in `entries`
  };
  /// An entry of a diagonal block: local row and column, position in the CSC values.
  struct Entry {
    int row, col, at;
  };
  /// An entry of block `block`'s rows in column `unknown` of a later block
  /// (local row, position in the CSC values).
  struct Read {
    int block, unknown, row, at;
  };
  std::vector<Block> blocks;
  std::vector<Entry> entries;  ///< grouped by block
  std::vector<Read> reads;     ///< sorted by block, then unknown
  /// Per column (unknown) and per row of the original matrix: its block and
  /// its place in it; row k and column k of a block are matched.
  std::vector<int> col_block, col_local, row_block, row_local;
  /// Per position of the permuted matrix: the original column there.
  std::vector<int> column_at;
};

/// The form of `pattern`; none when it is structurally singular (no perfect
/// matching) or empty.
std::optional<BlockForm> block_form(const CscPattern& pattern);

/// Only the permutation of that form, for a small dense matrix: the position
/// of each row (row_at) and column (col_at) in it, row and column k matched;
/// false when there is no perfect matching (structurally singular).
bool block_order(const CscPattern& pattern, std::vector<int>& row_at, std::vector<int>& col_at);

}  // namespace tacet
