// Both sparse LU backends against a dense LU of the same matrix (Eigen's
// FullPivLU, a reference implementation outside this project).

#include "tacet/solve/sparse_solver.hpp"

#include <Eigen/Dense>
#include <catch2/catch.hpp>

#include "is_close.hpp"
#include "tacet/common/errors.hpp"

using namespace tacet;
using namespace tacet::testing;
using cplx = std::complex<double>;

namespace {

// A dense matrix in a fixed CSC pattern (entries kept where the mask is set).
struct SmallSystem {
  CscPattern pattern;
  std::vector<cplx> values;
  Eigen::MatrixXcd dense;
};

SmallSystem from_dense(const Eigen::MatrixXcd& dense, const Eigen::MatrixXi& mask) {
  SmallSystem system;
  const int n = static_cast<int>(dense.rows());
  system.pattern.n = n;
  system.pattern.col_ptr.push_back(0);
  for (int c = 0; c < n; ++c) {
    for (int r = 0; r < n; ++r)
      if (mask(r, c) != 0) {
        system.pattern.row_index.push_back(r);
        system.values.push_back(dense(r, c));
      }
    system.pattern.col_ptr.push_back(static_cast<int>(system.pattern.row_index.size()));
  }
  system.dense = dense;
  return system;
}

SmallSystem complex_four_by_four() {
  Eigen::MatrixXi mask(4, 4);
  // clang-format off
  mask << 1, 1, 0, 1,
          1, 1, 1, 0,
          0, 1, 1, 1,
          1, 0, 1, 0;  // zero diagonal in the last row, as a source branch row has
  // clang-format on
  Eigen::MatrixXcd dense = Eigen::MatrixXcd::Zero(4, 4);
  for (int r = 0; r < 4; ++r)
    for (int c = 0; c < 4; ++c)
      if (mask(r, c) != 0) dense(r, c) = cplx(1.0 + r + 2 * c, 0.5 * (r - c) + 0.25);
  return from_dense(dense, mask);
}

std::vector<cplx> right_hand_side() { return {cplx(1, 0), cplx(0, -2), cplx(3, 1), cplx(-1, 0.5)}; }

void check_against_dense(const Eigen::VectorXcd& expected, const std::vector<cplx>& actual) {
  for (int k = 0; k < expected.size(); ++k)
    CHECK_THAT(actual[static_cast<std::size_t>(k)], IsClose(expected(k), 1e-12));
}

// b solved through `solve` by the sparse backend and by a dense LU of `dense`.
template <typename Solve>
void check_solve(const SmallSystem& system, SolverKind kind, const Eigen::MatrixXcd& dense,
                 Solve solve) {
  auto lu = make_sparse_lu(kind);
  lu->analyse(system.pattern);
  REQUIRE(lu->factor(system.values.data()) == FactorStatus::ok);
  const auto b = right_hand_side();
  auto x = b;
  solve(*lu, x.data());
  check_against_dense(dense.fullPivLu().solve(Eigen::Map<const Eigen::VectorXcd>(b.data(), 4)), x);
}

}  // namespace

TEST_CASE("both backends solve a small complex system like a dense LU", "[solver]") {
  const auto kind = GENERATE(SolverKind::klu, SolverKind::eigen);
  INFO(to_string(kind));
  const SmallSystem system = complex_four_by_four();
  check_solve(system, kind, system.dense, [](SparseLu& lu, cplx* x) { lu.solve(x); });
}

TEST_CASE("the transposed solve uses A^T, not the conjugate transpose", "[solver]") {
  const auto kind = GENERATE(SolverKind::klu, SolverKind::eigen);
  INFO(to_string(kind));
  const SmallSystem system = complex_four_by_four();
  check_solve(system, kind, system.dense.transpose(),
              [](SparseLu& lu, cplx* x) { lu.solve_transposed(x); });
}

TEST_CASE("KLU refactors new values with the old pivots while they stay good", "[solver]") {
  SmallSystem system = complex_four_by_four();
  auto lu = make_sparse_lu(SolverKind::klu);
  lu->analyse(system.pattern);
  REQUIRE(lu->factor(system.values.data()) == FactorStatus::ok);
  for (auto& v : system.values) v *= cplx(1.1, 0.2);  // the pivots scale alike
  system.dense *= cplx(1.1, 0.2);
  REQUIRE(lu->factor(system.values.data()) == FactorStatus::ok);
  CHECK(lu->full_factorizations() == 1);
  auto x = right_hand_side();
  lu->solve(x.data());
  const auto b = right_hand_side();
  check_against_dense(
      system.dense.fullPivLu().solve(Eigen::Map<const Eigen::VectorXcd>(b.data(), 4)), x);
}

