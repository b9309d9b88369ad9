// Band integration: Gauss-Kronrod (G7, K15) panels in ln f with adaptive bisection.

#include "tacet/solve/integrate.hpp"
#include "tacet/common/constants.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

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

// A smooth density's trapezoid estimate stays within this factor of its
// Kronrod estimate on a decade (see the header); beyond it, a panel end sits
// on a feature the interior nodes miss.
constexpr double kEndExcess = 8;
constexpr double kTiny = 1e-300;  // absolute floor of a tolerance: an all-zero integrand is done

// One panel [a, b] in u = ln f; its Kronrod values and error estimates live
// in the integrator's stores at `slot`.
struct Panel {
  double a, b;
  int depth;
  std::size_t slot;
};

class Integrator {
 public:
  Integrator(std::size_t m, std::size_t checked, const BandBatchIntegrand& integrand,
             const BandIntegrationOptions& options)
      : m_(m), checked_(checked), integrand_(integrand), options_(options),
        batch_(kMostBatch * m), gauss_(checked), end_(checked), non_finite_at_(checked, 0.0) {
    planned_.reserve(kMostBatch);
    batch_f_.reserve(kMostBatch);
  }

  /// First cut: `count` equal panels over [ua, ub].
  void cut(double ua, double ub, int count) {
    const double width = (ub - ua) / count;
    for (int p = 0; p < count && !stopped_; ++p) {
      const double a = ua + p * width, b = p + 1 == count ? ub : ua + (p + 1) * width;
      // This panel's samples in the order they are taken: (the band's start,) its end, its nodes.
      if (p == 0) plan(ua);
      plan(b);
      plan_nodes(a, b);
      fetch();
      if (p == 0) end_sample(ua, end_.data());
      if (stopped_) break;
      const Panel panel{a, b, 0, new_slot()};
      std::copy(end_.begin(), end_.end(), end_at_a(panel));
      end_sample(b, end_at_b(panel));
      std::copy(end_at_b(panel), end_at_b(panel) + checked_, end_.begin());
      panels_.push_back(panel);
      estimate(panel);
    }
  }

  /// Bisects the panel with the largest error until every live checked
  /// component meets its tolerance, or nothing more can be bisected.
  void refine() {
    while (!stopped_) {
      const int worst = worst_component();
      if (worst < 0) return;
      const int panel = worst_panel(static_cast<std::size_t>(worst));
      if (panel < 0 || bisections_ == options_.max_bisections) {
        converged_ = false;
        return;
      }
      bisect(static_cast<std::size_t>(panel));
    }
  }

  BandIntegral result() const {
    BandIntegral r;
    r.values.assign(m_, stopped_ ? std::numeric_limits<double>::quiet_NaN() : 0.0);
    if (!stopped_)
      for (const Panel& p : panels_)
        for (std::size_t j = 0; j < m_; ++j) r.values[j] += kronrod_[p.slot * m_ + j];
    for (std::size_t j = 0; j < checked_; ++j)
      if (non_finite_at_[j] != 0) r.values[j] = std::numeric_limits<double>::infinity();
    r.evaluations = evaluations_;
    r.converged = converged_ && !stopped_;
    r.non_finite_at = non_finite_at_;
    return r;
  }

 private:
  // One sample of every component at u; a checked component that is not
  // finite is noted, and with none left finite the integral stops.
  void sample(double u) {
    const double f = std::exp(u);
    if (next_ >= batch_f_.size() || batch_f_[next_] != f)  // an unplanned sample: plan it alone
      plan(u), fetch();
    sample_ = &batch_[next_++ * m_];
    ++evaluations_;
    bool live = false;
    for (std::size_t j = 0; j < checked_; ++j) {
      if (non_finite_at_[j] == 0 && !std::isfinite(sample_[j])) non_finite_at_[j] = f;
      live = live || non_finite_at_[j] == 0;
    }
    stopped_ = !live;
  }

  // Samples are planned in the order they will be taken, then computed
  // together (on several threads if the integrand likes) before the first is
  // taken: the values, and so every sum, are those of one sample at a time.
  void plan(double u) { planned_.push_back(u); }
  void plan_nodes(double a, double b) {
    for (int k = 0; k < 15; ++k) plan(node_u(a, b, k));
  }
  void fetch() {
    batch_f_.clear();
    for (double u : planned_) batch_f_.push_back(std::exp(u));
    planned_.clear();
    if (batch_.size() < batch_f_.size() * m_) batch_.resize(batch_f_.size() * m_);
    integrand_(batch_f_.data(), batch_f_.size(), batch_.data());
    next_ = 0;
  }
  // Kronrod node k of the panel [a, b]: 0..7, then the mirrored 6..0.
  static double node_u(double a, double b, int k) {
    const int node = k < 8 ? k : 14 - k;
    const double middle = 0.5 * (a + b), half = 0.5 * (b - a);
    return middle + half * (k < 8 ? 1 : -1) * kKronrodNodes[node];
  }

  // The checked components of the u-space integrand g(e^u) e^u at a panel end.
  void end_sample(double u, double* out) {
    sample(u);
    for (std::size_t j = 0; j < checked_; ++j) out[j] = sample_[j] * std::exp(u);
  }

  std::size_t new_slot() {
    const std::size_t slot = slots_++;
    kronrod_.resize(slots_ * m_);
    error_.resize(slots_ * checked_);
    ends_.resize(slots_ * 2 * checked_);
    return slot;
  }
  double* end_at_a(const Panel& p) { return &ends_[p.slot * 2 * checked_]; }
  double* end_at_b(const Panel& p) { return &ends_[p.slot * 2 * checked_ + checked_]; }

