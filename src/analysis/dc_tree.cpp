// The worst-case DC bands on a tree of blocks joined at single unknowns (dc_tree.hpp).

#include "tacet/analysis/dc_tree.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <utility>

#include "tacet/solve/block_form.hpp"
#include "tacet/solve/mna.hpp"

namespace tacet {
namespace {

// Groups of vertices, flat: group g is vertices[begin[g] .. begin[g + 1]).
struct Groups {
  std::vector<int> begin{0}, vertices;
  std::size_t size() const { return begin.size() - 1; }
  void close() { begin.push_back(static_cast<int>(vertices.size())); }
};

// The graph of the entries that are not zero at DC (a capacitor's are, at
// every draw), made symmetric, without its diagonal, as adjacency lists.
Groups symmetric_graph(const CscPattern& p, const std::vector<char>& live) {
  const auto n = static_cast<std::size_t>(p.n);
  std::vector<int> degree(n + 1, 0);
  for (std::size_t j = 0; j < n; ++j)
    for (int k = p.col_ptr[j]; k < p.col_ptr[j + 1]; ++k) {
      const auto i = static_cast<std::size_t>(p.row_index[static_cast<std::size_t>(k)]);
      if (i == j || !live[static_cast<std::size_t>(k)]) continue;
      ++degree[i + 1];
      ++degree[j + 1];
    }
  Groups g;
  g.begin.assign(n + 1, 0);
  for (std::size_t v = 0; v < n; ++v) g.begin[v + 1] = g.begin[v] + degree[v + 1];
  g.vertices.resize(static_cast<std::size_t>(g.begin[n]));
  std::vector<int> fill(g.begin.begin(), g.begin.end() - 1);
  for (std::size_t j = 0; j < n; ++j)
    for (int k = p.col_ptr[j]; k < p.col_ptr[j + 1]; ++k) {
      const auto i = static_cast<std::size_t>(p.row_index[static_cast<std::size_t>(k)]);
      if (i == j || !live[static_cast<std::size_t>(k)]) continue;
      g.vertices[static_cast<std::size_t>(fill[i]++)] = static_cast<int>(j);
      g.vertices[static_cast<std::size_t>(fill[j]++)] = static_cast<int>(i);
    }
  // Sorted and without repeats (an entry and its transpose give the edge twice).
  int out = 0;
  for (std::size_t v = 0; v < n; ++v) {
    const int first = g.begin[v], last = g.begin[v + 1];
    std::sort(g.vertices.begin() + first, g.vertices.begin() + last);
    g.begin[v] = out;
    for (int k = first; k < last; ++k)
      if (k == first || g.vertices[static_cast<std::size_t>(k)] != g.vertices[static_cast<std::size_t>(k) - 1])
        g.vertices[static_cast<std::size_t>(out++)] = g.vertices[static_cast<std::size_t>(k)];
  }
  g.begin[n] = out;
  g.vertices.resize(static_cast<std::size_t>(out));
  return g;
}

// The biconnected components' vertex sets (Hopcroft and Tarjan's depth-first
// search with a stack of vertices, without recursion: a chain of 100k stages
// is that deep). An isolated vertex is a component of its own.
Groups biconnected(const Groups& graph) {
  const std::size_t n = graph.size();
  std::vector<int> discovered(n, -1), low(n, 0), stack;
  struct Frame {
    int vertex, next, parent;
  };
  std::vector<Frame> frames;
  Groups out;
  int time = 0;
  for (std::size_t root = 0; root < n; ++root) {
    if (discovered[root] >= 0) continue;
    discovered[root] = low[root] = time++;
    if (graph.begin[root] == graph.begin[root + 1]) {
      out.vertices.push_back(static_cast<int>(root));
      out.close();
      continue;
    }
    stack.push_back(static_cast<int>(root));
    frames.push_back({static_cast<int>(root), graph.begin[root], -1});
    while (!frames.empty()) {
      Frame& f = frames.back();
      const auto v = static_cast<std::size_t>(f.vertex);
      if (f.next < graph.begin[v + 1]) {
        const int w = graph.vertices[static_cast<std::size_t>(f.next++)];
        const auto uw = static_cast<std::size_t>(w);
        if (discovered[uw] < 0) {
          discovered[uw] = low[uw] = time++;
          stack.push_back(w);
          frames.push_back({w, graph.begin[uw], static_cast<int>(v)});
        } else if (w != f.parent) {
          low[v] = std::min(low[v], discovered[uw]);
        }
        continue;
      }
      const int parent = f.parent;
      frames.pop_back();
      if (parent < 0) break;
      const auto up = static_cast<std::size_t>(parent);
      low[up] = std::min(low[up], low[v]);
      if (low[v] < discovered[up]) continue;
      while (true) {  // v's subtree down the stack, and the articulation point above it
        const int w = stack.back();
        stack.pop_back();
        out.vertices.push_back(w);
        if (w == static_cast<int>(v)) break;
      }
      out.vertices.push_back(parent);
      out.close();
    }
    stack.clear();
  }
  return out;
}

// Groups sharing single vertices, rooted: each group but the first of its
// connected part hangs on one vertex (its parent cut) of the group above it;
// every vertex is owned by the first group that reaches it. Parents come
// before children in `order`.
struct Rooted {
  Groups of_vertex;  // per vertex, the groups holding it
  std::vector<int> order, parent_cut, owner, depth;
};

Rooted rooted(const Groups& groups, std::size_t n) {
  Rooted r;
  std::vector<int> count(n + 1, 0);
  for (const int v : groups.vertices) ++count[static_cast<std::size_t>(v) + 1];
  r.of_vertex.begin.assign(n + 1, 0);
  for (std::size_t v = 0; v < n; ++v) r.of_vertex.begin[v + 1] = r.of_vertex.begin[v] + count[v + 1];
  r.of_vertex.vertices.resize(groups.vertices.size());
  std::vector<int> fill(r.of_vertex.begin.begin(), r.of_vertex.begin.end() - 1);
  for (std::size_t g = 0; g < groups.size(); ++g)
    for (int k = groups.begin[g]; k < groups.begin[g + 1]; ++k)
      r.of_vertex.vertices[static_cast<std::size_t>(fill[static_cast<std::size_t>(groups.vertices[static_cast<std::size_t>(k)])]++)] =
          static_cast<int>(g);
  const std::size_t ng = groups.size();
  r.parent_cut.assign(ng, -1);
  r.depth.assign(ng, 0);
  r.owner.assign(n, -1);
  std::vector<bool> seen(ng, false);
  r.order.reserve(ng);
  for (std::size_t s = 0; s < ng; ++s) {
    if (seen[s]) continue;
    seen[s] = true;
    std::size_t head = r.order.size();
    r.order.push_back(static_cast<int>(s));
    while (head < r.order.size()) {
      const auto g = static_cast<std::size_t>(r.order[head++]);
      for (int k = groups.begin[g]; k < groups.begin[g + 1]; ++k) {
        const auto v = static_cast<std::size_t>(groups.vertices[static_cast<std::size_t>(k)]);
        if (r.owner[v] >= 0) continue;  // g's parent cut
        r.owner[v] = static_cast<int>(g);
        for (int h = r.of_vertex.begin[v]; h < r.of_vertex.begin[v + 1]; ++h) {
          const auto x = static_cast<std::size_t>(r.of_vertex.vertices[static_cast<std::size_t>(h)]);
          if (seen[x]) continue;
          seen[x] = true;
          r.parent_cut[x] = static_cast<int>(v);
          r.depth[x] = r.depth[g] + 1;
          r.order.push_back(static_cast<int>(x));
        }
      }
    }
  }
  return r;
}

struct UnionFind {
  std::vector<int> parent;
  explicit UnionFind(std::size_t n) : parent(n) { std::iota(parent.begin(), parent.end(), 0); }
  int find(int x) {
    while (parent[static_cast<std::size_t>(x)] != x)
      x = parent[static_cast<std::size_t>(x)] = parent[static_cast<std::size_t>(parent[static_cast<std::size_t>(x)])];
    return x;
  }
  void unite(int a, int b) { parent[static_cast<std::size_t>(find(a))] = find(b); }
};

// The components on the tree path between two unknowns united, so that one
// block holds both; false when the path is longer than any block may be or
// the two are in parts the tree does not join.
bool unite_path(const Rooted& tree, std::size_t components, int a_unknown, int b_unknown, UnionFind& sets) {
  // Nodes: component c as c, cut vertex v as components + v; depth 2d, 2d + 1.
  const auto ng = static_cast<int>(components);
  auto start = [&](int v) {
    const auto u = static_cast<std::size_t>(v);
    const int held = tree.of_vertex.begin[u + 1] - tree.of_vertex.begin[u];
    return held > 1 ? ng + v : tree.of_vertex.vertices[static_cast<std::size_t>(tree.of_vertex.begin[u])];
  };
  auto depth = [&](int node) {
    return node < ng ? 2 * tree.depth[static_cast<std::size_t>(node)]
                     : 2 * tree.depth[static_cast<std::size_t>(tree.owner[static_cast<std::size_t>(node - ng)])] + 1;
  };
  auto parent = [&](int node) {
    if (node >= ng) return tree.owner[static_cast<std::size_t>(node - ng)];
    const int cut = tree.parent_cut[static_cast<std::size_t>(node)];
    return cut < 0 ? -1 : ng + cut;
  };
  int a = start(a_unknown), b = start(b_unknown);
  int first = -1;
  auto take = [&](int node) {
    if (node >= ng) return;
    if (first < 0) first = node;
    else sets.unite(node, first);
  };
  for (int steps = 0; a != b; ++steps) {
    if (steps > 4 * DcTree::kMostBlockUnknowns) return false;
    int& deeper = depth(a) >= depth(b) ? a : b;
    take(deeper);
    deeper = parent(deeper);
    if (deeper < 0) return false;
  }
  take(a);
  return true;
}

// The block triangular order (block_form.hpp) of the n x n pattern whose
// entries are `pairs` (column, row), in any order and with repeats; false:
// no perfect matching (structurally singular).
bool order_of(std::vector<std::pair<int, int>>& pairs, int n, CscPattern& pattern, std::vector<int>& row_at,
              std::vector<int>& col_at) {
  std::sort(pairs.begin(), pairs.end());
  pairs.erase(std::unique(pairs.begin(), pairs.end()), pairs.end());
  pattern.n = n;
  pattern.col_ptr.assign(static_cast<std::size_t>(n) + 1, 0);
  pattern.row_index.clear();
  for (const auto& [c, r] : pairs) {
    ++pattern.col_ptr[static_cast<std::size_t>(c) + 1];
    pattern.row_index.push_back(r);
  }
  for (int c = 0; c < n; ++c) pattern.col_ptr[static_cast<std::size_t>(c) + 1] += pattern.col_ptr[static_cast<std::size_t>(c)];
  return block_order(pattern, row_at, col_at);
}

// Whether the square matrix on `members` (local indices in `local`) has a
// structural perfect matching; `diagonal[k]`: a nonzero at (k, k) besides
// the pattern's (a Schur complement from a block below).
bool matched(const CscPattern& p, const std::vector<char>& live, const std::vector<int>& members,
             const std::vector<int>& local, const std::vector<char>& diagonal) {
  std::vector<std::pair<int, int>> pairs;
  for (std::size_t c = 0; c < members.size(); ++c) {
    const auto j = static_cast<std::size_t>(members[c]);
    if (diagonal[c]) pairs.push_back({static_cast<int>(c), static_cast<int>(c)});
    for (int k = p.col_ptr[j]; k < p.col_ptr[j + 1]; ++k) {
      const int r = local[static_cast<std::size_t>(p.row_index[static_cast<std::size_t>(k)])];
      if (r >= 0 && live[static_cast<std::size_t>(k)]) pairs.push_back({static_cast<int>(c), r});
    }
  }
  CscPattern pattern;
  std::vector<int> row_at, col_at;
  return order_of(pairs, static_cast<int>(members.size()), pattern, row_at, col_at);
}

}  // namespace

void DcTree::plan(const MnaSystem& mna, const double* values, const std::vector<CascadeError>& errors) {
  usable_ = false;
  planned_ = errors;
  blocks_.clear();
  lu_.reserve(kMostBlockUnknowns);
  for (auto* v : {&rhs_, &z_, &ordered_rhs_, &ordered_x_}) v->assign(static_cast<std::size_t>(kMostBlockUnknowns), 0.0);
  // A held cut whose current still moves what this block shows (an unloaded
  // controlled source's output, set through its branch row by the far side)
  // cannot pass zero for the far side: the blocks hanging on it join its
  // block, found by a trial run at these values, as the singular blocks are.
  forced_.clear();
  for (int trial = 0; trial <= kMostTrials; ++trial) {
    leaking_cut_ = -1;
    usable_ = plan_blocks(mna, values, errors) && plan_errors(mna, errors);
    if (!usable_ || run(values, errors) || leaking_cut_ < 0) return;
    const Cut& cut = cuts_[static_cast<std::size_t>(leaking_cut_)];
    for (int k = cut.children_begin; k < cut.children_end; ++k)
      forced_[static_cast<std::size_t>(group_of_block_[static_cast<std::size_t>(children_[static_cast<std::size_t>(k)])])] = 1;
  }
  usable_ = false;
}

// The blocks: biconnected components, united where an error or a node
// voltage needs two of them, then where a block's own unknowns cannot be
// solved apart from its parent cut; false: a block would pass the limit.
bool DcTree::plan_blocks(const MnaSystem& mna, const double* values, const std::vector<CascadeError>& errors) {
  const CscPattern& pattern = mna.pattern();
  const auto n = static_cast<std::size_t>(pattern.n);
  if (n == 0) return false;
  live_.assign(static_cast<std::size_t>(pattern.nonzeros()), 0);
  for (std::size_t k = 0; k < live_.size(); ++k) live_[k] = values[k] != 0;
  const Groups components = biconnected(symmetric_graph(pattern, live_));
  for (std::size_t c = 0; c < components.size(); ++c)
    if (components.begin[c + 1] - components.begin[c] > kMostBlockUnknowns) return false;

  // United along the tree wherever one error or one node voltage spans two.
  UnionFind sets(components.size());
  {
    const Rooted tree = rooted(components, n);
    for (const CascadeError& e : errors)
      for (int p = 1; p < e.part_count; ++p)
        if (!unite_path(tree, components.size(), e.parts[0].row, e.parts[static_cast<std::size_t>(p)].row, sets))
          return false;
    const std::size_t node_unknowns = mna.circuit().node_count() - 1;
    for (std::size_t k = 0; k < node_unknowns; ++k) {
      const auto terms = mna.voltage_terms(static_cast<int>(k) + 1);
      if (terms.count == 2 && !unite_path(tree, components.size(), terms.term[0].unknown, terms.term[1].unknown, sets))
        return false;
    }
  }
  Groups united;
  {
    std::vector<std::pair<int, int>> pairs;  // (set, vertex)
    pairs.reserve(components.vertices.size());
    for (std::size_t c = 0; c < components.size(); ++c)
      for (int k = components.begin[c]; k < components.begin[c + 1]; ++k)
        pairs.push_back({sets.find(static_cast<int>(c)), components.vertices[static_cast<std::size_t>(k)]});
    std::sort(pairs.begin(), pairs.end());
    pairs.erase(std::unique(pairs.begin(), pairs.end()), pairs.end());
    for (std::size_t k = 0; k < pairs.size(); ++k) {
      united.vertices.push_back(pairs[k].second);
      if (k + 1 == pairs.size() || pairs[k + 1].first != pairs[k].first) {
        if (united.vertices.size() - static_cast<std::size_t>(united.begin.back()) > kMostBlockUnknowns) return false;
        united.close();
      }
    }
  }
  const Rooted tree = rooted(united, n);
  const std::size_t ng = united.size();

  // The shape of the tree for a set of groups forced to join the block above.
  auto shape = [&](const std::vector<char>& forced, std::vector<int>& group_of_block) -> bool {
    blocks_.clear();
    group_of_block.clear();

    // From the leaves up: a block whose own unknowns have no structural
    // matching (counting the Schur complement a block hanging below adds at
    // its cut), or that `forced` names, cannot be eliminated onto its parent
    // cut, and joins its parent.
    std::vector<std::vector<int>> members(ng);
    for (std::size_t g = 0; g < ng; ++g)
      for (int k = united.begin[g]; k < united.begin[g + 1]; ++k) {
        const int v = united.vertices[static_cast<std::size_t>(k)];
        if (v != tree.parent_cut[g]) members[g].push_back(v);
      }
    // Per vertex, the groups hanging on it whose Schur complement there is
    // structurally nonzero: entries in both its row and its column (a stage
    // that only reads the cut, through an op amp's + pin, adds nothing).
    std::vector<std::vector<int>> hanging(n);
    {
      std::vector<int> group_of(n, -1);
      for (std::size_t g = 0; g < ng; ++g)
        for (const int v : members[g]) group_of[static_cast<std::size_t>(v)] = static_cast<int>(g);
      std::vector<char> in_row(ng, 0), in_column(ng, 0);
      for (std::size_t j = 0; j < n; ++j)
        for (int k = pattern.col_ptr[j]; k < pattern.col_ptr[j + 1]; ++k) {
          if (!live_[static_cast<std::size_t>(k)]) continue;
          const auto i = static_cast<std::size_t>(pattern.row_index[static_cast<std::size_t>(k)]);
          const int gi = group_of[i], gj = group_of[j];
          if (gj >= 0 && tree.parent_cut[static_cast<std::size_t>(gj)] == static_cast<int>(i)) in_row[static_cast<std::size_t>(gj)] = 1;
          if (gi >= 0 && tree.parent_cut[static_cast<std::size_t>(gi)] == static_cast<int>(j)) in_column[static_cast<std::size_t>(gi)] = 1;
        }
      for (std::size_t g = 0; g < ng; ++g)
        if (tree.parent_cut[g] >= 0 && in_row[g] && in_column[g])
          hanging[static_cast<std::size_t>(tree.parent_cut[g])].push_back(static_cast<int>(g));
    }
    UnionFind joined(ng);
    std::vector<int> local(n, -1);
    std::vector<char> diagonal;
    for (std::size_t i = ng; i-- > 0;) {
      const auto g = static_cast<std::size_t>(tree.order[i]);
      const std::vector<int>& own = members[g];
      diagonal.assign(own.size(), 0);
      for (std::size_t k = 0; k < own.size(); ++k) {
        local[static_cast<std::size_t>(own[k])] = static_cast<int>(k);
        for (const int x : hanging[static_cast<std::size_t>(own[k])])
          if (joined.find(x) != joined.find(static_cast<int>(g))) diagonal[k] = 1;
      }
      const bool ok = matched(pattern, live_, own, local, diagonal);
      for (const int v : own) local[static_cast<std::size_t>(v)] = -1;
      if (ok && !forced[g]) continue;
      if (tree.parent_cut[g] < 0) return false;  // singular
      const auto above = static_cast<std::size_t>(joined.find(tree.owner[static_cast<std::size_t>(tree.parent_cut[g])]));
      members[above].insert(members[above].end(), own.begin(), own.end());
      if (members[above].size() + 1 > kMostBlockUnknowns) return false;
      joined.parent[g] = static_cast<int>(above);
    }

    // The final blocks, parents first; their unknowns, cuts and entries.
    std::vector<int> block_of(ng, -1);
    for (const int g : tree.order)
      if (joined.find(g) == g) {
        block_of[static_cast<std::size_t>(g)] = static_cast<int>(blocks_.size());
        group_of_block.push_back(g);
        Block b;
        b.parent_cut = tree.parent_cut[static_cast<std::size_t>(g)];
        b.owned = static_cast<int>(members[static_cast<std::size_t>(g)].size());
        blocks_.push_back(b);
      }
    owner_.assign(n, -1);
    local_.assign(n, -1);
    for (std::size_t g = 0; g < ng; ++g) {
      if (block_of[g] < 0) continue;
      const std::vector<int>& own = members[g];
      for (std::size_t k = 0; k < own.size(); ++k) {
        owner_[static_cast<std::size_t>(own[k])] = block_of[g];
        local_[static_cast<std::size_t>(own[k])] = static_cast<int>(k);
      }
    }
    std::vector<std::vector<int>> owned_of(blocks_.size());
    for (std::size_t g = 0; g < ng; ++g)
      if (block_of[g] >= 0) owned_of[static_cast<std::size_t>(block_of[g])] = std::move(members[g]);

    cut_of_.assign(n, -1);
    cuts_.clear();
    std::vector<std::vector<int>> children_of_cut;
    for (std::size_t b = 0; b < blocks_.size(); ++b) {
      Block& block = blocks_[b];
      if (block.parent_cut < 0) continue;
      block.depth = blocks_[static_cast<std::size_t>(owner_[static_cast<std::size_t>(block.parent_cut)])].depth + 1;
      int& cut = cut_of_[static_cast<std::size_t>(block.parent_cut)];
      if (cut < 0) {
        cut = static_cast<int>(cuts_.size());
        Cut c;
        c.unknown = block.parent_cut;
        c.block = owner_[static_cast<std::size_t>(block.parent_cut)];
        c.local = local_[static_cast<std::size_t>(block.parent_cut)];
        const auto j = static_cast<std::size_t>(block.parent_cut);
        for (int k = pattern.col_ptr[j]; k < pattern.col_ptr[j + 1]; ++k)
          if (pattern.row_index[static_cast<std::size_t>(k)] == block.parent_cut && live_[static_cast<std::size_t>(k)])
            c.diagonal_at = k;
        cuts_.push_back(c);
        children_of_cut.emplace_back();
      }
      children_of_cut[static_cast<std::size_t>(cut)].push_back(static_cast<int>(b));
    }
    children_.clear();
    std::size_t most_children = 0;
    for (std::size_t c = 0; c < cuts_.size(); ++c) {
      cuts_[c].children_begin = static_cast<int>(children_.size());
      children_.insert(children_.end(), children_of_cut[c].begin(), children_of_cut[c].end());
      cuts_[c].children_end = static_cast<int>(children_.size());
      most_children = std::max(most_children, children_of_cut[c].size());
    }
    std::vector<std::vector<int>> cuts_of_block(blocks_.size());
    for (std::size_t c = 0; c < cuts_.size(); ++c) cuts_of_block[static_cast<std::size_t>(cuts_[c].block)].push_back(static_cast<int>(c));
    block_cuts_.clear();
    entries_.clear();
    int tau_at = 0;
    for (std::size_t b = 0; b < blocks_.size(); ++b) {
      Block& block = blocks_[b];
      block.cuts_begin = static_cast<int>(block_cuts_.size());
      const int first_slot = block.parent_cut >= 0 ? 1 : 0;
      for (std::size_t k = 0; k < cuts_of_block[b].size(); ++k) {
        cuts_[static_cast<std::size_t>(cuts_of_block[b][k])].slot = first_slot + static_cast<int>(k);
        block_cuts_.push_back(cuts_of_block[b][k]);
      }
      block.cuts_end = static_cast<int>(block_cuts_.size());
      block.tau_at = tau_at;
      tau_at += block.size() * (first_slot + block.cuts_end - block.cuts_begin);
      block.entries_begin = static_cast<int>(entries_.size());
      auto column = [&](int unknown, int col) {
        const auto j = static_cast<std::size_t>(unknown);
        for (int k = pattern.col_ptr[j]; k < pattern.col_ptr[j + 1]; ++k) {
          const int i = pattern.row_index[static_cast<std::size_t>(k)];
          const int row = local_in(b, i);
          if (!live_[static_cast<std::size_t>(k)]) continue;
          if (row < 0 || (row == block.owned && col == block.owned)) continue;  // the parent cut's diagonal is reduced
          entries_.push_back({row, col, k});
        }
      };
      for (int k = 0; k < block.owned; ++k) column(owned_of[b][static_cast<std::size_t>(k)], k);
      if (block.parent_cut >= 0) column(block.parent_cut, block.owned);
      block.entries_end = static_cast<int>(entries_.size());
    }
    // Which Schur complements are structurally there: a block's at its parent
    // cut when it has entries in both the cut's row and its column; the
    // owner's side at a cut likewise (its entries in the cut's row and column).
    for (std::size_t b = 0; b < blocks_.size(); ++b) {
      Block& block = blocks_[b];
      // Entries in local's row and in its column, off the diagonal, among the first `among` unknowns.
      auto touches = [&](int at, int among) {
        bool row = false, column = false;
        for (int i = block.entries_begin; i < block.entries_end; ++i) {
          const Entry& e = entries_[static_cast<std::size_t>(i)];
          row = row || (e.row == at && e.col != at && e.col < among);
          column = column || (e.col == at && e.row != at && e.row < among);
        }
        return row && column;
      };
      for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
        Cut& cut = cuts_[static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(i)])];
        cut.owner_reduces = touches(cut.local, block.size());
      }
      if (block.parent_cut < 0) continue;
      block.reduces = touches(block.owned, block.owned);
      if (block.reduces) ++cuts_[static_cast<std::size_t>(cut_of_[static_cast<std::size_t>(block.parent_cut)])].reducing;
    }
    tau_.assign(static_cast<std::size_t>(tau_at), 0.0);
    sigma_.assign(blocks_.size(), 0.0);
    parent_diagonal_.assign(blocks_.size(), 0.0);
    held_.assign(cuts_.size(), 0);
    up_.assign(blocks_.size(), DcSums{});
    in_.assign(blocks_.size(), DcSums{});
    below_.assign(cuts_.size(), DcSums{});
    scratch_.assign(most_children + 1, DcSums{});
    return true;
  };

  // A block whose own unknowns are singular at these values although
  // matched (a floating resistor: an op amp's rout between its output and
  // its internal node, hung on the gain row's unknown) joins the block above
  // too; a resistor network is singular at every value, so a plan made here
  // holds for every draw. Found by trial, leaves first; a block above one
  // that failed waits for the next trial.
  forced_.resize(ng, 0);
  std::vector<char>& forced = forced_;
  std::vector<int>& group_of_block = group_of_block_;
  for (int trial = 0;; ++trial) {
    if (!shape(forced, group_of_block)) return false;
    plan_orders(false);
    std::vector<char> waits(blocks_.size(), 0);
    bool failed = false;
    for (std::size_t b = blocks_.size(); b-- > 0;) {
      const int cut = blocks_[b].parent_cut;
      if (cut < 0) continue;
      const auto above = static_cast<std::size_t>(owner_[static_cast<std::size_t>(cut)]);
      if (waits[b]) {
        waits[above] = 1;
      } else if (unordered_[b] || !reduce_up(b, values)) {
        forced[static_cast<std::size_t>(group_of_block[b])] = 1;
        waits[above] = 1;
        failed = true;
      }
    }
    if (!failed) return plan_orders(true);
    if (trial == kMostTrials) return false;
  }
}

