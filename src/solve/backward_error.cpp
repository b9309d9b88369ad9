// The Oettli-Prager backward error of every LU solve (backward_error.hpp), in
// one pass over the matrix: each row's residual and denominator are summed in
// registers, in the column order the plain CSC loop adds them in (the same
// bits), and the row's ratio is taken as it ends. A^T x reads the CSC columns
// as they are; A x reads them through the row order built once per pattern.
//
// The 1e-200 floor needs the largest denominator, known only at the end. The
// pass therefore takes each ratio against its own denominator and remembers the
// smallest denominator of a row with a residual; only when that one is under
// the floor (a ladder far above its corner) are the ratios taken again against
// the floor, from the stored residuals. Either way omega is what the formula
// with the floor gives.
//
// A block of real right-hand sides (the DC errors, sixteen to a solve) is
// summed four columns per pass over A, two to an SSE register, each lane with
// the arithmetic of its column alone.

#include "tacet/solve/backward_error.hpp"

#include <algorithm>
#include <limits>

namespace tacet {
namespace {

constexpr double kInfinity = std::numeric_limits<double>::infinity();

// acc -= a x. The complex product is the textbook one, what std::complex's
// operator* computes for finite operands (re = ac - bd, im = ad + bc, same
// bits); its extra step for a product that comes out NaN (C99 Annex G, for
// infinities) cannot make a residual finite, so omega is infinite either way.
inline void subtract_product(double& acc, double a, double x) { acc -= a * x; }
inline void subtract_product(std::complex<double>& acc, std::complex<double> a,
                             std::complex<double> x) {
  const double re = a.real() * x.real() - a.imag() * x.imag();
  const double im = a.real() * x.imag() + a.imag() * x.real();
  acc = {acc.real() - re, acc.imag() - im};
}

// x[k], a complex one read as two doubles at 2k (an index doubled costs one
// instruction less than one scaled by 16).
inline double element(const double* x, std::size_t k) { return x[k]; }
inline std::complex<double> element(const std::complex<double>* x, std::size_t k) {
  const auto* d = reinterpret_cast<const double*>(x);
  return {d[2 * k], d[2 * k + 1]};
}

// The rows' ratios as they are formed, for one right-hand side.
class RatioScan {
 public:
  void add(double num, double scale) {
    largest_ = std::max(largest_, scale);
    if (num == 0) return;
    if (!std::isfinite(num)) {
      finite_ = false;
      return;
    }
    // scale is never NaN here: a NaN term of |A||x| + |b| comes with a NaN
    // term of the residual. scale == 0 gives infinity, as the formula does.
    worst_ = std::max(worst_, num / scale);
    smallest_ = std::min(smallest_, scale);
  }

  // omega; `r` and `scale` are read again only when a row with a residual is
  // under the floor.
  template <typename T>
  double omega(const T* r, const double* scale, std::size_t n) const {
    if (!finite_) return kInfinity;
    const double floor = kNegligibleRow * largest_;
    if (!(smallest_ < floor)) return worst_;
    double worst = 0;
    for (std::size_t i = 0; i < n; ++i) {
      const double num = magnitude(r[i]);
      if (num == 0) continue;
      const double against = std::max(scale[i], floor);
      worst = std::max(worst, against > 0 ? num / against : kInfinity);
    }
    return worst;
  }

