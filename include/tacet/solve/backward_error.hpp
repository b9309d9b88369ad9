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
//
// Every LU solve is checked with it, so it is measured in one pass that forms
// each row's residual and denominator in registers and takes the ratio as the
// row ends. The sums are those of the plain column-by-column loop, term for
// term in the same order, so omega and the residual (which refinement solves
// with) are the same bits as that loop gives.

#include <cmath>
#include <complex>
#include <vector>

#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

/// |z| as LAPACK's zgerfs measures it for the backward error: |Re z| + |Im z|
/// (within a factor sqrt 2 of the modulus, and no square root per entry).
inline double magnitude(double x) { return std::abs(x); }
inline double magnitude(std::complex<double> z) { return std::abs(z.real()) + std::abs(z.imag()); }

/// A row whose denominator is more than 200 decades below the largest row's (a
/// long RC ladder far above its corner attenuates by 1e-300 and its last node
/// voltages underflow) has no digits left to be wrong in: its ratio is taken
/// against kNegligibleRow times the largest denominator instead of its own.
constexpr double kNegligibleRow = 1e-200;

/// The thresholds every solve is held to (sparse_solver_checked.cpp, and the
/// bias cascade's dense block solves): at or under kGoodBackwardError a
/// solution is taken as it is (a few hundred ulps); above it up to
/// kRefinementSteps of iterative refinement; above kTrustedBackwardError
/// after them (nine digits of the system itself) it is not trusted.
constexpr double kGoodBackwardError = 1e-13;
constexpr double kTrustedBackwardError = 1e-9;
constexpr int kRefinementSteps = 3;

/// A CSC pattern's entries row by row: row i's are start[i] .. start[i + 1],
/// each with its column and its position in the CSC values, in column order.
/// Built once per pattern; the plain residual reads A through it.
struct RowOrder {
  std::vector<int> start, column, at;
};
RowOrder row_order(const CscPattern& pattern);

/// What one measurement leaves: r = b - op(A) x and the denominator
/// |op(A)| |x| + |b| row by row (refinement solves with r); `x_magnitude` is
/// scratch.
template <typename T>
struct Residual {
  std::vector<T> r;
  std::vector<double> scale;
  std::vector<double> x_magnitude;
};

/// omega of x as a solution of A x = b (A^T x = b when `transposed`), A in
/// `pattern`'s CSC order and `rows` its row order; infinity when some residual
/// is not finite. Fills `out`.
template <typename T>
double backward_error(const CscPattern& pattern, const RowOrder& rows, const T* values, const T* x,
                      const T* b, bool transposed, Residual<T>& out);

/// How many columns of a block backward_errors sums in one pass over A.
constexpr int kBlockColumns = 4;

/// omega[c] and column c of r and scale for `count` right-hand sides of a real
/// A x = b, x, b, r and scale held column after column (n * count each):
/// exactly what backward_error gives for column c alone, with the matrix read
/// once for a group of columns instead of once per column.
void backward_errors(const CscPattern& pattern, const RowOrder& rows, const double* values,
                     const double* x, const double* b, int count, double* r, double* scale,
                     double* omega);

}  // namespace tacet
