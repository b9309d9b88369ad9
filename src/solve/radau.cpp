// Radau IIA (order 5) on the linear DAE C x' + G x = b: see radau.hpp.

#include "tacet/solve/radau.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "tacet/common/errors.hpp"

namespace tacet {

namespace radau {
// Hairer and Wanner, vol. II, table IV.5.6 (A) and the code RADAU5 (T, T^-1,
// the eigenvalues); tests/radau_test.cpp checks T^-1 A^-1 T against them.
const double kA[3][3] = {
    {0.19681547722366044, -0.06553542585019838, 0.02377097434822015},
    {0.3944243147390873, 0.29207341166522843, -0.04154875212599792},
    {0.37640306270046725, 0.5124858261884216, 0.1111111111111111}};
const double kT[3][3] = {
    {9.1232394870892942792e-02, -0.14125529502095420843, -3.0029194105147424492e-02},
    {0.24171793270710701896, 0.20412935229379993199, 0.38294211275726193779},
    {0.96604818261509293619, 1.0, 0.0}};
const double kTInverse[3][3] = {
    {4.3255798900631553510, 0.33919925181580986954, 0.54177053993587487119},
    {-4.1787185915519047273, -0.32768282076106238708, 0.47662355450055045196},
    {-0.50287263494578687595, 2.5719269498556054292, -0.59603920482822492497}};
const double kGamma = 3.6378342527444962;
const double kAlpha = 2.6810828736277523;
const double kBeta = 3.0504301992474105;
}  // namespace radau

namespace {

using namespace radau;

// The error estimate's weights (RADAU5's dd): e^T Z / h approximates h^3 x''''.
constexpr double kE1 = -10.048809399827414, kE2 = 1.382142733160748, kE3 = -1.0 / 3.0;
constexpr double kSafety = 0.9;
constexpr double kMaxGrowth = 5, kMaxShrink = 8;
constexpr double kKeepBelow = 2.0;  // keep h (and its factors) when h_new / h is in [1, 2)
constexpr int kMaxRejections = 60;

double row_sum(const double (&m)[3][3], int row) { return m[row][0] + m[row][1] + m[row][2]; }

}  // namespace

RadauIntegrator::RadauIntegrator(const SparsePencil& pencil, std::vector<double> b,
                                 SolverKind kind)
    : pencil_(pencil),
      b_(std::move(b)),
      real_(make_real_sparse_lu(kind)),
      complex_(make_sparse_lu(kind)) {
  const auto n = static_cast<std::size_t>(pencil.size());
  const auto nnz = static_cast<std::size_t>(pencil.pattern.nonzeros());
  real_->analyse(pencil.pattern);
  complex_->analyse(pencil.pattern);
  real_values_.resize(nnz);
  complex_values_.resize(nnz);
  for (auto* v : {&y_, &start_, &r0_, &w1_, &f_, &cont_, &err_}) v->assign(n, 0.0);
  v_.assign(n, 0.0);
  for (auto& v : z_) v.assign(n, 0.0);
  for (auto& v : stage_) v.assign(n, 0.0);
}

void RadauIntegrator::start(std::vector<double> x0, double first_step,
                            std::vector<double> consistent) {
  if (!x0.empty()) y_ = std::move(x0);
  estimate_from_ = std::move(consistent);
  t_ = 0;
  h_ = first_step;
  first_ = true;
}

void RadauIntegrator::factor(double h) {
  if (h == factored_h_) return;
  pencil_.assemble(kGamma / h, real_values_.data());
  if (real_->factor(real_values_.data()) == FactorStatus::singular)
    throw SolveError::unsolvable(
        fmt::format("the step equations are singular at a step of {:.6g} s", h));
  pencil_.assemble(std::complex<double>(kAlpha, kBeta) / h, complex_values_.data());
  if (complex_->factor(complex_values_.data()) == FactorStatus::singular)
    throw SolveError::unsolvable(
        fmt::format("the step equations are singular at a step of {:.6g} s", h));
  factored_h_ = h;
  factorisations_ += 2;
}

// One try of a step of h from (t_, y_): the stages in z_, the error's norm back.
double RadauIntegrator::attempt(double h, const ErrorNorm& error_norm, bool refine) {
  const std::size_t n = y_.size();
  factor(h);
  // r0 = f(y0) = b - G y0; the transformed stages take multiples of it.
  pencil_.multiply_g(y_.data(), r0_.data());
  for (std::size_t i = 0; i < n; ++i) r0_[i] = b_[i] - r0_[i];
  const double s1 = row_sum(kTInverse, 0);
  const std::complex<double> s23(row_sum(kTInverse, 1), row_sum(kTInverse, 2));
  for (std::size_t i = 0; i < n; ++i) w1_[i] = s1 * r0_[i], v_[i] = s23 * r0_[i];
  real_->solve(w1_.data(), 1);
  complex_->solve(v_.data());
  for (int k = 0; k < 3; ++k) {
    auto& z = z_[static_cast<std::size_t>(k)];
    for (std::size_t i = 0; i < n; ++i)
      z[i] = kT[k][0] * w1_[i] + kT[k][1] * v_[i].real() + kT[k][2] * v_[i].imag();
  }
  // err = (gamma/h C + G)^-1 (f(y0) + C (e^T Z) / h), RADAU5's estimate.
  for (std::size_t i = 0; i < n; ++i)
    cont_[i] = (kE1 * z_[0][i] + kE2 * z_[1][i] + kE3 * z_[2][i]) / h;
  pencil_.multiply_c(cont_.data(), f_.data());  // f_ = C (e^T Z) / h, kept for the refinement
  const std::vector<double>& y0 = estimate_from_.empty() ? y_ : estimate_from_;
  if (!estimate_from_.empty()) {
    pencil_.multiply_g(y0.data(), err_.data());
    for (std::size_t i = 0; i < n; ++i) err_[i] = b_[i] - err_[i] + f_[i];
  } else {
    for (std::size_t i = 0; i < n; ++i) err_[i] = f_[i] + r0_[i];
  }
  real_->solve(err_.data(), 1);
  double norm = error_norm(err_);
  if (norm >= 1 && refine) {
    // Once more from y0 + err: removes the estimate's growth on stiff modes.
    for (std::size_t i = 0; i < n; ++i) cont_[i] = y0[i] + err_[i];
    pencil_.multiply_g(cont_.data(), err_.data());
    for (std::size_t i = 0; i < n; ++i) err_[i] = b_[i] - err_[i] + f_[i];
    real_->solve(err_.data(), 1);
    norm = error_norm(err_);
  }
  return norm;
}

RadauStep RadauIntegrator::advance(const ErrorNorm& error_norm) {
  bool rejected = false;
  for (int tries = 0;; ++tries) {
    const double h = h_;
    const double norm = attempt(h, error_norm, first_ || rejected);
    const double quotient =
        std::clamp(std::pow(std::max(norm, 1e-10), 0.25) / kSafety, 1 / kMaxGrowth, kMaxShrink);
    double next = h / quotient;
    if (norm < 1) {
      start_ = y_;
      for (std::size_t k = 0; k < 3; ++k)
        for (std::size_t i = 0; i < y_.size(); ++i) stage_[k][i] = start_[i] + z_[k][i];
      y_ = stage_[2];
      RadauStep step;
      step.t0 = t_;
      step.h = h;
      step.start = &start_;
      for (std::size_t k = 0; k < 3; ++k) step.stages[k] = &stage_[k];
      t_ += h;
      if (rejected) next = std::min(next, h);  // no growth right after a rejection
      if (next >= h && next < kKeepBelow * h) next = h;
      h_ = next;
      first_ = false;
      estimate_from_.clear();
      return step;
    }
    ++rejected_;
    rejected = true;
    h_ = next;
    if (tries >= kMaxRejections || !(h_ > std::abs(t_) * 1e-15 && h_ > 0))
      throw SolveError::unsolvable(
          fmt::format("the time step fell below what double precision resolves at t = {:.6g} s", t_));
  }
}

}  // namespace tacet
