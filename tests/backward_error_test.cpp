// The solution check's measure against the plain Oettli-Prager formula (Oettli &
// Prager, Numer. Math. 6, 1964; Higham, "Accuracy and Stability of Numerical
// Algorithms", 2nd ed. 2002, Thm 7.3), written out below on a dense copy of the
// matrix: omega = max_i |b - A x|_i / (|A||x| + |b|)_i, with |z| = |Re z| + |Im z|
// (LAPACK zgerfs's measure) and tacet's floor for rows 200 decades under the largest.
// The reference adds each row's terms in column order, the order the column-wise
// loop of the CSC matrix adds them in, so the fast kernels must match it bit for
// bit: omega, the residual refinement solves with, and the denominators.

#include "tacet/solve/backward_error.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <complex>
#include <limits>
#include <random>
#include <vector>

using namespace tacet;
using cplx = std::complex<double>;

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

double op_magnitude(double v) { return std::abs(v); }
double op_magnitude(cplx v) { return std::abs(v.real()) + std::abs(v.imag()); }

// A sparse matrix as a dense table with a mask of the entries kept.
template <typename T>
struct Sparse {
  int n = 0;
  std::vector<T> dense;      // row-major
  std::vector<char> stored;  // row-major
  T at(int i, int j) const { return dense[static_cast<std::size_t>(i * n + j)]; }
  bool has(int i, int j) const { return stored[static_cast<std::size_t>(i * n + j)] != 0; }

  CscPattern pattern() const {
    CscPattern p;
    p.n = n;
    p.col_ptr.push_back(0);
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i)
        if (has(i, j)) p.row_index.push_back(i);
      p.col_ptr.push_back(static_cast<int>(p.row_index.size()));
    }
    return p;
  }
  std::vector<T> csc_values() const {
    std::vector<T> v;
    for (int j = 0; j < n; ++j)
      for (int i = 0; i < n; ++i)
        if (has(i, j)) v.push_back(at(i, j));
    return v;
  }
  Sparse transposed() const {
    Sparse t = *this;
    for (int i = 0; i < n; ++i)
      for (int j = 0; j < n; ++j) {
        t.dense[static_cast<std::size_t>(j * n + i)] = at(i, j);
        t.stored[static_cast<std::size_t>(j * n + i)] = has(i, j) ? 1 : 0;
      }
    return t;
  }
};

template <typename T>
struct Reference {
  std::vector<T> r;
  std::vector<double> scale;
  double omega = 0;
};

// Higham 2002, Thm 7.3, row by row, terms in column order.
template <typename T>
Reference<T> oettli_prager(const Sparse<T>& a, const std::vector<T>& x, const std::vector<T>& b) {
  Reference<T> out;
  for (int i = 0; i < a.n; ++i) {
    T r = b[static_cast<std::size_t>(i)];
    double s = op_magnitude(r);
    for (int j = 0; j < a.n; ++j)
      if (a.has(i, j)) {
        r -= a.at(i, j) * x[static_cast<std::size_t>(j)];
        s += op_magnitude(a.at(i, j)) * op_magnitude(x[static_cast<std::size_t>(j)]);
      }
    out.r.push_back(r);
    out.scale.push_back(s);
  }
  double largest = 0;
  for (double s : out.scale) largest = std::max(largest, s);
  for (std::size_t i = 0; i < out.r.size(); ++i) {
    const double num = op_magnitude(out.r[i]);
    if (!std::isfinite(num)) {
      out.omega = kInf;
      return out;
    }
    if (num == 0) continue;
    const double against = std::max(out.scale[i], 1e-200 * largest);
    out.omega = std::max(out.omega, against > 0 ? num / against : kInf);
  }
  return out;
}

double draw(std::mt19937& g, double lo, double hi) { return std::uniform_real_distribution<double>(lo, hi)(g); }
void random_value(std::mt19937& g, double& v, double size) { v = size * draw(g, -1, 1); }
void random_value(std::mt19937& g, cplx& v, double size) { v = size * cplx(draw(g, -1, 1), draw(g, -1, 1)); }

// A random sparse system with what the check meets in circuits: entries over
// twelve decades, explicit zeros, empty rows and columns, and rows (with their
// right-hand side) some 250 decades below the rest, under the floor.
template <typename T>
struct RandomSystem {
  Sparse<T> a;
  std::vector<T> x, b;
};

