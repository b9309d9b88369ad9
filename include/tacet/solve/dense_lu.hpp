#pragma once
// LU of one small dense block (a diagonal block of a BlockForm), real or
// complex, with every solve measured like every sparse one.
//
// Rows are scaled to a largest entry of 1, then threshold partial pivoting
// keeps the diagonal while it is at least kDiagonalPreference of the
// column's largest (the rule KLU applies, with the same 1e-3). A block's
// diagonal is BTF's matching, so the elimination follows the circuit's
// structure, and an unknown no right-hand side reaches stays an exact zero
// instead of picking up rounding from the rows that carry it (which the
// componentwise check would rightly refuse). Each solve is measured with the
// componentwise backward error of backward_error.hpp (same floor, same
// thresholds) and refined while it helps.

#include <algorithm>
#include <cmath>
#include <complex>
#include <limits>
#include <type_traits>
#include <utility>
#include <vector>

#include "tacet/solve/backward_error.hpp"

namespace tacet {

template <typename T>
class DenseBlockLu {
 public:
  static constexpr double kDiagonalPreference = 1e-3;

  /// Room for blocks of up to `most` unknowns.
  explicit DenseBlockLu(int most = 0) { reserve(most); }
  void reserve(int most) {
    const auto m = static_cast<std::size_t>(most);
    a_.resize(m * m), lu_.resize(m * m), pivot_.resize(m), scale_.resize(m), x_.resize(m), r_.resize(m),
        d_.resize(m), inverse_.resize(m);
  }

  /// The n x n matrix (row-major) to fill before factor(), zeroed.
  T* matrix(int n) {
    n_ = n;
    std::fill(a_.begin(), a_.begin() + static_cast<std::ptrdiff_t>(n) * n, T{});
    return a_.data();
  }
  /// False: a row or a pivot is zero.
  bool factor() {
    const int n = n_;
    std::copy(a_.begin(), a_.begin() + static_cast<std::ptrdiff_t>(n) * n, lu_.begin());
    T* lu = lu_.data();
    for (int i = 0; i < n; ++i) {
      double largest = 0;
      for (int c = 0; c < n; ++c) largest = std::max(largest, magnitude(lu[i * n + c]));
      if (largest == 0) return false;
      scale_[static_cast<std::size_t>(i)] = 1.0 / largest;
      for (int c = 0; c < n; ++c) lu[i * n + c] *= scale_[static_cast<std::size_t>(i)];
    }
    for (int k = 0; k < n; ++k) {
      int p = k;
      for (int i = k + 1; i < n; ++i)
        if (magnitude(lu[i * n + k]) > magnitude(lu[p * n + k])) p = i;
      if (magnitude(lu[k * n + k]) >= kDiagonalPreference * magnitude(lu[p * n + k])) p = k;
      pivot_[static_cast<std::size_t>(k)] = p;
      if (lu[p * n + k] == T{}) return false;
      if (p != k)
        for (int c = 0; c < n; ++c) std::swap(lu[k * n + c], lu[p * n + c]);
      const T diagonal = lu[k * n + k];
      const T inverse = reciprocal(diagonal);
      inverse_[static_cast<std::size_t>(k)] = inverse;
      for (int i = k + 1; i < n; ++i) {
        const T l = divide(lu[i * n + k], diagonal, inverse);
        if (l == T{}) continue;
        for (int c = k + 1; c < n; ++c) lu[i * n + c] -= l * lu[k * n + c];
      }
    }
    return true;
  }
  /// x from rhs (n values each), measured and refined like every other
  /// solve (sparse_solver_checked.cpp); false when it cannot be trusted.
  bool solve(const T* rhs, T* x) {
    const int n = n_;
    std::copy(rhs, rhs + n, x);
    substitute(x);
    double omega = measure(x, rhs);
    for (int step = 0; step < kRefinementSteps && omega > kGoodBackwardError; ++step) {
      std::copy(r_.begin(), r_.begin() + n, x_.begin());  // the correction
      substitute(x_.data());
      for (int i = 0; i < n; ++i) x_[static_cast<std::size_t>(i)] += x[i];
      const double next = measure(x_.data(), rhs);
      if (!(next < omega)) break;  // no progress: keep the better solution
      std::copy(x_.begin(), x_.begin() + n, x);
      omega = next;
    }
    return omega <= kTrustedBackwardError;
  }

 private:
  void substitute(T* x) const {
    const int n = n_;
    const T* lu = lu_.data();
    for (int i = 0; i < n; ++i) x[i] *= scale_[static_cast<std::size_t>(i)];
    for (int k = 0; k < n; ++k)
      if (pivot_[static_cast<std::size_t>(k)] != k) std::swap(x[k], x[pivot_[static_cast<std::size_t>(k)]]);
    for (int i = 1; i < n; ++i)
      for (int c = 0; c < i; ++c) x[i] -= lu[i * n + c] * x[c];
    for (int i = n; i-- > 0;) {
      for (int c = i + 1; c < n; ++c) x[i] -= lu[i * n + c] * x[c];
      x[i] = divide(x[i], lu[i * n + i], inverse_[static_cast<std::size_t>(i)]);
    }
  }
  // omega of x for A x = b (the matrix as filled, unscaled), r = b - A x.
  double measure(const T* x, const T* b) {
    const int n = n_;
    const T* a = a_.data();
    double largest = 0;
    for (int i = 0; i < n; ++i) {
      T residual = b[i];
      double denominator = magnitude(b[i]);
      for (int c = 0; c < n; ++c) {
        residual -= a[i * n + c] * x[c];
        denominator += magnitude(a[i * n + c]) * magnitude(x[c]);
      }
      r_[static_cast<std::size_t>(i)] = residual;
      d_[static_cast<std::size_t>(i)] = denominator;
      largest = std::max(largest, denominator);
    }
    double omega = 0;
    for (int i = 0; i < n; ++i) {
      const double r = magnitude(r_[static_cast<std::size_t>(i)]);
      if (!std::isfinite(r)) return std::numeric_limits<double>::infinity();
      const double denominator = std::max(d_[static_cast<std::size_t>(i)], kNegligibleRow * largest);
      if (denominator == 0) {
        if (r != 0) return std::numeric_limits<double>::infinity();
        continue;
      }
      omega = std::max(omega, r / denominator);
    }
    return omega;
  }

  // A complex x / d as x times 1/d = conj(d)/|d|^2, 1/d formed once per
  // pivot: the library's complex division guards against overflow in ways a
  // pivot past the scaled threshold does not need, at several times the cost.
  // A real one divides (a division is one instruction).
  static T reciprocal(T d) {
    if constexpr (std::is_same_v<T, double>) {
      return d;
    } else {
      const double scale = 1.0 / std::norm(d);
      return T(d.real() * scale, -d.imag() * scale);
    }
  }
  static T divide(T& x, T d, T inverse) {
    if constexpr (std::is_same_v<T, double>) {
      (void)inverse;
      return x /= d;
    } else {
      (void)d;
      return x *= inverse;
    }
  }

  int n_ = 0;
  std::vector<T> a_, lu_, x_, r_, inverse_;
  std::vector<int> pivot_;
  std::vector<double> scale_, d_;
};

}  // namespace tacet