 private:
  double largest_ = 0, worst_ = 0, smallest_ = kInfinity;
  bool finite_ = true;
};

// One pass for one right-hand side: row i of op(A) is the entries start[i] ..
// start[i + 1], each x[from[j]] times value_at(j). `x_magnitude(k)` is |x_k|.
template <typename T, typename ValueAt, typename XMagnitude>
double gather(std::size_t n, const int* start, const int* from, ValueAt value_at,
              XMagnitude x_magnitude, const T* x, const T* b, T* r, double* scale) {
  RatioScan scan;
  for (std::size_t i = 0; i < n; ++i) {
    T acc = b[i];
    double s = magnitude(acc);
    for (int j = start[i]; j < start[i + 1]; ++j) {
      const auto k = static_cast<std::size_t>(from[j]);
      const T a = value_at(j);
      subtract_product(acc, a, element(x, k));
      s += magnitude(a) * x_magnitude(k);
    }
    r[i] = acc, scale[i] = s;
    scan.add(magnitude(acc), s);
  }
  return scan.omega(r, scale, n);
}

// A x, row i of A through the row order.
template <typename T, typename XMagnitude>
double gather_plain(std::size_t n, const RowOrder& rows, const T* values, XMagnitude x_magnitude,
                    const T* x, const T* b, T* r, double* scale) {
  return gather(n, rows.start.data(), rows.column.data(),
                [values, at = rows.at.data()](int j) { return element(values, static_cast<std::size_t>(at[j])); },
                x_magnitude, x, b, r, scale);
}

// |x_k| for the pass: a real magnitude is one instruction, a complex one three,
// worth computing once per entry of x rather than once per matrix entry.
inline auto magnitudes(const double* x, std::vector<double>&) {
  return [x](std::size_t k) { return std::abs(x[k]); };
}
inline auto magnitudes(const std::complex<double>* x, std::vector<double>& store) {
  for (std::size_t k = 0; k < store.size(); ++k) store[k] = magnitude(x[k]);
  return [m = store.data()](std::size_t k) { return m[k]; };
}

// Two doubles in one SSE register (GCC's vector extension): two columns of a
// block side by side, each lane doing the scalar arithmetic of its column.
using Pair = double __attribute__((vector_size(16)));
using PairBits = long long __attribute__((vector_size(16)));

inline Pair pair_abs(Pair v) {
  const auto sign = reinterpret_cast<PairBits>(Pair{-0.0, -0.0});
  return reinterpret_cast<Pair>(reinterpret_cast<PairBits>(v) & ~sign);
}

// Columns 0 .. 2P of a block (column c at offset c * n) in one pass over A:
// each entry is read once for the 2P columns, whose sums stay in registers,
// each lane's sums those of gather for its column. The ratios are taken
// afterwards, a column at a time (taken here, lane by lane, they cost more
// than the sums).
template <int P>
void gather_group(std::size_t n, const RowOrder& rows, const double* values, const double* x,
                  const double* b, double* r, double* scale) {
  for (std::size_t i = 0; i < n; ++i) {
    Pair acc[P], s[P];
#pragma GCC unroll 4
    for (int p = 0; p < P; ++p) {
      acc[p] = Pair{b[2 * p * n + i], b[(2 * p + 1) * n + i]};
      s[p] = pair_abs(acc[p]);
    }
    for (int j = rows.start[i]; j < rows.start[i + 1]; ++j) {
      const auto k = static_cast<std::size_t>(rows.column[static_cast<std::size_t>(j)]);
      const double a = values[rows.at[static_cast<std::size_t>(j)]];
      const Pair a2 = {a, a}, size2 = pair_abs(a2);
#pragma GCC unroll 4
      for (int p = 0; p < P; ++p) {
        const Pair xk = {x[2 * p * n + k], x[(2 * p + 1) * n + k]};
        acc[p] -= a2 * xk;
        s[p] += size2 * pair_abs(xk);
      }
    }
#pragma GCC unroll 4
    for (int p = 0; p < P; ++p)
      for (int lane = 0; lane < 2; ++lane) {
        const std::size_t at = (2 * p + lane) * n + i;
        r[at] = acc[p][lane], scale[at] = s[p][lane];
      }
  }
}

// omega of one column from its stored residual and denominators.
double scanned(const double* r, const double* scale, std::size_t n) {
  RatioScan scan;
  for (std::size_t i = 0; i < n; ++i) scan.add(std::abs(r[i]), scale[i]);
  return scan.omega(r, scale, n);
}

}  // namespace

RowOrder row_order(const CscPattern& pattern) {
  const auto n = static_cast<std::size_t>(pattern.n);
  RowOrder rows;
  rows.start.assign(n + 1, 0);
  const auto entries = static_cast<std::size_t>(pattern.nonzeros());
  for (std::size_t k = 0; k < entries; ++k) ++rows.start[static_cast<std::size_t>(pattern.row_index[k]) + 1];
  for (std::size_t i = 0; i < n; ++i) rows.start[i + 1] += rows.start[i];
  rows.column.resize(entries);
  rows.at.resize(entries);
  std::vector<int> next(rows.start.begin(), rows.start.end() - 1);
  for (std::size_t col = 0; col < n; ++col)
    for (int k = pattern.col_ptr[col]; k < pattern.col_ptr[col + 1]; ++k) {
      const auto slot = static_cast<std::size_t>(next[static_cast<std::size_t>(pattern.row_index[static_cast<std::size_t>(k)])]++);
      rows.column[slot] = static_cast<int>(col);
      rows.at[slot] = k;
    }
  return rows;
}

template <typename T>
double backward_error(const CscPattern& pattern, const RowOrder& rows, const T* values, const T* x,
                      const T* b, bool transposed, Residual<T>& out) {
  const auto n = static_cast<std::size_t>(pattern.n);
  out.r.resize(n);
  out.scale.resize(n);
  out.x_magnitude.resize(n);
  if (n == 0) return 0;
  const auto x_magnitude = magnitudes(x, out.x_magnitude);
  if (transposed)  // row i of A^T is column i of A
    return gather(n, pattern.col_ptr.data(), pattern.row_index.data(),
                  [values](int j) { return values[j]; }, x_magnitude, x, b, out.r.data(), out.scale.data());
  return gather_plain(n, rows, values, x_magnitude, x, b, out.r.data(), out.scale.data());
}

template double backward_error(const CscPattern&, const RowOrder&, const double*, const double*,
                               const double*, bool, Residual<double>&);
template double backward_error(const CscPattern&, const RowOrder&, const std::complex<double>*,
                               const std::complex<double>*, const std::complex<double>*, bool,
                               Residual<std::complex<double>>&);

void backward_errors(const CscPattern& pattern, const RowOrder& rows, const double* values,
                     const double* x, const double* b, int count, double* r, double* scale,
                     double* omega) {
  const auto n = static_cast<std::size_t>(pattern.n);
  auto at = [&](int c) { return n * static_cast<std::size_t>(c); };
  int c0 = 0;
  static_assert(kBlockColumns == 4, "two pairs a pass");
  for (; c0 + 4 <= count; c0 += 4)  // four columns' sums fit the registers; eight measured slower
    gather_group<2>(n, rows, values, x + at(c0), b + at(c0), r + at(c0), scale + at(c0));
  if (c0 + 2 <= count) gather_group<1>(n, rows, values, x + at(c0), b + at(c0), r + at(c0), scale + at(c0)), c0 += 2;
  for (int c = 0; c < c0; ++c) omega[c] = scanned(r + at(c), scale + at(c), n);
  if (c0 < count) {
    const double* last = x + at(c0);
    omega[c0] = gather_plain(n, rows, values, [last](std::size_t k) { return std::abs(last[k]); }, last,
                             b + at(c0), r + at(c0), scale + at(c0));
  }
}

}  // namespace tacet
