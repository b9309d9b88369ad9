// The block upper triangular form of a pattern (block_form.hpp).

#include "tacet/solve/block_form.hpp"

#include <btf.h>

#include <algorithm>

namespace tacet {

namespace {

// btf_order's permutation: the row (row_of) and column (col_of, possibly
// flipped) at each position, the blocks' bounds; the block count, 0 when
// there is no perfect matching.
int ordered(const CscPattern& pattern, std::vector<int>& row_of, std::vector<int>& col_of, std::vector<int>& bounds) {
  const int n = pattern.n;
  const auto un = static_cast<std::size_t>(n);
  row_of.resize(un), col_of.resize(un), bounds.resize(un + 1);
  std::vector<int> work(5 * un);
  double maxtrans_work = 0;
  int matched = 0;
  // btf_order does not write the pattern; its C interface is not const.
  const int count = btf_order(n, const_cast<int*>(pattern.col_ptr.data()), const_cast<int*>(pattern.row_index.data()),
                              0.0, &maxtrans_work, row_of.data(), col_of.data(), bounds.data(), &matched, work.data());
  return matched < n ? 0 : count;
}

}  // namespace

bool block_order(const CscPattern& pattern, std::vector<int>& row_at, std::vector<int>& col_at) {
  const auto un = static_cast<std::size_t>(pattern.n);
  row_at.resize(un), col_at.resize(un);
  if (un == 0) return true;
  std::vector<int> row_of, col_of, bounds;
  if (ordered(pattern, row_of, col_of, bounds) <= 0) return false;
  for (std::size_t k = 0; k < un; ++k) {
    row_at[static_cast<std::size_t>(row_of[k])] = static_cast<int>(k);
    col_at[static_cast<std::size_t>(BTF_UNFLIP(col_of[k]))] = static_cast<int>(k);
  }
  return true;
}

std::optional<BlockForm> block_form(const CscPattern& pattern) {
  const int n = pattern.n;
  if (n == 0) return std::nullopt;
  const auto un = static_cast<std::size_t>(n);
  std::vector<int> row_of, col_of, bounds;
  const int count = ordered(pattern, row_of, col_of, bounds);
  if (count <= 0) return std::nullopt;

  BlockForm form;
  const auto nb = static_cast<std::size_t>(count);
  form.blocks.resize(nb);
  form.col_block.assign(un, -1), form.col_local.assign(un, -1);
  form.row_block.assign(un, -1), form.row_local.assign(un, -1);
  form.column_at.resize(un);
  for (std::size_t b = 0; b < nb; ++b) {
    form.blocks[b].first = bounds[b];
    form.blocks[b].size = bounds[b + 1] - bounds[b];
    for (int k = bounds[b]; k < bounds[b + 1]; ++k) {
      const auto col = static_cast<std::size_t>(BTF_UNFLIP(col_of[static_cast<std::size_t>(k)]));
      const auto row = static_cast<std::size_t>(row_of[static_cast<std::size_t>(k)]);
      form.col_block[col] = form.row_block[row] = static_cast<int>(b);
      form.col_local[col] = form.row_local[row] = k - bounds[b];
      form.column_at[static_cast<std::size_t>(k)] = static_cast<int>(col);
    }
  }
  // The blocks' own entries grouped by block (counted, then placed), and the reads.
  std::vector<int> start(nb + 1, 0);
  for (int c = 0; c < n; ++c)
    for (int k = pattern.col_ptr[static_cast<std::size_t>(c)]; k < pattern.col_ptr[static_cast<std::size_t>(c) + 1]; ++k) {
      const int br = form.row_block[static_cast<std::size_t>(pattern.row_index[static_cast<std::size_t>(k)])];
      if (br == form.col_block[static_cast<std::size_t>(c)]) ++start[static_cast<std::size_t>(br) + 1];
    }
  for (std::size_t b = 0; b < nb; ++b) start[b + 1] += start[b];
  form.entries.resize(static_cast<std::size_t>(start[nb]));
  std::vector<int> fill(start.begin(), start.end() - 1);
  for (int c = 0; c < n; ++c)
    for (int k = pattern.col_ptr[static_cast<std::size_t>(c)]; k < pattern.col_ptr[static_cast<std::size_t>(c) + 1]; ++k) {
      const auto r = static_cast<std::size_t>(pattern.row_index[static_cast<std::size_t>(k)]);
      const int br = form.row_block[r];
      if (br == form.col_block[static_cast<std::size_t>(c)])
        form.entries[static_cast<std::size_t>(fill[static_cast<std::size_t>(br)]++)] = {
            form.row_local[r], form.col_local[static_cast<std::size_t>(c)], k};
      else
        form.reads.push_back({br, c, form.row_local[r], k});
    }
  for (std::size_t b = 0; b < nb; ++b) form.blocks[b].entries_begin = start[b], form.blocks[b].entries_end = start[b + 1];
  std::sort(form.reads.begin(), form.reads.end(), [](const BlockForm::Read& x, const BlockForm::Read& y) {
    return x.block != y.block ? x.block < y.block : x.unknown < y.unknown;
  });
  return form;
}

}  // namespace tacet