int DcTree::local_in(std::size_t block, int unknown) const {
  const auto u = static_cast<std::size_t>(unknown);
  if (owner_[u] == static_cast<int>(block)) return local_[u];
  return blocks_[block].parent_cut == unknown ? blocks_[block].owned : -1;
}

// Each error's block (one holding all its rows), its unit right-hand sides
// there, and the node voltages each block sums; false: an error or a
// voltage no block holds whole.
bool DcTree::plan_errors(const MnaSystem& mna, const std::vector<CascadeError>& errors) {
  auto holder = [&](const int* unknowns, int count) {
    for (int i = 0; i < count; ++i) {
      const int b = owner_[static_cast<std::size_t>(unknowns[i])];
      bool all = true;
      for (int k = 0; k < count && all; ++k) all = local_in(static_cast<std::size_t>(b), unknowns[k]) >= 0;
      if (all) return b;
    }
    return -1;
  };
  struct Part {
    int block, row;
    std::size_t error;
    double coefficient;
  };
  std::vector<Part> parts;
  home_.assign(errors.size(), -1);
  for (std::size_t e = 0; e < errors.size(); ++e) {
    const CascadeError& error = errors[e];
    if (error.part_count == 0) continue;
    int rows[2] = {error.parts[0].row, error.parts[1].row};
    const int b = holder(rows, error.part_count);
    if (b < 0) return false;
    home_[e] = b;
    for (int p = 0; p < error.part_count; ++p)
      parts.push_back({b, local_in(static_cast<std::size_t>(b), rows[p]), e, error.parts[static_cast<std::size_t>(p)].coefficient});
  }
  // Units: one per (block, row); the parts by block, then error.
  std::stable_sort(parts.begin(), parts.end(), [](const Part& x, const Part& y) {
    return x.block != y.block ? x.block < y.block : x.error < y.error;
  });
  units_.clear();
  homed_.clear();
  homed_parts_.clear();
  std::vector<int> unit_of_local(static_cast<std::size_t>(kMostBlockUnknowns), -1);
  int ell_at = 0;
  for (std::size_t k = 0; k < parts.size();) {
    const int b = parts[k].block;
    Block& block = blocks_[static_cast<std::size_t>(b)];
    block.units_begin = static_cast<int>(units_.size());
    block.homed_begin = static_cast<int>(homed_.size());
    std::fill(unit_of_local.begin(), unit_of_local.end(), -1);
    for (; k < parts.size() && parts[k].block == b; ++k) {
      int& unit = unit_of_local[static_cast<std::size_t>(parts[k].row)];
      if (unit < 0) {
        unit = static_cast<int>(units_.size());
        units_.push_back({parts[k].row, ell_at});
        ell_at += block.size();
      }
      if (homed_.empty() || homed_.back().error != parts[k].error || static_cast<int>(homed_.size()) == block.homed_begin)
        homed_.push_back({parts[k].error, static_cast<int>(homed_parts_.size()), 0});
      homed_parts_.push_back({unit, parts[k].coefficient});
      homed_.back().parts_end = static_cast<int>(homed_parts_.size());
    }
    block.units_end = static_cast<int>(units_.size());
    block.homed_end = static_cast<int>(homed_.size());
  }
  home_entry_.assign(errors.size(), -1);
  for (std::size_t h = 0; h < homed_.size(); ++h) home_entry_[homed_[h].error] = static_cast<int>(h);
  ell_.assign(static_cast<std::size_t>(ell_at), 0.0);

  // Node voltages, grouped by block.
  const std::size_t node_unknowns = mna.circuit().node_count() - 1;
  std::vector<std::pair<int, std::size_t>> by_block;
  for (std::size_t k = 0; k < node_unknowns; ++k) {
    const auto terms = mna.voltage_terms(static_cast<int>(k) + 1);
    if (terms.count == 0) continue;
    int unknowns[2] = {terms.term[0].unknown, terms.term[1].unknown};
    const int b = holder(unknowns, terms.count);
    if (b < 0) return false;
    by_block.push_back({b, k});
  }
  std::stable_sort(by_block.begin(), by_block.end(),
                   [](const auto& x, const auto& y) { return x.first < y.first; });
  observables_.clear();
  terms_.clear();
  node_observable_.assign(node_unknowns, -1);
  for (std::size_t i = 0; i < by_block.size(); ++i) {
    const auto [b, k] = by_block[i];
    Block& block = blocks_[static_cast<std::size_t>(b)];
    if (i == 0 || by_block[i - 1].first != b) block.observables_begin = static_cast<int>(observables_.size());
    const auto terms = mna.voltage_terms(static_cast<int>(k) + 1);
    Observable o;
    o.node = static_cast<int>(k);
    o.terms_begin = static_cast<int>(terms_.size());
    for (int t = 0; t < terms.count; ++t)
      terms_.push_back({local_in(static_cast<std::size_t>(b), terms.term[static_cast<std::size_t>(t)].unknown),
                        terms.term[static_cast<std::size_t>(t)].coefficient});
    o.terms_end = static_cast<int>(terms_.size());
    node_observable_[k] = static_cast<int>(observables_.size());
    observables_.push_back(o);
    block.observables_end = static_cast<int>(observables_.size());
  }
  sums_.assign(observables_.size(), DcSums{});
  return true;
}

