// Band integration: Gauss-Kronrod (G7, K15) panels in ln f with adaptive bisection.

#include "tacet/solve/integrate.hpp"
#include "tacet/common/constants.hpp"

#include <algorithm>
#include <cmath>

namespace tacet {
namespace {


// The 7-point Gauss rule and its 15-point Kronrod extension on [-1, 1]
// (Kronrod 1965; the values of QUADPACK's qk15, Piessens et al. 1983). Only
// the non-negative nodes are listed; the rules are symmetric. The Gauss nodes
// are the Kronrod nodes of odd index, so one set of 15 evaluations gives both
// estimates, and |K15 - G7| bounds the error of K15 generously.
constexpr double kKronrodNodes[8] = {
    0.991455371120812639206854697526329, 0.949107912342758524526189684047851,
    0.864864423359769072789712788640926, 0.741531185599394439863864773280788,
    0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
    0.207784955007898467600689403773245, 0.0};
constexpr double kKronrodWeights[8] = {
    0.022935322010529224963732008058970, 0.063092092629978553290700663189204,
    0.104790010322250183839876322541518, 0.140653259715525918745189590510238,
    0.169004726639267902826583426598550, 0.190350578064785409913256402421014,
    0.204432940075298892414161999234649, 0.209482141084727828012999174891714};
constexpr double kGaussWeights[4] = {  // at Kronrod nodes 1, 3, 5 and 7 (the centre)
    0.129484966168869693270611432679082, 0.279705391489276667901467771423780,
    0.381830050505118944950369775488975, 0.417959183673469387755102040816327};

class Integrator {
 public:
  Integrator(std::size_t m, std::size_t checked, const BandIntegrand& integrand,
             const BandIntegrationOptions& options, double band_width)
      : m_(m), checked_(checked), integrand_(integrand), options_(options),
        band_width_(band_width), sample_(m),
        scratch_(4 * static_cast<std::size_t>(options.max_depth + 1), std::vector<double>(m)) {}

  /// K15 and G7 on [a, b] in u = ln f, written (not added) into kronrod and gauss.
  void panel(double a, double b, double* kronrod, double* gauss) {
    const double middle = 0.5 * (a + b), half = 0.5 * (b - a);
    std::fill(kronrod, kronrod + m_, 0.0);
    std::fill(gauss, gauss + m_, 0.0);
    for (int k = 0; k < 15; ++k) {
      const int node = k < 8 ? k : 14 - k;  // 0..7, then the mirrored 6..0
      const double x = (k < 8 ? 1 : -1) * kKronrodNodes[node];
      const double f = std::exp(middle + half * x);
      integrand_(f, sample_.data());
      ++evaluations_;
      const double jacobian = half * f;
      const double wk = jacobian * kKronrodWeights[node];
      const double wg = node % 2 == 1 ? jacobian * kGaussWeights[node / 2] : node == 7 ? jacobian * kGaussWeights[3] : 0;
      for (std::size_t j = 0; j < m_; ++j) {
        kronrod[j] += wk * sample_[j];
        gauss[j] += wg * sample_[j];
      }
    }
  }

  /// Adds [a, b]'s K15 into `sum` when it agrees with G7 to this panel's share
  /// of the tolerance, else bisects (adaptive bisection).
  void refine(double a, double b, const double* kronrod, const double* gauss, int depth,
              const std::vector<double>& tol, double* sum) {
    const double share = (b - a) / band_width_;
    bool agree = true;
    for (std::size_t j = 0; j < checked_; ++j)
      agree = agree && std::abs(kronrod[j] - gauss[j]) <= tol[j] * share;
    if (agree || depth == options_.max_depth) {
      if (!agree) converged_ = false;
      for (std::size_t j = 0; j < m_; ++j) sum[j] += kronrod[j];
      return;
    }
    double* left_k = scratch_[4 * static_cast<std::size_t>(depth)].data();
    double* left_g = scratch_[4 * static_cast<std::size_t>(depth) + 1].data();
    double* right_k = scratch_[4 * static_cast<std::size_t>(depth) + 2].data();
    double* right_g = scratch_[4 * static_cast<std::size_t>(depth) + 3].data();
    const double middle = 0.5 * (a + b);
    panel(a, middle, left_k, left_g);
    panel(middle, b, right_k, right_g);
    refine(a, middle, left_k, left_g, depth + 1, tol, sum);
    refine(middle, b, right_k, right_g, depth + 1, tol, sum);
  }

  int evaluations() const { return evaluations_; }
  bool converged() const { return converged_; }

 private:
  std::size_t m_, checked_;
  const BandIntegrand& integrand_;
  const BandIntegrationOptions& options_;
  double band_width_;
  std::vector<double> sample_;
  std::vector<std::vector<double>> scratch_;  // K and G of two halves per depth
  int evaluations_ = 0;
  bool converged_ = true;
};

}  // namespace

void gauss_legendre(int n, std::vector<double>& nodes, std::vector<double>& weights) {
  nodes.assign(static_cast<std::size_t>(n), 0.0);
  weights.assign(static_cast<std::size_t>(n), 0.0);
  for (int i = 0; i < n; ++i) {
    // Chebyshev-like first guess for the i-th root, then Newton on P_n.
    double x = std::cos(kPi * (i + 0.75) / (n + 0.5));
    double derivative = 1;
    for (int iteration = 0; iteration < 100; ++iteration) {
      double p0 = 1, p1 = x;
      for (int k = 2; k <= n; ++k) {
        const double p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      derivative = n * (x * p1 - p0) / (x * x - 1);
      const double step = p1 / derivative;
      x -= step;
      if (std::abs(step) < 1e-16) break;
    }
    nodes[static_cast<std::size_t>(i)] = x;
    weights[static_cast<std::size_t>(i)] = 2 / ((1 - x * x) * derivative * derivative);
  }
}

BandIntegral integrate_band(double f1, double f2, std::size_t m, std::size_t checked,
                            const BandIntegrand& integrand,
                            const BandIntegrationOptions& options) {
  const double ua = std::log(f1), ub = std::log(f2);
  const double decades = (ub - ua) / std::log(10.0);
  const int panels = std::max(1, static_cast<int>(std::ceil(decades * options.panels_per_decade)));
  const double width = (ub - ua) / panels;
  Integrator integrator(m, std::min(checked, m), integrand, options, ub - ua);

  // First cut: K15 and G7 per panel; the K15 sums set each checked tolerance.
  const auto size = static_cast<std::size_t>(panels);
  std::vector<std::vector<double>> kronrod(size, std::vector<double>(m)), gauss(size, std::vector<double>(m));
  std::vector<double> tol(m, 0.0);
  for (std::size_t p = 0; p < size; ++p) {
    integrator.panel(ua + static_cast<double>(p) * width, p + 1 == size ? ub : ua + static_cast<double>(p + 1) * width,
                     kronrod[p].data(), gauss[p].data());
    for (std::size_t j = 0; j < m; ++j) tol[j] += kronrod[p][j];
  }
  for (double& t : tol) t = options.relative_tolerance * std::abs(t) + 1e-300;

  BandIntegral result;
  result.values.assign(m, 0.0);
  for (std::size_t p = 0; p < size; ++p)
    integrator.refine(ua + static_cast<double>(p) * width, p + 1 == size ? ub : ua + static_cast<double>(p + 1) * width,
                      kronrod[p].data(), gauss[p].data(), 0, tol, result.values.data());
  result.evaluations = integrator.evaluations();
  result.converged = integrator.converged();
  return result;
}

}  // namespace tacet