TEST_CASE("KLU picks new pivots when a reused pivot collapses", "[solver]") {
  Eigen::MatrixXi mask(2, 2);
  mask << 1, 1, 1, 1;
  Eigen::MatrixXcd first(2, 2), second(2, 2);
  first << 4.0, 1.0, 1.0, 3.0;
  second << 1e-14, 1.0, 1.0, 3.0;  // the (0,0) pivot chosen first is now nearly zero
  SmallSystem a = from_dense(first, mask);
  const SmallSystem b = from_dense(second, mask);
  auto lu = make_sparse_lu(SolverKind::klu);
  lu->analyse(a.pattern);
  REQUIRE(lu->factor(a.values.data()) == FactorStatus::ok);
  REQUIRE(lu->factor(b.values.data()) == FactorStatus::ok);
  CHECK(lu->full_factorizations() == 2);
  std::vector<cplx> x{1.0, 2.0};
  lu->solve(x.data());
  const Eigen::Vector2cd expected = second.fullPivLu().solve(Eigen::Vector2cd(1.0, 2.0));
  check_against_dense(expected, x);
}

TEST_CASE("a singular matrix is reported with its column", "[solver]") {
  const auto kind = GENERATE(SolverKind::klu, SolverKind::eigen);
  INFO(to_string(kind));
  Eigen::MatrixXi mask = Eigen::MatrixXi::Ones(3, 3);
  Eigen::MatrixXcd dense(3, 3);
  // clang-format off
  dense << 2.0, 1.0, 0.0,
           1.0, 3.0, 0.0,
           0.0, 1.0, 0.0;  // column 2 holds only zeros: no pivot can be found for it
  // clang-format on
  const SmallSystem system = from_dense(dense, mask);
  auto lu = make_sparse_lu(kind);
  lu->analyse(system.pattern);
  CHECK(lu->factor(system.values.data()) == FactorStatus::singular);
  CHECK(lu->singular_column() == 2);
}

TEST_CASE("the real backends solve many right-hand sides at once like a dense LU", "[solver]") {
  const auto kind = GENERATE(SolverKind::klu, SolverKind::eigen);
  INFO(to_string(kind));
  // The real part of the four-by-four system; six right-hand sides, more than
  // KLU's internal block of four, each checked against Eigen's FullPivLU.
  const SmallSystem complex_system = complex_four_by_four();
  std::vector<double> values;
  for (const cplx& v : complex_system.values) values.push_back(v.real());
  const Eigen::MatrixXd dense = complex_system.dense.real();
  auto lu = make_real_sparse_lu(kind);
  lu->analyse(complex_system.pattern);
  REQUIRE(lu->factor(values.data()) == FactorStatus::ok);
  Eigen::MatrixXd b(4, 6);
  for (int c = 0; c < 6; ++c)
    for (int r = 0; r < 4; ++r) b(r, c) = 1.0 + r - 0.5 * c * r + c;
  std::vector<double> x(b.data(), b.data() + b.size());
  lu->solve(x.data(), 6);
  const Eigen::MatrixXd expected = dense.fullPivLu().solve(b);
  for (int c = 0; c < 6; ++c)
    for (int r = 0; r < 4; ++r)
      CHECK_THAT(x[static_cast<std::size_t>(c * 4 + r)], IsClose(expected(r, c), 1e-12));
}

// --- the solution check around every backend ----------------------------------

namespace {

// A backend whose solutions are off by a relative `error` in every entry (as
// factors accurate to a few digits would leave them), for the check to see.
class InexactLu final : public SparseLu {
 public:
  InexactLu(double error) : inner_(make_unchecked_sparse_lu(SolverKind::klu)), error_(error) {}
  void analyse(const CscPattern& p) override { inner_->analyse(p), n_ = p.n; }
  FactorStatus factor(const cplx* v) override { return inner_->factor(v); }
  int singular_column() const override { return inner_->singular_column(); }
  void solve(cplx* x) override { inner_->solve(x), spoil(x); }
  void solve_transposed(cplx* x) override { inner_->solve_transposed(x), spoil(x); }
  int full_factorizations() const override { return inner_->full_factorizations(); }

 private:
  void spoil(cplx* x) const {
    for (int i = 0; i < n_; ++i) x[i] *= 1.0 + error_ * (i % 2 == 0 ? 1.0 : -1.0);
  }
  std::unique_ptr<SparseLu> inner_;
  double error_;
  int n_ = 0;
};

}  // namespace