// Variant v of block b's matrix: 0 its own unknowns (M), 1 all of them
// (L), 2 + k all but its k-th cut: whether the parent cut is in, which
// local unknown is left out (-1: none), and the order's size.
DcTree::Variant DcTree::variant(std::size_t b, int v) const {
  const Block& block = blocks_[b];
  Variant out;
  out.with_parent = v != kUp && block.parent_cut >= 0;
  out.skip = v >= kSkipFirst ? cuts_[static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(block.cuts_begin + v - kSkipFirst)])].local : -1;
  out.size = (out.with_parent ? block.size() : block.owned) - (out.skip >= 0 ? 1 : 0);
  out.order = orders_.data() + order_of_[static_cast<std::size_t>(block.orders_at + v)];
  return out;
}

// The parent cut's reduced diagonal A_pp - (the other sides' sigma) is
// structurally there: A_pp is, or the owner's side or a sibling reaches p
// both ways. Without it a block hung on a controlled source's current (an
// unloaded output) finds the source's node held.
bool DcTree::parent_diagonal_there(const Block& block) const {
  if (parent_held(block)) return true;  // its row is x_p = 0
  const Cut& cut = cuts_[static_cast<std::size_t>(cut_of_[static_cast<std::size_t>(block.parent_cut)])];
  return cut.diagonal_at >= 0 || cut.owner_reduces || cut.reducing - (block.reduces ? 1 : 0) > 0;
}

