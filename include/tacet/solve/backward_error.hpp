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

/// |z| as LAPACK's zgerfs measures it for the backward error: |Re z| + |Im z|
/// (within a factor sqrt 2 of the modulus, and no square root per entry).
inline double magnitude(double x) { return std::abs(x); }
inline double magnitude(std::complex<double> z) { return std::abs(z.real()) + std::abs(z.imag()); }

/// r = b - A x (or b - A^T x when `transposed`) and the Oettli-Prager
/// denominator |A||x| + |b|, for a matrix in `pattern`'s CSC order.
template <typename T>
void residual(const CscPattern& pattern, const T* values, const T* x, const T* b, bool transposed,
              std::vector<T>& r, std::vector<double>& scale) {
  const auto n = static_cast<std::size_t>(pattern.n);
  r.assign(b, b + n);
  scale.resize(n);
  for (std::size_t i = 0; i < n; ++i) scale[i] = magnitude(b[i]);
  for (std::size_t col = 0; col < n; ++col)
    for (int k = pattern.col_ptr[col]; k < pattern.col_ptr[col + 1]; ++k) {
      const auto row = static_cast<std::size_t>(pattern.row_index[static_cast<std::size_t>(k)]);
      const T a = values[k];
      // A(row, col) x(col) feeds row `row`; in A^T it is x(row) feeding `col`.
      const std::size_t into = transposed ? col : row, from = transposed ? row : col;
      r[into] -= a * x[from];
      scale[into] += magnitude(a) * magnitude(x[from]);
    }
}

/// The largest ratio |r_i| / scale_i; infinity when some r_i is not finite.
/// A row more than 200 decades below the largest (a long RC ladder far above
/// its corner attenuates by 1e-300 and its last node voltages underflow) has
/// no digits left to be wrong in: its ratio is taken against that floor,
/// kNegligibleRow times the largest scale, instead of against its own.
template <typename T>
double componentwise_error(const std::vector<T>& r, const std::vector<double>& scale) {
  constexpr double kNegligibleRow = 1e-200;
  double largest = 0;
  for (const double s : scale) largest = std::max(largest, s);
  const double floor = kNegligibleRow * largest;
  double worst = 0;
  for (std::size_t i = 0; i < r.size(); ++i) {
    const double num = magnitude(r[i]);
    if (!std::isfinite(num)) return std::numeric_limits<double>::infinity();
    if (num == 0) continue;
    const double against = std::max(scale[i], floor);
    worst = std::max(worst, against > 0 ? num / against : std::numeric_limits<double>::infinity());
  }
  return worst;
}

}  // namespace tacet
