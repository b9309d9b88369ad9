// Eigen SparseLU backend, kept for comparison in the benchmark: analyzePattern
// once, factorize at every point (Eigen repeats its pivot search each time and
// allocates inside factorize; that is part of what the benchmark shows).

#include <Eigen/SparseCore>
#include <Eigen/SparseLU>
#include <algorithm>
#include <string>

#include "tacet/solve/sparse_solver.hpp"

namespace tacet {
namespace {

using Matrix = Eigen::SparseMatrix<std::complex<double>, Eigen::ColMajor, int>;
using Vector = Eigen::Map<Eigen::VectorXcd>;

// A compressed matrix with the pattern's entries (values to be overwritten).
template <typename Scalar>
void shape_like(const CscPattern& pattern, Eigen::SparseMatrix<Scalar, Eigen::ColMajor, int>& matrix) {
  std::vector<Eigen::Triplet<Scalar, int>> entries;
  entries.reserve(static_cast<std::size_t>(pattern.nonzeros()));
  for (int c = 0; c < pattern.n; ++c)
    for (int k = pattern.col_ptr[c]; k < pattern.col_ptr[c + 1]; ++k)
      entries.emplace_back(pattern.row_index[k], c, Scalar(1));
  matrix.resize(pattern.n, pattern.n);
  matrix.setFromTriplets(entries.begin(), entries.end());
  matrix.makeCompressed();
}

class EigenLu final : public SparseLu {
 public:
  void analyse(const CscPattern& pattern) override {
    n_ = pattern.n;
    shape_like(pattern, matrix_);
    work_.resize(n_);
    if (n_ == 0) return;  // nothing to factor: every call below is a no-op
    lu_.analyzePattern(matrix_);
  }

  FactorStatus factor(const std::complex<double>* values) override {
    if (n_ == 0) return FactorStatus::ok;
    ++factorizations_;
    std::copy(values, values + matrix_.nonZeros(), matrix_.valuePtr());
    lu_.factorize(matrix_);
    if (lu_.info() == Eigen::Success) {
      singular_column_ = -1;
      return FactorStatus::ok;
    }
    singular_column_ = column_from_message();
    return FactorStatus::singular;
  }

  int singular_column() const override { return singular_column_; }

  void solve(std::complex<double>* rhs) override {
    if (n_ == 0) return;
    Vector b(rhs, n_);
    work_ = lu_.solve(b);
    b = work_;
  }

  void solve_transposed(std::complex<double>* rhs) override {
    if (n_ == 0) return;
    Vector b(rhs, n_);
    work_ = lu_.transpose().solve(b);
    b = work_;
  }

  int full_factorizations() const override { return factorizations_; }

 private:
  // Eigen reports "... ZERO COLUMN AT k" with k counted from 1 in the
  // column-permuted matrix; the column permutation maps it back.
  int column_from_message() const {
    const std::string message = lu_.lastErrorMessage();
    const auto digits = message.find_last_not_of("0123456789");
    if (digits == std::string::npos || digits + 1 >= message.size()) return -1;
    const int permuted = std::stoi(message.substr(digits + 1)) - 1;
    if (permuted < 0 || permuted >= n_) return -1;
    const auto& order = lu_.colsPermutation().indices();
    for (int c = 0; c < n_; ++c)
      if (order(c) == permuted) return c;
    return -1;
  }

  int n_ = 0;
  Matrix matrix_;
  Eigen::SparseLU<Matrix, Eigen::COLAMDOrdering<int>> lu_;
  Eigen::VectorXcd work_;
  int singular_column_ = -1;
  int factorizations_ = 0;
};

// The real DC system on Eigen's SparseLU, for comparison with KLU.
class RealEigenLu final : public RealSparseLu {
 public:
  using RealMatrix = Eigen::SparseMatrix<double, Eigen::ColMajor, int>;

  void analyse(const CscPattern& pattern) override {
    n_ = pattern.n;
    shape_like(pattern, matrix_);
    if (n_ > 0) lu_.analyzePattern(matrix_);
  }

  FactorStatus factor(const double* values) override {
    if (n_ == 0) return FactorStatus::ok;
    std::copy(values, values + matrix_.nonZeros(), matrix_.valuePtr());
    lu_.factorize(matrix_);
    return lu_.info() == Eigen::Success ? FactorStatus::ok : FactorStatus::singular;
  }

  int singular_column() const override { return -1; }

  void solve(double* rhs, int count) override {
    if (n_ == 0 || count == 0) return;
    Eigen::Map<Eigen::MatrixXd> b(rhs, n_, count);
    Eigen::MatrixXd x = lu_.solve(b);
    b = x;
  }

 private:
  int n_ = 0;
  RealMatrix matrix_;
  Eigen::SparseLU<RealMatrix, Eigen::COLAMDOrdering<int>> lu_;
};

}  // namespace

std::unique_ptr<SparseLu> make_eigen_lu() { return std::make_unique<EigenLu>(); }
std::unique_ptr<RealSparseLu> make_real_eigen_lu() { return std::make_unique<RealEigenLu>(); }

}  // namespace tacet
