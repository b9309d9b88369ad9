#pragma once
// Band integration of power spectral densities, independent of any printed
// frequency grid.
//
// The integral I = integral_{f1}^{f2} g(f) df is taken in u = ln f,
//   I = integral_{ln f1}^{ln f2} g(e^u) e^u du,
// where the densities of circuits are smooth: a single pole 1/(1 + (f/fc)^2)
// and a 1/f corner (1 + fc/f) both become analytic functions of u with no
// feature narrower than about one unit of u. The u interval is cut into
// panels (one per decade to start) and each panel is integrated with the
// 15-point Gauss-Kronrod rule (exact for polynomials of degree 22), whose
// embedded 7-point Gauss rule gives an error estimate from the same 15
// evaluations.
//
// Global adaptive bisection (the strategy of QUADPACK's qag, Piessens et al.
// 1983): while the summed error estimate of a checked component exceeds its
// tolerance times its current total, the panel with the largest error is
// bisected. The tolerance follows the total as it is refined, so a first cut
// that overestimates (a sample on a spike) does not loosen it.
//
// A resonance far narrower than a panel (Q = 1e6 is a width of 1e-6 in u) is
// invisible to the 15 interior nodes when it sits on a panel's end, which is
// where bisection puts it if a node once hit it. So the integrand is also
// sampled at every panel end (one more evaluation per bisection), and a panel
// whose trapezoid estimate (end samples x width) exceeds kEndExcess times its
// Kronrod estimate carries that excess as error: a smooth density never does
// this on a panel of a decade or less (a density rising as f^4 gives 5.8), a
// peak at or near the end always does, and bisection then closes in on it.
//
// The integrand is a vector of m values (the power of every noise source at
// f, say); the first `checked` of them decide convergence, each against its
// own total: e.g. the summed output power and the input-referred power, while
// the individual contributors, whose sum is the first, follow along.
//
// A checked component that is not finite at some sample (an input that does
// not reach the probe makes the input-referred power infinite there) has no
// finite integral: it is reported at once in `non_finite_at` and no longer
// steers the bisection, so the other components finish as usual; when every
// checked component is non-finite the integral ends at that sample.

#include <cstddef>
#include <functional>
#include <string>
#include <vector>

namespace tacet {

struct BandIntegrationOptions {
  double relative_tolerance = 1e-8;  ///< on each checked component's integral
  int panels_per_decade = 1;         ///< first cut of the band, before any bisection
  int max_depth = 40;                ///< bisections of one first-cut panel, at most
  int max_bisections = 4000;         ///< over the whole band, at most (bounds the time)
};

/// Writes the m integrand values at frequency f (Hz) into out[0..m).
using BandIntegrand = std::function<void(double f, double* out)>;

struct BandIntegral {
  std::vector<double> values;  ///< m integrals, integrand unit x Hz
  int evaluations = 0;         ///< integrand calls (one adjoint solve each in noise)
  bool converged = true;       ///< false when a panel hit max_depth or max_bisections ran out
  /// Per checked component: Hz of the first sample where it was not finite
  /// (its value is then not finite either); 0 when it was finite throughout.
  std::vector<double> non_finite_at;
};

/// Integrates over [f1, f2] (0 < f1 < f2, Hz). `checked` <= m.
BandIntegral integrate_band(double f1, double f2, std::size_t m, std::size_t checked,
                            const BandIntegrand& integrand,
                            const BandIntegrationOptions& options = {});

/// Writes the m integrand values at each of `count` frequencies: out[k m ..
/// (k + 1) m) at f[k]. The samples are independent, so a caller may compute
/// them on several threads; the integrator asks for a panel's samples (or a
/// bisection's 31) at once and sums them one at a time in a fixed order, so
/// the integral does not depend on how the batch was shared out. A batch
/// that throws stands for the first of its samples that fails.
using BandBatchIntegrand = std::function<void(const double* f, std::size_t count, double* out)>;

/// integrate_band with the samples asked for in batches.
BandIntegral integrate_band_batched(double f1, double f2, std::size_t m, std::size_t checked,
                                    const BandBatchIntegrand& integrand,
                                    const BandIntegrationOptions& options = {});

/// Nodes and weights of the n-point Gauss-Legendre rule (kept for tests and
/// callers that want a plain rule) on [-1, 1], computed by
/// Newton's method on the Legendre polynomial P_n (to machine precision).
void gauss_legendre(int n, std::vector<double>& nodes, std::vector<double>& weights);

}  // namespace tacet
