// KLU backend (SuiteSparse): the ordering is chosen once by klu_analyze, the
// pivot sequence by a first klu_z_factor (the anchor); later points reuse that
// pivot sequence with klu_z_refactor, which does not allocate.
//
// A reused pivot sequence can turn bad as values move by many decades over a
// sweep (1 Hz .. 100 MHz). After each refactor the cheap reciprocal pivot
// ratio of klu_z_rcond (min |U_kk| / max |U_kk|, pivot_ratio() below) is compared with its value at the
// anchor; if it dropped by more than kRcondDropLimit (1e-3, i.e. three decades
// of lost pivot quality), or the refactor met a zero pivot, a fresh
// klu_z_factor picks new pivots for this point. Those serve this point only:
// the next point refactors on the anchor's pivots again, so what a point gets
// never depends on the points before it (sparse_solver.hpp).
//
// The symbolic analysis is shared by the solvers share_analysis() makes, one
// per worker thread: klu_z_factor, klu_z_refactor and the solves only read it
// (klu_z_factor revises an estimate in it only after a COLAMD ordering, which
// KLU's default AMD ordering never uses; the anchor is factored before any
// worker starts in any case). Each solver has its own klu_common and numeric
// objects.

#include <klu.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <limits>
#include <memory>
#include <stdexcept>

#include "tacet/solve/sparse_solver.hpp"

namespace tacet {
namespace {

constexpr double kRcondDropLimit = 1e-3;

// klu_z_rcond's figure, min |U_kk| / max |U_kk|, from the squared moduli: it
// takes a careful hypot per pivot, a twentieth of a sweep on a ladder, and
// the ratio needs one square root. A modulus whose square leaves the range
// of doubles is taken exactly, as klu_z_rcond takes every one; a zero or
// NaN pivot gives 0, as there.
double pivot_ratio(const klu_numeric* numeric, int n) {
  const auto* u = static_cast<const std::complex<double>*>(numeric->Udiag);
  double low = std::numeric_limits<double>::infinity(), high = 0;
  bool exact = false;
  for (int k = 0; k < n; ++k) {
    const double m = std::norm(u[k]);
    if (!(m > 0)) return 0;  // zero or NaN
    if (m == std::numeric_limits<double>::infinity() || m < std::numeric_limits<double>::min()) exact = true;
    low = std::min(low, m), high = std::max(high, m);
  }
  if (!exact) return std::sqrt(low / high);
  double lo = std::numeric_limits<double>::infinity(), hi = 0;
  for (int k = 0; k < n; ++k) {
    const double m = std::abs(u[k]);
    lo = std::min(lo, m), hi = std::max(hi, m);
  }
  return lo / hi;
}

double* as_doubles(std::complex<double>* z) { return reinterpret_cast<double*>(z); }
double* as_doubles(const std::complex<double>* z) {
  return const_cast<double*>(reinterpret_cast<const double*>(z));
}

// The pattern as KLU wants it (mutable int arrays) and its symbolic analysis.
struct KluAnalysis {
  std::vector<int> col_ptr, row_index;
  klu_symbolic* symbolic = nullptr;
  KluAnalysis() = default;
  KluAnalysis(const KluAnalysis&) = delete;
  KluAnalysis& operator=(const KluAnalysis&) = delete;
  ~KluAnalysis() {
    if (symbolic == nullptr) return;
    klu_common common;
    klu_defaults(&common);
    klu_free_symbolic(&symbolic, &common);
  }
};

class KluLu final : public SparseLu {
 public:
  KluLu() { klu_defaults(&common_); }
  ~KluLu() override { release(); }
  KluLu(const KluLu&) = delete;
  KluLu& operator=(const KluLu&) = delete;

  void analyse(const CscPattern& pattern) override {
    release();
    pattern_ = &pattern;
    auto analysis = std::make_shared<KluAnalysis>();
    analysis->col_ptr = pattern.col_ptr;
    analysis->row_index = pattern.row_index;
    if (pattern.n > 0) {  // else nothing to factor: every call below is a no-op
      analysis->symbolic =
          klu_analyze(pattern.n, analysis->col_ptr.data(), analysis->row_index.data(), &common_);
      if (analysis->symbolic == nullptr) throw std::runtime_error("klu_analyze failed");
    }
    analysis_ = std::move(analysis);
  }

  std::unique_ptr<SparseLu> share_analysis() const override {
    auto twin = std::make_unique<KluLu>();
    twin->pattern_ = pattern_;
    twin->analysis_ = analysis_;
    return twin;
  }

  FactorStatus factor(const std::complex<double>* values) override {
    values_ = values;
    if (pattern_->n == 0) return FactorStatus::ok;
    if (anchor_ == nullptr) return factor_anchor(values);
    if (refactor(values)) {
      current_ = anchor_;
      return FactorStatus::ok;
    }
    return factor_fresh(values);
  }

  FactorStatus factor_new_pivots(const std::complex<double>* values) override {
    values_ = values;
    if (pattern_->n == 0) return FactorStatus::ok;
    if (anchor_ == nullptr) return factor_anchor(values);
    return factor_fresh(values);
  }

  double condition_estimate() override {
    if (pattern_->n == 0 || current_ == nullptr || values_ == nullptr)
      return std::numeric_limits<double>::quiet_NaN();
    if (!klu_z_condest(analysis_->col_ptr.data(), as_doubles(values_), analysis_->symbolic, current_,
                       &common_))
      return std::numeric_limits<double>::quiet_NaN();
    return common_.condest;
  }

  int singular_column() const override { return singular_column_; }

  void solve(std::complex<double>* rhs) override {
    if (pattern_->n == 0) return;
    klu_z_solve(analysis_->symbolic, current_, pattern_->n, 1, as_doubles(rhs), &common_);
  }

