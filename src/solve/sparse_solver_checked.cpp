// The solution check around every LU backend. Partial pivoting is backward
// stable in practice, but a pivot sequence reused from another frequency (KLU's
// refactor) or a matrix whose rows span twenty decades can still return a
// solution that solves a noticeably different system. Each solve therefore
// measures its componentwise backward error (backward_error.hpp) at the cost
// of one pass over the matrix:
//
//   omega <= kGood         accepted as it is (the usual case);
//   else                   up to kRefinements steps of iterative refinement
//                          on the same factors (Skeel 1980: one step in
//                          working precision already restores componentwise
//                          stability when the factors are reasonable);
//   still omega > kTrusted fresh pivots for these values (for this point only:
//                          the next point starts from the backend's anchor
//                          again), solve, refine again;
//   still omega > kTrusted SolveError (exit 3) naming the error reached and the
//                          condition estimate, never a silently wrong number.

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <memory>
#include <vector>

#include "tacet/common/errors.hpp"
#include "tacet/solve/backward_error.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {
namespace {

constexpr double kGood = kGoodBackwardError;
constexpr double kTrusted = kTrustedBackwardError;
constexpr int kRefinements = kRefinementSteps;

[[noreturn]] void throw_untrusted(double hz, double omega, double condition) {
  const std::string estimate =
      std::isfinite(condition) ? fmt::format(", condition estimate {:.1e}", condition) : "";
  throw SolveError::unsolvable_at(
      hz,
      fmt::format("the solution cannot be trusted (backward error {:.1e} after refinement{})",
                  omega, estimate),
      "the circuit is scaled beyond what double precision resolves: look for values that "
      "differ by more than about fifteen decades at one node, or for parts that cancel each "
      "other (a negative resistance or a controlled source undoing a resistor)");
}

// The buffers one checked solve works in, kept by the solver so that a
// refinement step allocates nothing after the first.
template <typename T>
struct RefineBuffers {
  Residual<T> now, next;
  std::vector<T> candidate;
};

// The pattern a checked solver measures against, with its row order (built
// once per analysis, shared by the twins of share_analysis).
struct CheckedPattern {
  const CscPattern* csc = nullptr;
  std::shared_ptr<const RowOrder> rows;
};

// Refinement of one right-hand side: x += A \ (b - A x) while it helps.
// `omega` and `r` (in w.now or w.next) are the measurement of x;
// `solve_in_place` solves with the current factors; returns the final omega.
template <typename T, typename Solve>
double refine(const CheckedPattern& pattern, const T* values, const T* b, T* x, bool transposed,
              Solve&& solve_in_place, RefineBuffers<T>& w, T* r, double omega) {
  const auto n = static_cast<std::size_t>(pattern.csc->n);
  Residual<T>* spare = r == w.now.r.data() ? &w.next : &w.now;
  Residual<T>* other = spare == &w.now ? &w.next : &w.now;
  for (int step = 0; step < kRefinements && omega > kGood; ++step) {
    solve_in_place(r);  // the correction
    w.candidate.resize(n);
    for (std::size_t i = 0; i < n; ++i) w.candidate[i] = x[i] + r[i];
    const double next =
        backward_error(*pattern.csc, *pattern.rows, values, w.candidate.data(), b, transposed, *spare);
    if (!(next < omega)) break;  // no progress: keep the better solution
    std::copy(w.candidate.begin(), w.candidate.end(), x);
    omega = next;
    r = spare->r.data();
    std::swap(spare, other);
  }
  return omega;
}

// The check of one right-hand side x solved from b: measured, refined when poor.
template <typename T, typename Solve>
double checked_omega(const CheckedPattern& pattern, const T* values, const T* b, T* x, bool transposed,
                     Solve&& solve_in_place, RefineBuffers<T>& w) {
  const double omega = backward_error(*pattern.csc, *pattern.rows, values, x, b, transposed, w.now);
  if (omega <= kGood) return omega;
  return refine(pattern, values, b, x, transposed, solve_in_place, w, w.now.r.data(), omega);
}

class CheckedLu final : public SparseLu {
 public:
  explicit CheckedLu(std::unique_ptr<SparseLu> backend) : backend_(std::move(backend)) {}

  void analyse(const CscPattern& pattern) override {
    pattern_ = {&pattern, std::make_shared<const RowOrder>(row_order(pattern))};
    backend_->analyse(pattern);
  }
  FactorStatus factor(const std::complex<double>* values) override {
    values_ = values;
    return backend_->factor(values);
  }
  FactorStatus factor_new_pivots(const std::complex<double>* values) override {
    values_ = values;
    return backend_->factor_new_pivots(values);
  }
  int singular_column() const override { return backend_->singular_column(); }
  void solve(std::complex<double>* rhs) override { checked_solve(rhs, false); }
  void solve_transposed(std::complex<double>* rhs) override { checked_solve(rhs, true); }
  int full_factorizations() const override { return backend_->full_factorizations(); }
  double condition_estimate() override { return backend_->condition_estimate(); }
  void at_point(double hz) override { hz_ = hz; }
  std::unique_ptr<SparseLu> share_analysis() const override {
    auto backend = backend_->share_analysis();
    if (!backend) return nullptr;
    auto twin = std::make_unique<CheckedLu>(std::move(backend));
    twin->pattern_ = pattern_;
    return twin;
  }