bool DcTree::parent_held(const Block& block) const {
  return block.parent_cut >= 0 && held_[static_cast<std::size_t>(cut_of_[static_cast<std::size_t>(block.parent_cut)])];
}

// Visits the variant's entries as (row, column, value position or -1 for a
// reduced diagonal) in its compact local indices: the block's entries, each
// cut's diagonal, and the parent cut's (alone in its row when held).
template <typename Visit>
void DcTree::for_entries(std::size_t b, const Variant& v, Visit&& visit) const {
  const Block& block = blocks_[b];
  const int full = v.with_parent ? block.size() : block.owned;
  const bool held = v.with_parent && parent_held(block);
  for (int i = block.entries_begin; i < block.entries_end; ++i) {
    const Entry& e = entries_[static_cast<std::size_t>(i)];
    if (e.row >= full || e.col >= full || e.row == v.skip || e.col == v.skip) continue;
    if (held && e.row == block.owned) continue;
    visit(v.at(e.row), v.at(e.col), e.at);
  }
  for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
    const Cut& cut = cuts_[static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(i)])];
    if (cut.local != v.skip && cut.reducing > 0) visit(v.at(cut.local), v.at(cut.local), -1);
  }
  if (v.with_parent && parent_diagonal_there(block)) visit(v.at(block.owned), v.at(block.owned), -1);
}