  void solve_transposed(std::complex<double>* rhs) override {
    if (pattern_->n == 0) return;
    klu_z_tsolve(analysis_->symbolic, current_, pattern_->n, 1, as_doubles(rhs), 0, &common_);
  }

  int full_factorizations() const override { return full_factorizations_; }

 private:
  bool refactor(const std::complex<double>* values) {
    if (!klu_z_refactor(analysis_->col_ptr.data(), analysis_->row_index.data(), as_doubles(values),
                        analysis_->symbolic, anchor_, &common_))
      return false;
    const double rcond = pivot_ratio(anchor_, pattern_->n);
    return rcond >= kRcondDropLimit * rcond_at_anchor_ && rcond > 0;
  }

  /// A full factorisation into `numeric` (freed first); nullptr when singular.
  FactorStatus factor_into(klu_numeric*& numeric, const std::complex<double>* values) {
    if (numeric != nullptr) klu_z_free_numeric(&numeric, &common_);
    current_ = nullptr;
    ++full_factorizations_;
    numeric = klu_z_factor(analysis_->col_ptr.data(), analysis_->row_index.data(), as_doubles(values),
                           analysis_->symbolic, &common_);
    if (numeric == nullptr || common_.status == KLU_SINGULAR) {
      singular_column_ = common_.singular_col < pattern_->n ? common_.singular_col : -1;
      if (numeric != nullptr) klu_z_free_numeric(&numeric, &common_);
      return FactorStatus::singular;
    }
    current_ = numeric;
    singular_column_ = -1;
    return FactorStatus::ok;
  }

  // The first full factorisation: its pivots serve every later point.
  FactorStatus factor_anchor(const std::complex<double>* values) {
    const FactorStatus status = factor_into(anchor_, values);
    if (status == FactorStatus::ok) rcond_at_anchor_ = pivot_ratio(anchor_, pattern_->n);
    return status;
  }

  // Fresh pivots for this point alone; the anchor keeps its pivot sequence.
  FactorStatus factor_fresh(const std::complex<double>* values) { return factor_into(fresh_, values); }

  void release() {
    if (anchor_ != nullptr) klu_z_free_numeric(&anchor_, &common_);
    if (fresh_ != nullptr) klu_z_free_numeric(&fresh_, &common_);
    current_ = nullptr;
    analysis_.reset();
  }

  klu_common common_{};
  std::shared_ptr<KluAnalysis> analysis_;
  klu_numeric* anchor_ = nullptr;   // pivots of the first full factorisation
  klu_numeric* fresh_ = nullptr;    // fresh pivots of the last point that needed them
  klu_numeric* current_ = nullptr;  // the factors of the point factored last
  const CscPattern* pattern_ = nullptr;
  const std::complex<double>* values_ = nullptr;  // of the last factorisation
  double rcond_at_anchor_ = 0;
  int singular_column_ = -1;
  int full_factorizations_ = 0;
};

// The real DC system: one full factorisation, then any number of solves.
class RealKluLu final : public RealSparseLu {
 public:
  RealKluLu() { klu_defaults(&common_); }
  ~RealKluLu() override { release(); }
  RealKluLu(const RealKluLu&) = delete;
  RealKluLu& operator=(const RealKluLu&) = delete;

  void analyse(const CscPattern& pattern) override {
    release();
    n_ = pattern.n;
    col_ptr_ = pattern.col_ptr;
    row_index_ = pattern.row_index;
    if (n_ == 0) return;
    symbolic_ = klu_analyze(n_, col_ptr_.data(), row_index_.data(), &common_);
    if (symbolic_ == nullptr) throw std::runtime_error("klu_analyze failed");
  }

  FactorStatus factor(const double* values) override {
    values_ = values;
    if (n_ == 0) return FactorStatus::ok;
    if (numeric_ != nullptr) klu_free_numeric(&numeric_, &common_);
    numeric_ = klu_factor(col_ptr_.data(), row_index_.data(), const_cast<double*>(values), symbolic_,
                          &common_);
    if (numeric_ == nullptr || common_.status == KLU_SINGULAR) {
      singular_column_ = common_.singular_col < n_ ? common_.singular_col : -1;
      if (numeric_ != nullptr) klu_free_numeric(&numeric_, &common_);
      return FactorStatus::singular;
    }
    singular_column_ = -1;
    return FactorStatus::ok;
  }

  int singular_column() const override { return singular_column_; }

  void solve(double* rhs, int count) override {
    if (n_ == 0 || count == 0) return;
    klu_solve(symbolic_, numeric_, n_, count, rhs, &common_);
  }

  double condition_estimate() override {
    if (n_ == 0 || numeric_ == nullptr || values_ == nullptr)
      return std::numeric_limits<double>::quiet_NaN();
    if (!klu_condest(col_ptr_.data(), const_cast<double*>(values_), symbolic_, numeric_, &common_))
      return std::numeric_limits<double>::quiet_NaN();
    return common_.condest;
  }

 private:
  void release() {
    if (numeric_ != nullptr) klu_free_numeric(&numeric_, &common_);
    if (symbolic_ != nullptr) klu_free_symbolic(&symbolic_, &common_);
  }

  klu_common common_{};
  klu_symbolic* symbolic_ = nullptr;
  klu_numeric* numeric_ = nullptr;
  int n_ = 0;
  const double* values_ = nullptr;
  std::vector<int> col_ptr_, row_index_;
  int singular_column_ = -1;
};

}  // namespace

std::unique_ptr<SparseLu> make_klu_lu() { return std::make_unique<KluLu>(); }
std::unique_ptr<RealSparseLu> make_real_klu_lu() { return std::make_unique<RealKluLu>(); }

}  // namespace tacet
