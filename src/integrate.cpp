// Band integration: Gauss-Legendre panels in ln f with adaptive bisection.

#include "tacet/integrate.hpp"

#include <algorithm>
#include <cmath>

namespace tacet {
namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr int kOrder = 8;  // exact for degree 15 on each panel

struct Rule {
  std::vector<double> nodes, weights;
  Rule() { gauss_legendre(kOrder, nodes, weights); }
};

const Rule& rule() {
  static const Rule r;
  return r;
}

class Integrator {
 public:
  Integrator(std::size_t m, std::size_t checked, const BandIntegrand& integrand,
             const BandIntegrationOptions& options, double band_width)
      : m_(m), checked_(checked), integrand_(integrand), options_(options),
        band_width_(band_width), sample_(m),
        scratch_(2 * static_cast<std::size_t>(options.max_depth + 1), std::vector<double>(m)) {}

  // One rule on [a, b] in u = ln f, written (not added) into out.
  void panel(double a, double b, double* out) {
    const double middle = 0.5 * (a + b), half = 0.5 * (b - a);
    std::fill(out, out + m_, 0.0);
    for (int k = 0; k < kOrder; ++k) {
      const double f = std::exp(middle + half * rule().nodes[static_cast<std::size_t>(k)]);
      integrand_(f, sample_.data());
      ++evaluations_;
      const double weight = half * rule().weights[static_cast<std::size_t>(k)] * f;
      for (std::size_t j = 0; j < m_; ++j) out[j] += weight * sample_[j];
    }
  }

  // Accepts the two halves of [a, b] into `sum` when they agree with `coarse`
  // to this panel's share of the tolerance, else bisects each half again.
  void refine(double a, double b, const double* coarse, int depth, const std::vector<double>& tol,
              double* sum) {
    double* left = scratch_[2 * static_cast<std::size_t>(depth)].data();
    double* right = scratch_[2 * static_cast<std::size_t>(depth) + 1].data();
    const double middle = 0.5 * (a + b);
    panel(a, middle, left);
    panel(middle, b, right);
    const double share = (b - a) / band_width_;
    bool agree = true;
    for (std::size_t j = 0; j < checked_; ++j)
      agree = agree && std::abs(left[j] + right[j] - coarse[j]) <= tol[j] * share;
    if (agree || depth == options_.max_depth) {
      if (!agree) converged_ = false;
      for (std::size_t j = 0; j < m_; ++j) sum[j] += left[j] + right[j];
      return;
    }
    refine(a, middle, left, depth + 1, tol, sum);
    refine(middle, b, right, depth + 1, tol, sum);
  }

  int evaluations() const { return evaluations_; }
  bool converged() const { return converged_; }

 private:
  std::size_t m_, checked_;
  const BandIntegrand& integrand_;
  const BandIntegrationOptions& options_;
  double band_width_;
  std::vector<double> sample_;
  std::vector<std::vector<double>> scratch_;  // two halves per depth
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

  // First cut: one rule per panel, whose sum sets each checked tolerance.
  std::vector<std::vector<double>> coarse(static_cast<std::size_t>(panels), std::vector<double>(m));
  std::vector<double> tol(m, 0.0);
  for (int p = 0; p < panels; ++p) {
    integrator.panel(ua + p * width, p + 1 == panels ? ub : ua + (p + 1) * width,
                     coarse[static_cast<std::size_t>(p)].data());
    for (std::size_t j = 0; j < m; ++j) tol[j] += coarse[static_cast<std::size_t>(p)][j];
  }
  for (double& t : tol) t = options.relative_tolerance * std::abs(t) + 1e-300;

  BandIntegral result;
  result.values.assign(m, 0.0);
  for (int p = 0; p < panels; ++p)
    integrator.refine(ua + p * width, p + 1 == panels ? ub : ua + (p + 1) * width,
                      coarse[static_cast<std::size_t>(p)].data(), 0, tol, result.values.data());
  result.evaluations = integrator.evaluations();
  result.converged = integrator.converged();
  return result;
}

}  // namespace tacet