// The variant's matrix into the dense LU in its block triangular order:
// each cut's diagonal less the sigma of what hangs below it, the parent
// cut's the diagonal the other sides leave (or x_p = 0 when held).
void DcTree::fill(std::size_t b, const double* values, const Variant& v) {
  const Block& block = blocks_[b];
  const int n = v.size;
  const int* row_at = v.order;
  const int* col_at = v.order + n;
  double* a = lu_.matrix(n);
  for_entries(b, v, [&](int r, int c, int at) {
    if (at >= 0) a[row_at[r] * n + col_at[c]] = values[at];
  });
  for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
    const Cut& cut = cuts_[static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(i)])];
    if (cut.local == v.skip) continue;
    const int d = v.at(cut.local);
    for (int k = cut.children_begin; k < cut.children_end; ++k)
      a[row_at[d] * n + col_at[d]] -= sigma_[static_cast<std::size_t>(children_[static_cast<std::size_t>(k)])];
  }
  if (!v.with_parent) return;
  const int p = v.at(block.owned);
  a[row_at[p] * n + col_at[p]] = parent_held(block) ? 1.0 : parent_diagonal_[b];
}

// x from rhs (both in the variant's local indices) through its order.
bool DcTree::solve(const Variant& v, const double* rhs, double* x) {
  const int n = v.size;
  for (int i = 0; i < n; ++i) ordered_rhs_[static_cast<std::size_t>(v.order[i])] = rhs[i];
  if (!lu_.solve(ordered_rhs_.data(), ordered_x_.data())) return false;
  for (int j = 0; j < n; ++j) x[j] = ordered_x_[static_cast<std::size_t>(v.order[n + j])];
  return true;
}

