#pragma once
// How far a computed solution is from solving its system: the componentwise
// relative backward error of Oettli and Prager (Numer. Math. 6, 1964; Higham,
// "Accuracy and Stability of Numerical Algorithms", 2nd ed. 2002, Thm 7.3):
//
//   omega = max_i |b - A x|_i / (|A| |x| + |b|)_i
//
// the smallest relative change of each entry of A and b for which x is exact.
// It is the measure that stays meaningful when rows differ by twenty decades
// (a 1 Tohm resistor's row beside a voltage source's), where a norm-wise
// residual would only see the largest rows. A row whose denominator is zero
// (every term zero) counts as exact when its residual is zero too.

#include <cmath>
#include <complex>
#include <limits>
#include <vector>

#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

/// r = b - A x (or b - A^T x when `transposed`) and the Oettli-Prager
/// denominator |A||x| + |b|, for a matrix in `pattern`'s CSC order.
template <typename T>
void residual(const CscPattern& pattern, const T* values, const T* x, const T* b, bool transposed,
              std::vector<T>& r, std::vector<double>& scale) {
  const auto n = static_cast<std::size_t>(pattern.n);
  r.assign(b, b + n);
  scale.resize(n);
  for (std::size_t i = 0; i < n; ++i) scale[i] = std::abs(b[i]);
  for (std::size_t col = 0; col < n; ++col)
    for (int k = pattern.col_ptr[col]; k < pattern.col_ptr[col + 1]; ++k) {
      const auto row = static_cast<std::size_t>(pattern.row_index[static_cast<std::size_t>(k)]);
      const T a = values[k];
      // A(row, col) x(col) feeds row `row`; in A^T it is x(row) feeding `col`.
      const std::size_t into = transposed ? col : row, from = transposed ? row : col;
      r[into] -= a * x[from];
      scale[into] += std::abs(a) * std::abs(x[from]);
    }
}

/// The largest ratio |r_i| / scale_i; infinity when some r_i is not finite.
template <typename T>
double componentwise_error(const std::vector<T>& r, const std::vector<double>& scale) {
  double worst = 0;
  for (std::size_t i = 0; i < r.size(); ++i) {
    const double num = std::abs(r[i]);
    if (!std::isfinite(num)) return std::numeric_limits<double>::infinity();
    if (num == 0) continue;
    worst = std::max(worst, scale[i] > 0 ? num / scale[i] : std::numeric_limits<double>::infinity());
  }
  return worst;
}

}  // namespace tacet
