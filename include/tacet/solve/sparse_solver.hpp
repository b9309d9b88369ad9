#pragma once
// LU factorisation of a complex sparse matrix whose pattern is fixed for a
// whole analysis (the MNA matrix of one circuit) while its values change at
// every frequency.
//
// Usage: analyse(pattern) once, then per point factor(values) and solve(rhs).
// `values` follow the pattern's compressed-sparse-column (CSC) order: entry k
// sits at row row_index[k] of the column c with col_ptr[c] <= k < col_ptr[c+1],
// row indices sorted within each column. Both solves overwrite the right-hand
// side with the solution, so no buffer is allocated per point.
//
// solve_transposed solves A^T x = b (the plain transpose, not the conjugate
// one): the adjoint noise analysis needs exactly that.
//
// A point's factors do not depend on the points factored before it: a backend
// that reuses a pivot sequence (KLU's refactor) reuses the one of its first
// full factorisation (the anchor), and fresh pivots taken at one point (the
// pivots turned bad there, or the solution check asked for them) serve that
// point only. So a sweep cut into blocks on several threads, each solver
// anchored at the same values, gives every point bit for bit.

#include <complex>
#include <limits>
#include <memory>
#include <string>
#include <vector>

namespace tacet {

/// The structure of a square n x n sparse matrix in CSC form.
struct CscPattern {
  int n = 0;
  std::vector<int> col_ptr;    ///< n + 1 entries
  std::vector<int> row_index;  ///< col_ptr[n] entries, sorted within each column
  int nonzeros() const { return col_ptr.empty() ? 0 : col_ptr.back(); }
};

enum class FactorStatus { ok, singular };

class SparseLu {
 public:
  virtual ~SparseLu() = default;
  /// Symbolic analysis (ordering); the pattern must outlive the solver.
  virtual void analyse(const CscPattern& pattern) = 0;
  /// Numeric factorisation of the values in pattern order.
  virtual FactorStatus factor(const std::complex<double>* values) = 0;
  /// After FactorStatus::singular: the column (unknown) of the original matrix
  /// found without a usable pivot, or -1 when the backend cannot tell.
  virtual int singular_column() const = 0;
  /// rhs_in_out: n values, b on entry, x with A x = b on return.
  virtual void solve(std::complex<double>* rhs_in_out) = 0;
  /// rhs_in_out: n values, b on entry, x with A^T x = b on return.
  virtual void solve_transposed(std::complex<double>* rhs_in_out) = 0;
  /// How many full (pivoting) factorisations were done, for tests and the benchmark.
  virtual int full_factorizations() const = 0;
  /// A factorisation with pivots chosen afresh for these values (a backend
  /// that reuses an earlier pivot sequence in factor() drops it here).
  virtual FactorStatus factor_new_pivots(const std::complex<double>* values) { return factor(values); }
  /// An estimate of the 1-norm condition number of the matrix factored last;
  /// NaN when the backend has none. Costs a few solves: for messages only.
  virtual double condition_estimate() { return std::numeric_limits<double>::quiet_NaN(); }
  /// The frequency (Hz; 0 at DC) of the matrix about to be factored, named
  /// when a solution cannot be trusted.
  virtual void at_point(double /*hz*/) {}
  /// A solver of its own on this one's symbolic analysis (shared, read-only:
  /// it must have been analysed, and factored once so that the analysis is
  /// complete), with no factorisation yet: one per worker thread. nullptr
  /// when the backend cannot share it (the caller analyses anew).
  virtual std::unique_ptr<SparseLu> share_analysis() const { return nullptr; }
};

/// LU of a real sparse matrix: the DC system (s = 0 leaves every entry real),
/// at a quarter of the complex work, with many right-hand sides per call.
class RealSparseLu {
 public:
  virtual ~RealSparseLu() = default;
  virtual void analyse(const CscPattern& pattern) = 0;
  virtual FactorStatus factor(const double* values) = 0;
  virtual int singular_column() const = 0;
  /// rhs_in_out: `count` columns of n values each (column after column), each
  /// b on entry and x with A x = b on return; solved together, in blocks.
  virtual void solve(double* rhs_in_out, int count) = 0;
  virtual double condition_estimate() { return std::numeric_limits<double>::quiet_NaN(); }
};

enum class SolverKind { klu, eigen };
const char* to_string(SolverKind kind);

/// The backend wrapped in the solution check (sparse_solver_checked.cpp):
/// every solve's componentwise backward error is measured; a poor one gets
/// iterative refinement, then fresh pivots, and a SolveError (exit 3) with the
/// error and the condition estimate when neither brings it under 1e-9.
std::unique_ptr<SparseLu> make_sparse_lu(SolverKind kind = SolverKind::klu);
std::unique_ptr<RealSparseLu> make_real_sparse_lu(SolverKind kind = SolverKind::klu);
/// The same backends without the check, for tests of the check itself.
std::unique_ptr<SparseLu> make_unchecked_sparse_lu(SolverKind kind);
std::unique_ptr<RealSparseLu> make_unchecked_real_sparse_lu(SolverKind kind);
/// Wraps any backend (a test double, too) in the solution check.
std::unique_ptr<SparseLu> checked(std::unique_ptr<SparseLu> backend);
std::unique_ptr<RealSparseLu> checked(std::unique_ptr<RealSparseLu> backend);

}  // namespace tacet