// sigma = A_pU M^-1 A_Up, what the block and everything below it add to its
// parent cut's diagonal; and the proportions from that cut, -M^-1 A_Up.
bool DcTree::reduce_up(std::size_t b, const double* values) {
  const Block& block = blocks_[b];
  const Variant v = variant(b, kUp);
  fill(b, values, v);
  if (!lu_.factor()) return false;
  std::fill(rhs_.begin(), rhs_.begin() + block.owned, 0.0);
  for (int i = block.entries_begin; i < block.entries_end; ++i) {
    const Entry& e = entries_[static_cast<std::size_t>(i)];
    if (e.col == block.owned && e.row < block.owned) rhs_[static_cast<std::size_t>(e.row)] = values[e.at];
  }
  if (!solve(v, rhs_.data(), z_.data())) return false;
  double sigma = 0;
  for (int i = block.entries_begin; i < block.entries_end; ++i) {
    const Entry& e = entries_[static_cast<std::size_t>(i)];
    if (e.row == block.owned && e.col < block.owned) sigma += values[e.at] * z_[static_cast<std::size_t>(e.col)];
  }
  double* t = tau_.data() + block.tau_at;  // slot 0
  for (int k = 0; k < block.owned; ++k) t[k] = -z_[static_cast<std::size_t>(k)];
  t[block.owned] = 1.0;
  sigma_[b] = sigma;
  return std::isfinite(sigma);
}

// Down from the block to what hangs on each of its cuts c: the Schur
// complement of this side at c, formed with c left out, which gives the
// proportions from c into the block too; each child's parent diagonal is
// A_cc less this side and its siblings, summed without taking any back out
// (a stage hung on its own virtual ground adds a large sigma there, and the
// diagonal the others leave is small). Then the errors homed here.
bool DcTree::solve_down(std::size_t b, const double* values) {
  const Block& block = blocks_[b];
  const int n = block.size();
  const bool held_parent = parent_held(block);
  for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
    const auto c = static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(i)]);
    const Cut& cut = cuts_[c];
    double* t = tau_.data() + block.tau_at + cut.slot * n;
    double side = 0;
    if (held_[c]) {
      std::fill(t, t + n, 0.0);  // nothing from below passes a held cut
    } else {
      const Variant v = variant(b, kSkipFirst + i - block.cuts_begin);
      fill(b, values, v);
      if (!lu_.factor()) return false;
      std::fill(rhs_.begin(), rhs_.begin() + v.size, 0.0);
      for (int k = block.entries_begin; k < block.entries_end; ++k) {
        const Entry& e = entries_[static_cast<std::size_t>(k)];
        if (e.col != cut.local || e.row == cut.local || (held_parent && e.row == block.owned)) continue;
        rhs_[static_cast<std::size_t>(v.at(e.row))] = values[e.at];  // a held parent's row is x_p = 0
      }
      if (!solve(v, rhs_.data(), z_.data())) return false;
      for (int k = block.entries_begin; k < block.entries_end; ++k) {
        const Entry& e = entries_[static_cast<std::size_t>(k)];
        if (e.row == cut.local && e.col != cut.local) side += values[e.at] * z_[static_cast<std::size_t>(v.at(e.col))];
      }
      for (int k = 0; k < n; ++k) t[k] = k == cut.local ? 1.0 : -z_[static_cast<std::size_t>(v.at(k))];
      if (!std::isfinite(side)) return false;
    }
    // Children k: A_cc - side - (siblings before k) - (siblings after k).
    const int m = cut.children_end - cut.children_begin;
    const double diagonal = cut.diagonal_at >= 0 ? values[cut.diagonal_at] : 0.0;
    double after = 0;
    for (int k = m; k-- > 0;) {
      const auto child = static_cast<std::size_t>(children_[static_cast<std::size_t>(cut.children_begin + k)]);
      parent_diagonal_[child] = after;  // the siblings after it, for now
      after += sigma_[child];
    }
    double before = 0;
    for (int k = 0; k < m; ++k) {
      const auto child = static_cast<std::size_t>(children_[static_cast<std::size_t>(cut.children_begin + k)]);
      parent_diagonal_[child] = diagonal - side - (before + parent_diagonal_[child]);
      before += sigma_[child];
    }
  }
  bool any_held = false;
  for (int i = block.cuts_begin; i < block.cuts_end; ++i)
    any_held = any_held || held_[static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(i)])];
  if (block.units_end == block.units_begin && !any_held) return true;
  const Variant v = variant(b, kFull);
  fill(b, values, v);
  if (!lu_.factor()) return false;
  for (int i = block.cuts_begin; any_held && i < block.cuts_end; ++i) {
    const int c = block_cuts_[static_cast<std::size_t>(i)];
    if (held_[static_cast<std::size_t>(c)] && !held_shows_nothing(b, v, cuts_[static_cast<std::size_t>(c)].local)) {
      leaking_cut_ = c;
      return false;
    }
  }
  for (int u = block.units_begin; u < block.units_end; ++u) {
    const Unit& unit = units_[static_cast<std::size_t>(u)];
    double* x = ell_.data() + unit.ell_at;
    if (held_parent && unit.row == block.owned) {  // a current into a held cut moves nothing here
      std::fill(x, x + n, 0.0);
      continue;
    }
    std::fill(rhs_.begin(), rhs_.begin() + n, 0.0);
    rhs_[static_cast<std::size_t>(unit.row)] = 1.0;
    if (!solve(v, rhs_.data(), x)) return false;
  }
  return true;
}