template <typename T>
RandomSystem<T> random_system(std::mt19937& g, int n) {
  RandomSystem<T> s;
  s.a.n = n;
  s.a.dense.assign(static_cast<std::size_t>(n * n), T(0));
  s.a.stored.assign(static_cast<std::size_t>(n * n), 0);
  std::vector<double> row_size(static_cast<std::size_t>(n), 1.0);
  std::vector<char> empty_row(static_cast<std::size_t>(n), 0);
  for (int i = 0; i < n; ++i) {
    const double kind = draw(g, 0, 1);
    if (kind < 0.1) row_size[static_cast<std::size_t>(i)] = 1e-250;
    else if (kind < 0.15) empty_row[static_cast<std::size_t>(i)] = 1;
  }
  const double density = std::min(1.0, 4.0 / n);
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < n; ++j) {
      if (empty_row[static_cast<std::size_t>(i)] || (i != j && draw(g, 0, 1) > density)) continue;
      T v;
      random_value(g, v, row_size[static_cast<std::size_t>(i)] * std::pow(10.0, draw(g, -6, 6)));
      if (draw(g, 0, 1) < 0.05) v = T(0);
      s.a.dense[static_cast<std::size_t>(i * n + j)] = v;
      s.a.stored[static_cast<std::size_t>(i * n + j)] = 1;
    }
  for (int i = 0; i < n; ++i) {
    T v;
    random_value(g, v, std::pow(10.0, draw(g, -3, 3)));
    s.x.push_back(v);
    random_value(g, v, row_size[static_cast<std::size_t>(i)] * std::pow(10.0, draw(g, -3, 3)));
    if (empty_row[static_cast<std::size_t>(i)] && draw(g, 0, 1) < 0.5) v = T(0);
    s.b.push_back(v);
  }
  return s;
}

// Equal, or both not a number (a residual that is not finite).
bool same(double a, double b) { return a == b || (std::isnan(a) && std::isnan(b)); }
bool same(cplx a, cplx b) { return same(a.real(), b.real()) && same(a.imag(), b.imag()); }

template <typename T>
void check_same_bits(const Reference<T>& expected, const Residual<T>& actual, double omega) {
  CHECK(omega == expected.omega);
  REQUIRE(actual.r.size() == expected.r.size());
  for (std::size_t i = 0; i < expected.r.size(); ++i) {
    CHECK(same(actual.r[i], expected.r[i]));
    CHECK(same(actual.scale[i], expected.scale[i]));
  }
}

// Rows with a residual whose denominator is under the floor.
template <typename T>
int rows_below_floor(const Reference<T>& reference) {
  double largest = 0;
  for (double v : reference.scale) largest = std::max(largest, v);
  int count = 0;
  for (std::size_t i = 0; i < reference.r.size(); ++i)
    if (reference.r[i] != T(0) && reference.scale[i] < 1e-200 * largest) ++count;
  return count;
}

template <typename T>
double measure(const RandomSystem<T>& s, bool transposed, Residual<T>& out) {
  const CscPattern pattern = s.a.pattern();
  const std::vector<T> values = s.a.csc_values();
  return backward_error(pattern, row_order(pattern), values.data(), s.x.data(), s.b.data(), transposed,
                        out);
}

template <typename T>
void check_random_systems() {
  std::mt19937 g(20261203);
  int below_floor = 0;
  for (int trial = 0; trial < 200; ++trial) {
    const auto s = random_system<T>(g, 1 + trial % 40);
    for (bool transposed : {false, true}) {
      const Reference<T> expected = oettli_prager(transposed ? s.a.transposed() : s.a, s.x, s.b);
      Residual<T> out;
      check_same_bits(expected, out, measure(s, transposed, out));
      below_floor += rows_below_floor(expected);
    }
  }
  CHECK(below_floor > 100);  // the floor's correction was exercised, not only the common path
}

}  // namespace

TEST_CASE("the backward error is the Oettli-Prager ratio of residual to |A||x| + |b|",
          "[solver][check]") {
  // A = [2 1; 1 3], b = (3, 4), x = (1, 1.001): r = b - A x = (-0.001, -0.003),
  // |A||x| + |b| = (3.001 + 3, 4.003 + 4); omega = max(0.001/6.001, 0.003/8.003)
  // (Oettli & Prager 1964; Higham 2002, Thm 7.3), worked by hand. A^T = A here.
  Sparse<cplx> a{2, {2.0, 1.0, 1.0, 3.0}, {1, 1, 1, 1}};
  const RandomSystem<cplx> s{a, {1.0, 1.001}, {3.0, 4.0}};
  for (bool transposed : {false, true}) {
    Residual<cplx> out;
    const double omega = measure(s, transposed, out);
    CHECK(out.r[1].real() == Approx(-0.003).epsilon(1e-9));
    CHECK(omega == Approx(0.003 / 8.003).epsilon(1e-12));
  }
}

TEST_CASE("the backward error of random sparse real systems is the reference formula, bit for bit",
          "[solver][check]") {
  check_random_systems<double>();
}

TEST_CASE("the backward error of random sparse complex systems is the reference formula, bit for bit",
          "[solver][check]") {
  check_random_systems<cplx>();
}