  // K15 into the panel's slot, and per checked component the error estimate
  // max(|K15 - G7|, end excess).
  void estimate(const Panel& panel) {
    double* kronrod = &kronrod_[panel.slot * m_];
    std::fill(kronrod, kronrod + m_, 0.0);
    std::fill(gauss_.begin(), gauss_.end(), 0.0);
    const double half = 0.5 * (panel.b - panel.a);
    for (int k = 0; k < 15 && !stopped_; ++k) {
      const int node = k < 8 ? k : 14 - k;  // 0..7, then the mirrored 6..0
      const double u = node_u(panel.a, panel.b, k);
      sample(u);
      const double jacobian = half * std::exp(u);
      const double wk = jacobian * kKronrodWeights[node];
      const double wg = node % 2 == 1 ? jacobian * kGaussWeights[node / 2]
                        : node == 7   ? jacobian * kGaussWeights[3]
                                      : 0;
      for (std::size_t j = 0; j < m_; ++j) kronrod[j] += wk * sample_[j];
      for (std::size_t j = 0; j < checked_; ++j) gauss_[j] += wg * sample_[j];
    }
    const double* at_a = end_at_a(panel);
    const double* at_b = end_at_b(panel);
    for (std::size_t j = 0; j < checked_; ++j) {
      const double trapezoid = 0.5 * (std::abs(at_a[j]) + std::abs(at_b[j])) * (panel.b - panel.a);
      const double excess = trapezoid - kEndExcess * std::abs(kronrod[j]);
      error_[panel.slot * checked_ + j] = std::max(std::abs(kronrod[j] - gauss_[j]), excess);
    }
  }

  // The left half keeps the parent's slot, the right half takes a new one.
  void bisect(std::size_t index) {
    const Panel parent = panels_[index];
    ++bisections_;
    const double middle = 0.5 * (parent.a + parent.b);
    const Panel left{parent.a, middle, parent.depth + 1, parent.slot};
    const Panel right{middle, parent.b, parent.depth + 1, new_slot()};
    plan(middle);
    plan_nodes(left.a, left.b);
    plan_nodes(right.a, right.b);
    fetch();
    std::copy(end_at_b(left), end_at_b(left) + checked_, end_at_b(right));
    end_sample(middle, end_at_b(left));
    std::copy(end_at_b(left), end_at_b(left) + checked_, end_at_a(right));
    panels_[index] = left;
    panels_.push_back(right);
    if (!stopped_) estimate(left);
    if (!stopped_) estimate(right);
  }

  // The live checked component furthest above its tolerance; -1 when all meet it.
  int worst_component() const {
    int worst = -1;
    double largest = 1;
    for (std::size_t j = 0; j < checked_; ++j) {
      if (non_finite_at_[j] != 0) continue;
      double total = 0, error = 0;
      for (const Panel& p : panels_) {
        total += kronrod_[p.slot * m_ + j];
        error += error_[p.slot * checked_ + j];
      }
      const double ratio = error / (options_.relative_tolerance * std::abs(total) + kTiny);
      if (ratio > largest) largest = ratio, worst = static_cast<int>(j);
    }
    return worst;
  }

  // The panel with the largest error in component j that may still be
  // bisected; -1: none.
  int worst_panel(std::size_t j) const {
    int worst = -1;
    double largest = -1;
    for (std::size_t p = 0; p < panels_.size(); ++p) {
      const double error = error_[panels_[p].slot * checked_ + j];
      if (panels_[p].depth < options_.max_depth && error > largest)
        largest = error, worst = static_cast<int>(p);
    }
    return worst;
  }

  std::size_t m_, checked_;
  static constexpr std::size_t kMostBatch = 31;  // a bisection: the middle, 15 + 15 nodes
  const BandBatchIntegrand& integrand_;
  const BandIntegrationOptions& options_;
  std::vector<double> planned_, batch_f_;  // u to sample next; f of the batch computed
  std::vector<double> batch_;              // m values per sample of the batch
  std::size_t next_ = 0;                   // the batch's next sample
  const double* sample_ = nullptr;         // the sample taken last
  std::vector<double> gauss_, end_;
  // Per slot: m Kronrod values, `checked` errors, 2 x `checked` end values.
  std::vector<double> kronrod_, error_, ends_;
  std::size_t slots_ = 0;
  std::vector<Panel> panels_;
  std::vector<double> non_finite_at_;
  int evaluations_ = 0, bisections_ = 0;
  bool converged_ = true, stopped_ = false;
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
  const BandBatchIntegrand batch = [&](const double* f, std::size_t count, double* out) {
    for (std::size_t k = 0; k < count; ++k) integrand(f[k], out + k * m);
  };
  return integrate_band_batched(f1, f2, m, checked, batch, options);
}

BandIntegral integrate_band_batched(double f1, double f2, std::size_t m, std::size_t checked,
                                    const BandBatchIntegrand& integrand,
                                    const BandIntegrationOptions& options) {
  const double ua = std::log(f1), ub = std::log(f2);
  const double decades = (ub - ua) / std::log(10.0);
  const int panels = std::max(1, static_cast<int>(std::ceil(decades * options.panels_per_decade)));
  Integrator integrator(m, std::min(checked, m), integrand, options);
  integrator.cut(ua, ub, panels);
  integrator.refine();
  return integrator.result();
}

}  // namespace tacet