// Each variant's block triangular order (block_form.hpp), so that the dense
// LU's diagonal preference follows a matching and the unknowns a right-hand
// side does not reach stay exact zeros; with `all` false only M's (what the
// elimination from the leaves needs). A cut the block's other unknowns have
// no matching without is held by them when the whole block has one (an
// ideal output, a source's node): by Cramer's rule (L^-1)_cc = det R /
// det L = 0, a current there does not move it, and nothing passes it.
// False: a block with no matching at all.
bool DcTree::plan_orders(bool all) {
  orders_.clear();
  order_of_.clear();
  unordered_.assign(blocks_.size(), 0);
  std::vector<std::pair<int, int>> pairs;
  CscPattern pattern;
  std::vector<int> row_at, col_at;
  auto order = [&](std::size_t b, const Variant& v) {
    pairs.clear();
    for_entries(b, v, [&](int r, int c, int) { pairs.push_back({c, r}); });
    return order_of(pairs, v.size, pattern, row_at, col_at);
  };
  for (std::size_t b = 0; b < blocks_.size(); ++b) {
    Block& block = blocks_[b];
    const int variants = kSkipFirst + block.cuts_end - block.cuts_begin;
    block.orders_at = static_cast<int>(order_of_.size());
    for (int k = 0; k < variants; ++k) order_of_.push_back(static_cast<int>(orders_.size()));  // placeholders
    for (int k = 0; k < (all ? variants : 1); ++k) {
      order_of_[static_cast<std::size_t>(block.orders_at + k)] = static_cast<int>(orders_.size());
      Variant v = variant(b, k);
      const bool matched = order(b, v);
      if (k >= kSkipFirst) {
        held_[static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(block.cuts_begin + k - kSkipFirst)])] = !matched;
        if (!matched) std::iota(row_at.begin(), row_at.end(), 0), std::iota(col_at.begin(), col_at.end(), 0);
      } else if (!matched && k == kUp && block.parent_cut >= 0) {
        unordered_[b] = 1;
      } else if (!matched && k == kFull) {
        return false;
      }
      orders_.insert(orders_.end(), row_at.begin(), row_at.end());
      orders_.insert(orders_.end(), col_at.begin(), col_at.end());
    }
  }
  return true;
}

// Whether a current at held cut `local` (z = L^-1 e_c, z_c = 0) leaves
// every node voltage of the block, its other cuts and its parent cut where
// they were: then passing zero for the far side, as a held cut does, is
// exact. An ideal output's current moves only its own current unknown.
bool DcTree::held_shows_nothing(std::size_t b, const Variant& v, int local) {
  const Block& block = blocks_[b];
  const int n = v.size;
  std::fill(rhs_.begin(), rhs_.begin() + n, 0.0);
  rhs_[static_cast<std::size_t>(local)] = 1.0;
  if (!solve(v, rhs_.data(), z_.data())) return false;
  if (z_[static_cast<std::size_t>(local)] != 0) return false;  // not held after all
  auto moved = [&](int at) { return at != local && z_[static_cast<std::size_t>(at)] != 0; };
  for (int o = block.observables_begin; o < block.observables_end; ++o) {
    const Observable& obs = observables_[static_cast<std::size_t>(o)];
    for (int t = obs.terms_begin; t < obs.terms_end; ++t)
      if (moved(terms_[static_cast<std::size_t>(t)].local)) return false;
  }
  for (int i = block.cuts_begin; i < block.cuts_end; ++i)
    if (moved(cuts_[static_cast<std::size_t>(block_cuts_[static_cast<std::size_t>(i)])].local)) return false;
  return block.parent_cut < 0 || !moved(block.owned);
}

double DcTree::tau(const Block& block, int slot, int local) const {
  return tau_[static_cast<std::size_t>(block.tau_at + slot * block.size() + local)];
}

template <typename At>
void DcTree::own_sums_at(const Block& block, At&& at, DcSums& out) const {
  for (int h = block.homed_begin; h < block.homed_end; ++h) {
    const Homed& homed = homed_[static_cast<std::size_t>(h)];
    double v = 0;
    for (int p = homed.parts_begin; p < homed.parts_end; ++p) {
      const HomedPart& part = homed_parts_[static_cast<std::size_t>(p)];
      v += part.coefficient * at(ell_.data() + units_[static_cast<std::size_t>(part.unit)].ell_at);
    }
    out.add(homed.error, v, planned_);
  }
}

void DcTree::own_sums(const Block& block, int local, DcSums& out) const {
  own_sums_at(block, [local](const double* column) { return column[local]; }, out);
}