TEST_CASE("a row 200 decades below the largest is measured against the floor, not its own size",
          "[solver][check]") {
  // A = diag(1, 1e-250), x = (1, 1.001), b = (1, 1e-250): row 2 is off by 1e-253
  // against its own 2.001e-250 (5e-4), but the floor is 1e-200 x 2 (row 1's
  // |A||x| + |b|): omega = 1e-253 / 2e-200 = 5e-54, by hand.
  Sparse<double> a{2, {1.0, 0.0, 0.0, 1e-250}, {1, 0, 0, 1}};
  const RandomSystem<double> s{a, {1.0, 1.001}, {1.0, 1e-250}};
  Residual<double> out;
  CHECK(measure(s, false, out) == Approx(1e-253 / 2e-200).epsilon(1e-9));
}

TEST_CASE("an empty row is exact when its right-hand side is zero and wrong by one when not",
          "[solver][check]") {
  // Row 2 has no entries: 0 = b_2 holds for b_2 = 0 (omega 0: x solves the
  // system), and for b_2 = 5 no x does: the change of b_2 needed is all of it.
  Sparse<double> a{2, {4.0, 0.0, 0.0, 0.0}, {1, 0, 0, 0}};
  Residual<double> out;
  CHECK(measure(RandomSystem<double>{a, {0.5, 7.0}, {2.0, 0.0}}, false, out) == 0.0);
  CHECK(measure(RandomSystem<double>{a, {0.5, 7.0}, {2.0, 5.0}}, false, out) == 1.0);
  CHECK(measure(RandomSystem<double>{a, {0.5, 7.0}, {2.0, 5.0}}, true, out) == 1.0);
}

TEST_CASE("a residual that is not finite makes the backward error infinite", "[solver][check]") {
  std::mt19937 g(7);
  const double nan = std::numeric_limits<double>::quiet_NaN();
  for (double bad : {nan, kInf, -kInf}) {
    auto real = random_system<double>(g, 12);
    auto complex = random_system<cplx>(g, 12);
    // A diagonal entry on row and column 5 (zero or not): x_5 reaches row 5's residual.
    real.a.stored[5 * 12 + 5] = complex.a.stored[5 * 12 + 5] = 1;
    real.x[5] = bad;
    complex.x[5] = cplx(0.0, bad);
    for (bool transposed : {false, true}) {
      Residual<double> out_real;
      Residual<cplx> out_complex;
      const double real_omega = measure(real, transposed, out_real);
      const double complex_omega = measure(complex, transposed, out_complex);
      CHECK(real_omega == oettli_prager(transposed ? real.a.transposed() : real.a, real.x, real.b).omega);
      CHECK(complex_omega ==
            oettli_prager(transposed ? complex.a.transposed() : complex.a, complex.x, complex.b).omega);
      CHECK(real_omega == kInf);
      CHECK(complex_omega == kInf);
    }
  }
  // A right-hand side that is not finite, in a row with no entries.
  Sparse<double> a{2, {4.0, 0.0, 0.0, 0.0}, {1, 0, 0, 0}};
  Residual<double> out;
  CHECK(measure(RandomSystem<double>{a, {0.5, 7.0}, {2.0, nan}}, false, out) == kInf);
}

TEST_CASE("a block of right-hand sides gets each column's own backward error, bit for bit",
          "[solver][check]") {
  std::mt19937 g(42);
  int under = 0, over = 0;
  for (int count : {1, 2, 3, 4, 5, 6, 7, 8, 16, 17}) {
    const auto first = random_system<double>(g, 30);
    const CscPattern pattern = first.a.pattern();
    const RowOrder rows = row_order(pattern);
    const std::vector<double> values = first.a.csc_values();
    const std::size_t n = 30;
    std::vector<double> x, b;
    for (int c = 0; c < count; ++c) {
      const auto other = c == 0 ? first : random_system<double>(g, 30);
      x.insert(x.end(), other.x.begin(), other.x.end());
      b.insert(b.end(), other.b.begin(), other.b.end());
    }
    if (count > 2) x[2 * n + 3] = kInf;  // a value that is not finite in one column
    std::vector<double> r(x.size()), scale(x.size()), omega(static_cast<std::size_t>(count));
    backward_errors(pattern, rows, values.data(), x.data(), b.data(), count, r.data(), scale.data(),
                    omega.data());
    for (int c = 0; c < count; ++c) {
      const std::size_t at = n * static_cast<std::size_t>(c);
      const std::vector<double> xc(x.begin() + static_cast<std::ptrdiff_t>(at),
                                   x.begin() + static_cast<std::ptrdiff_t>(at + n));
      const std::vector<double> bc(b.begin() + static_cast<std::ptrdiff_t>(at),
                                   b.begin() + static_cast<std::ptrdiff_t>(at + n));
      const Reference<double> expected = oettli_prager(first.a, xc, bc);
      CHECK(omega[static_cast<std::size_t>(c)] == expected.omega);
      for (std::size_t i = 0; i < n; ++i) {
        CHECK(same(r[at + i], expected.r[i]));
        CHECK(same(scale[at + i], expected.scale[i]));
      }
      (rows_below_floor(expected) > 0 ? under : over) += 1;
    }
  }
  // Both ways through the block: columns with rows under the floor and without.
  CHECK(under > 5);
  CHECK(over > 20);
}