 private:
  void backend_solve(std::complex<double>* rhs, bool transposed) {
    transposed ? backend_->solve_transposed(rhs) : backend_->solve(rhs);
  }

  void checked_solve(std::complex<double>* rhs, bool transposed) {
    const auto n = static_cast<std::size_t>(pattern_.csc->n);
    if (n == 0) return;
    b_.assign(rhs, rhs + n);
    backend_solve(rhs, transposed);
    auto with_factors = [&](std::complex<double>* v) { backend_solve(v, transposed); };
    double omega = checked_omega(pattern_, values_, b_.data(), rhs, transposed, with_factors, work_);
    if (omega <= kTrusted) return;
    if (backend_->factor_new_pivots(values_) == FactorStatus::ok) {
      std::copy(b_.begin(), b_.end(), rhs);
      backend_solve(rhs, transposed);
      omega = checked_omega(pattern_, values_, b_.data(), rhs, transposed, with_factors, work_);
      if (omega <= kTrusted) return;
    }
    throw_untrusted(hz_, omega, backend_->condition_estimate());
  }

  std::unique_ptr<SparseLu> backend_;
  CheckedPattern pattern_;
  const std::complex<double>* values_ = nullptr;
  std::vector<std::complex<double>> b_;
  RefineBuffers<std::complex<double>> work_;
  double hz_ = 0;
};

// The DC system: one factorisation with fresh pivots already, so the check
// refines and, failing that, reports.
class CheckedRealLu final : public RealSparseLu {
 public:
  explicit CheckedRealLu(std::unique_ptr<RealSparseLu> backend) : backend_(std::move(backend)) {}

  void analyse(const CscPattern& pattern) override {
    pattern_ = {&pattern, std::make_shared<const RowOrder>(row_order(pattern))};
    backend_->analyse(pattern);
  }
  FactorStatus factor(const double* values) override {
    values_ = values;
    return backend_->factor(values);
  }
  int singular_column() const override { return backend_->singular_column(); }
  double condition_estimate() override { return backend_->condition_estimate(); }

  void solve(double* rhs, int count) override {
    const auto n = static_cast<std::size_t>(pattern_.csc->n);
    if (n == 0 || count == 0) return;
    const std::size_t size = n * static_cast<std::size_t>(count);
    b_.assign(rhs, rhs + size);
    backend_->solve(rhs, count);
    // The columns measured kBlockColumns to a pass over A; a poor one refined
    // alone from its residual there (the bits a measurement of it alone
    // gives), in column order, before the next group.
    r_.resize(n * kBlockColumns), scale_.resize(r_.size()), omega_.resize(kBlockColumns);
    auto with_factors = [&](double* v) { backend_->solve(v, 1); };
    for (int c0 = 0; c0 < count; c0 += kBlockColumns) {
      const int width = std::min(kBlockColumns, count - c0);
      const std::size_t first = n * static_cast<std::size_t>(c0);
      backward_errors(*pattern_.csc, *pattern_.rows, values_, rhs + first, b_.data() + first, width,
                      r_.data(), scale_.data(), omega_.data());
      for (int c = 0; c < width; ++c) {
        double omega = omega_[static_cast<std::size_t>(c)];
        if (omega <= kGood) continue;
        const std::size_t at = first + n * static_cast<std::size_t>(c);
        omega = refine(pattern_, values_, b_.data() + at, rhs + at, false, with_factors, work_,
                       r_.data() + n * static_cast<std::size_t>(c), omega);
        if (omega > kTrusted) throw_untrusted(0.0, omega, backend_->condition_estimate());
      }
    }
  }

 private:
  std::unique_ptr<RealSparseLu> backend_;
  CheckedPattern pattern_;
  const double* values_ = nullptr;
  std::vector<double> b_, r_, scale_, omega_;
  RefineBuffers<double> work_;
};

}  // namespace

std::unique_ptr<SparseLu> checked(std::unique_ptr<SparseLu> backend) {
  return std::make_unique<CheckedLu>(std::move(backend));
}

std::unique_ptr<RealSparseLu> checked(std::unique_ptr<RealSparseLu> backend) {
  return std::make_unique<CheckedRealLu>(std::move(backend));
}

}  // namespace tacet
