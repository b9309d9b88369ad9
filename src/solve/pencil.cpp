// The sparse linear pencil G + s C of an MNA system: see pencil.hpp.

#include "tacet/solve/pencil.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

namespace tacet {
namespace {

struct Triplet {
  int row, col;
  double g, c;
};

// Counting sort by column, rows sorted within a column, duplicates summed.
void compress(int n, std::vector<Triplet>& triplets, SparsePencil& out) {
  std::vector<int> count(static_cast<std::size_t>(n) + 1, 0);
  for (const Triplet& t : triplets) ++count[static_cast<std::size_t>(t.col) + 1];
  std::partial_sum(count.begin(), count.end(), count.begin());
  std::vector<Triplet> by_column(triplets.size());
  {
    std::vector<int> fill(count.begin(), count.end() - 1);
    for (const Triplet& t : triplets) by_column[static_cast<std::size_t>(fill[t.col]++)] = t;
  }
  triplets.clear();
  triplets.shrink_to_fit();
  auto& p = out.pattern;
  p.n = n;
  p.col_ptr.assign(static_cast<std::size_t>(n) + 1, 0);
  p.row_index.clear();
  out.g.clear();
  out.c.clear();
  for (int col = 0; col < n; ++col) {
    const auto begin = by_column.begin() + count[static_cast<std::size_t>(col)];
    const auto end = by_column.begin() + count[static_cast<std::size_t>(col) + 1];
    std::sort(begin, end, [](const Triplet& a, const Triplet& b) { return a.row < b.row; });
    p.col_ptr[static_cast<std::size_t>(col)] = static_cast<int>(p.row_index.size());
    for (auto it = begin; it != end; ++it) {
      if (it != begin && it->row == (it - 1)->row) {
        out.g.back() += it->g;
        out.c.back() += it->c;
        continue;
      }
      p.row_index.push_back(it->row);
      out.g.push_back(it->g);
      out.c.push_back(it->c);
    }
  }
  p.col_ptr[static_cast<std::size_t>(n)] = static_cast<int>(p.row_index.size());
}

template <typename Value>
void multiply(const SparsePencil& p, const std::vector<double>& values, const Value* x,
              Value* out) {
  std::fill(out, out + p.pattern.n, Value{});
  for (int col = 0; col < p.pattern.n; ++col)
    for (int k = p.pattern.col_ptr[col]; k < p.pattern.col_ptr[col + 1]; ++k)
      out[p.pattern.row_index[static_cast<std::size_t>(k)]] +=
          values[static_cast<std::size_t>(k)] * x[col];
}

}  // namespace

bool SparsePencil::has_storage() const {
  return std::any_of(c.begin(), c.end(), [](double v) { return v != 0; });
}

void SparsePencil::assemble(double s, double* values) const {
  for (std::size_t k = 0; k < g.size(); ++k) values[k] = g[k] + s * c[k];
}

void SparsePencil::assemble(std::complex<double> s, std::complex<double>* values) const {
  for (std::size_t k = 0; k < g.size(); ++k) values[k] = g[k] + s * c[k];
}

void SparsePencil::multiply_g(const double* x, double* out) const { multiply(*this, g, x, out); }
void SparsePencil::multiply_c(const double* x, double* out) const { multiply(*this, c, x, out); }

SparsePencil sparse_pencil(const MnaSystem& mna) {
  const auto entries = mna.polynomials();
  int n = mna.size();
  std::vector<Triplet> triplets;
  triplets.reserve(entries.size() + 8);
  for (const auto& e : entries) {
    if (e.c2 == 0) {
      triplets.push_back({e.row, e.col, e.c0, e.c1});
      continue;
    }
    const double sigma = e.c1 != 0 ? std::abs(e.c1 / e.c2) : 1 / std::sqrt(std::abs(e.c2));
    const int w = n++;  // w = (s / sigma) x_col
    triplets.push_back({w, w, 1.0, 0.0});
    triplets.push_back({w, e.col, 0.0, -1 / sigma});
    triplets.push_back({e.row, e.col, e.c0, e.c1});
    triplets.push_back({e.row, w, 0.0, e.c2 * sigma});
  }
  SparsePencil pencil;
  pencil.mna_unknowns = mna.size();
  compress(n, triplets, pencil);
  return pencil;
}

}  // namespace tacet