bool DcTree::run(const double* values, const std::vector<CascadeError>& errors) {
  if (!usable_) return false;
  for (std::size_t k = 0; k < live_.size(); ++k)
    if (!live_[k] && values[k] != 0) return false;  // an entry the plan left out is not zero now
  planned_ = errors;  // the same rows; the limits of this run
  const std::size_t nb = blocks_.size();
  for (std::size_t b = nb; b-- > 0;)
    if (blocks_[b].parent_cut >= 0 && !reduce_up(b, values)) return false;
  for (std::size_t b = 0; b < nb; ++b)
    if (!solve_down(b, values)) return false;

  // The sums from the leaves up: up_[b], the errors of b and below at b's parent cut.
  for (std::size_t b = nb; b-- > 0;) {
    const Block& block = blocks_[b];
    for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
      const int c = block_cuts_[static_cast<std::size_t>(i)];
      const Cut& cut = cuts_[static_cast<std::size_t>(c)];
      DcSums& below = below_[static_cast<std::size_t>(c)];
      below = DcSums{};
      for (int k = cut.children_begin; k < cut.children_end; ++k)
        below.add_scaled(up_[static_cast<std::size_t>(children_[static_cast<std::size_t>(k)])], 1.0, planned_);
    }
    if (block.parent_cut < 0) continue;
    DcSums& up = up_[b];
    up = DcSums{};
    own_sums(block, block.owned, up);
    for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
      const int c = block_cuts_[static_cast<std::size_t>(i)];
      up.add_scaled(below_[static_cast<std::size_t>(c)], tau(block, cuts_[static_cast<std::size_t>(c)].slot, block.owned), planned_);
    }
    if (!up.finite()) return false;
  }
  // From the root down: in_[b], every other error at b's parent cut; then
  // each node's sums from its own block's errors and every side's.
  for (std::size_t b = 0; b < nb; ++b) {
    const Block& block = blocks_[b];
    if (block.parent_cut < 0) in_[b] = DcSums{};
    auto from_sides = [&](auto&& proportion, int except, DcSums& out) {
      if (block.parent_cut >= 0) out.add_scaled(in_[b], proportion(0), planned_);
      for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
        const int c = block_cuts_[static_cast<std::size_t>(i)];
        if (c != except) out.add_scaled(below_[static_cast<std::size_t>(c)], proportion(cuts_[static_cast<std::size_t>(c)].slot), planned_);
      }
    };
    for (int i = block.cuts_begin; i < block.cuts_end; ++i) {
      const int c = block_cuts_[static_cast<std::size_t>(i)];
      const Cut& cut = cuts_[static_cast<std::size_t>(c)];
      DcSums side;  // at the cut: everything not below it
      own_sums(block, cut.local, side);
      from_sides([&](int slot) { return tau(block, slot, cut.local); }, c, side);
      // Each child: the side, and its siblings before (prefix) and after (suffix) it.
      const int m = cut.children_end - cut.children_begin;
      scratch_[static_cast<std::size_t>(m)] = DcSums{};
      for (int k = m; k-- > 0;) {
        scratch_[static_cast<std::size_t>(k)] = scratch_[static_cast<std::size_t>(k) + 1];
        scratch_[static_cast<std::size_t>(k)].add_scaled(up_[static_cast<std::size_t>(children_[static_cast<std::size_t>(cut.children_begin + k)])], 1.0, planned_);
      }
      for (int k = 0; k < m; ++k) {
        const auto child = static_cast<std::size_t>(children_[static_cast<std::size_t>(cut.children_begin + k)]);
        in_[child] = side;
        in_[child].add_scaled(scratch_[static_cast<std::size_t>(k) + 1], 1.0, planned_);
        side.add_scaled(up_[child], 1.0, planned_);
        if (!in_[child].finite()) return false;
      }
    }
    for (int o = block.observables_begin; o < block.observables_end; ++o) {
      const Observable& obs = observables_[static_cast<std::size_t>(o)];
      auto at = [&](const double* column) {
        double v = 0;
        for (int t = obs.terms_begin; t < obs.terms_end; ++t)
          v += terms_[static_cast<std::size_t>(t)].coefficient * column[terms_[static_cast<std::size_t>(t)].local];
        return v;
      };
      DcSums& s = sums_[static_cast<std::size_t>(o)];
      s = DcSums{};
      own_sums_at(block, at, s);
      from_sides([&](int slot) { return at(tau_.data() + block.tau_at + slot * block.size()); }, -1, s);
      if (!s.finite()) return false;
    }
  }
  return true;
}

double DcTree::worst(int unknown) const {
  const int o = node_observable_[static_cast<std::size_t>(unknown)];
  return o < 0 ? 0 : sums_[static_cast<std::size_t>(o)].worst;
}

double DcTree::squares(int unknown) const {
  const int o = node_observable_[static_cast<std::size_t>(unknown)];
  return o < 0 ? 0 : sums_[static_cast<std::size_t>(o)].squares;
}

void DcTree::largest(int unknown, std::size_t count, std::vector<CascadeShare>& out) const {
  out.clear();
  const int o = unknown < 0 ? -1 : node_observable_[static_cast<std::size_t>(unknown)];
  if (o < 0) return;
  const DcSums& s = sums_[static_cast<std::size_t>(o)];
  for (int i = 0; i < s.count && out.size() < count; ++i) out.push_back(s.top[static_cast<std::size_t>(i)]);
}

double DcTree::home_value(std::size_t error, int local) const {
  const int h = home_entry_[error];
  if (h < 0) return 0;
  const Homed& homed = homed_[static_cast<std::size_t>(h)];
  double v = 0;
  for (int p = homed.parts_begin; p < homed.parts_end; ++p) {
    const HomedPart& part = homed_parts_[static_cast<std::size_t>(p)];
    v += part.coefficient * ell_[static_cast<std::size_t>(units_[static_cast<std::size_t>(part.unit)].ell_at + local)];
  }
  return v;
}

// From the unknown's block to the error's, one cut at a time: the value at
// a block's unknown is its proportion from the cut toward the error times
// the value at that cut, found in the next block along.
bool DcTree::value(std::size_t error, int unknown, double& out) const {
  out = 0;
  const int home = home_[error];
  if (home < 0) return true;
  // The path in the tree of blocks and cuts: up from both ends to where they meet.
  const auto nb = static_cast<int>(blocks_.size());
  auto depth = [&](int node) {
    return node < nb ? 2 * blocks_[static_cast<std::size_t>(node)].depth
                     : 2 * blocks_[static_cast<std::size_t>(owner_[static_cast<std::size_t>(node - nb)])].depth + 1;
  };
  auto parent = [&](int node) {
    if (node >= nb) return owner_[static_cast<std::size_t>(node - nb)];
    const int cut = blocks_[static_cast<std::size_t>(node)].parent_cut;
    return cut < 0 ? -1 : nb + cut;
  };
  walk_from_.clear();
  walk_to_.clear();
  int a = owner_[static_cast<std::size_t>(unknown)], b = home;
  while (a != b) {
    if (walk_from_.size() + walk_to_.size() > kMostWalked) return false;
    if (depth(a) >= depth(b)) {
      walk_from_.push_back(a);
      a = parent(a);
    } else {
      walk_to_.push_back(b);
      b = parent(b);
    }
    if (a < 0 || b < 0) return true;  // apart: the error does not reach it
  }
  walk_from_.push_back(a);
  walk_from_.insert(walk_from_.end(), walk_to_.rbegin(), walk_to_.rend());
  // walk_from_: block, cut, block, ..., the error's block.
  double factor = 1;
  int local = local_[static_cast<std::size_t>(unknown)];
  for (std::size_t i = 0; i + 1 < walk_from_.size(); i += 2) {
    const auto here = static_cast<std::size_t>(walk_from_[i]);
    const int cut = walk_from_[i + 1] - nb;
    const Block& block = blocks_[here];
    const int slot = block.parent_cut == cut ? 0 : cuts_[static_cast<std::size_t>(cut_of_[static_cast<std::size_t>(cut)])].slot;
    factor *= tau(block, slot, local);
    if (factor == 0) return true;
    local = local_in(static_cast<std::size_t>(walk_from_[i + 2]), cut);
  }
  out = factor * home_value(error, local);
  return true;
}

}  // namespace tacet