TEST_CASE("iterative refinement recovers full accuracy from factors good to six digits",
          "[solver][check]") {
  // Refinement converges when the solve's relative error is below one (Higham 2002,
  // ch. 12); an error of 1e-6 per step leaves 1e-18 after three steps.
  const SmallSystem system = complex_four_by_four();
  auto lu = checked(std::make_unique<InexactLu>(1e-6));
  lu->analyse(system.pattern);
  REQUIRE(lu->factor(system.values.data()) == FactorStatus::ok);
  const auto b = right_hand_side();
  auto x = b;
  lu->solve(x.data());
  const Eigen::VectorXcd exact =
      system.dense.fullPivLu().solve(Eigen::Map<const Eigen::VectorXcd>(b.data(), 4));
  for (int k = 0; k < 4; ++k) CHECK_THAT(x[static_cast<std::size_t>(k)], IsClose(exact(k), 1e-13));
  auto y = b;
  lu->solve_transposed(y.data());
  const Eigen::VectorXcd exact_t =
      system.dense.transpose().fullPivLu().solve(Eigen::Map<const Eigen::VectorXcd>(b.data(), 4));
  for (int k = 0; k < 4; ++k) CHECK_THAT(y[static_cast<std::size_t>(k)], IsClose(exact_t(k), 1e-13));
}

TEST_CASE("a solution that refinement cannot rescue is an unsolvable error, not a number",
          "[solver][check]") {
  // Factors off by a factor of two: refinement diverges, fresh pivots do not help.
  const SmallSystem system = complex_four_by_four();
  auto lu = checked(std::make_unique<InexactLu>(1.0));
  lu->analyse(system.pattern);
  lu->at_point(1e3);
  REQUIRE(lu->factor(system.values.data()) == FactorStatus::ok);
  auto x = right_hand_side();
  try {
    lu->solve(x.data());
    FAIL("no error");
  } catch (const SolveError& e) {
    CHECK(e.status() == ExitStatus::unsolvable);
    CHECK_THAT(e.sentence(), Catch::Contains("at 1kHz") && Catch::Contains("cannot be trusted") &&
                                 Catch::Contains("backward error"));
  }
}

namespace {

// A real backend whose solution of one column of a block is off by a relative
// `error` (a column the factors serve badly), for the check to find and mend.
class OneBadColumnLu final : public RealSparseLu {
 public:
  OneBadColumnLu(int bad, double error)
      : inner_(make_unchecked_real_sparse_lu(SolverKind::klu)), bad_(bad), error_(error) {}
  void analyse(const CscPattern& p) override { n_ = p.n, inner_->analyse(p); }
  FactorStatus factor(const double* v) override { return inner_->factor(v); }
  int singular_column() const override { return inner_->singular_column(); }
  void solve(double* x, int count) override {
    inner_->solve(x, count);
    if (count > bad_)
      for (int i = 0; i < n_; ++i) x[bad_ * n_ + i] *= 1.0 + error_ * (i % 2 == 0 ? 1.0 : -1.0);
  }

 private:
  std::unique_ptr<RealSparseLu> inner_;
  int bad_;
  double error_;
  int n_ = 0;
};

}  // namespace

TEST_CASE("a block solve refines the one column whose backward error is poor", "[solver][check]") {
  // Column 2 of 6 comes back good to six digits only; refinement (Higham 2002,
  // ch. 12) restores it, and the other columns are the plain solves of a dense LU.
  const SmallSystem complex_system = complex_four_by_four();
  std::vector<double> values;
  for (const cplx& v : complex_system.values) values.push_back(v.real());
  const Eigen::MatrixXd dense = complex_system.dense.real();
  auto lu = checked(std::make_unique<OneBadColumnLu>(2, 1e-6));
  lu->analyse(complex_system.pattern);
  REQUIRE(lu->factor(values.data()) == FactorStatus::ok);
  Eigen::MatrixXd b(4, 6);
  for (int c = 0; c < 6; ++c)
    for (int r = 0; r < 4; ++r) b(r, c) = 2.0 - r + 0.25 * c * r;
  std::vector<double> x(b.data(), b.data() + b.size());
  lu->solve(x.data(), 6);
  const Eigen::MatrixXd expected = dense.fullPivLu().solve(b);
  for (int c = 0; c < 6; ++c)
    for (int r = 0; r < 4; ++r)
      CHECK_THAT(x[static_cast<std::size_t>(c * 4 + r)], IsClose(expected(r, c), 1e-13));
}
