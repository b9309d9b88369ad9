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
// evaluations; a panel whose two estimates differ by more than its share of
// the tolerance is bisected (adaptive bisection), so a sharp resonance gets
// the points it needs and a flat stretch does not.
//
// The integrand is a vector of m values (the power of every noise source at
// f, say); the first `checked` of them decide convergence, each against its
// own total: e.g. the summed output power and the input-referred power, while
// the individual contributors, whose sum is the first, follow along.

#include <cstddef>
#include <functional>
#include <string>
#include <vector>

namespace tacet {

struct BandIntegrationOptions {
  double relative_tolerance = 1e-8;  ///< on each checked component's integral
  int panels_per_decade = 1;         ///< first cut of the band, before any bisection
  int max_depth = 24;                ///< bisections of one first-cut panel, at most
};

/// Writes the m integrand values at frequency f (Hz) into out[0..m).
using BandIntegrand = std::function<void(double f, double* out)>;

struct BandIntegral {
  std::vector<double> values;  ///< m integrals, integrand unit x Hz
  int evaluations = 0;         ///< integrand calls (one adjoint solve each in noise)
  bool converged = true;       ///< false when some panel hit max_depth
};

/// Integrates over [f1, f2] (0 < f1 < f2, Hz). `checked` <= m.
BandIntegral integrate_band(double f1, double f2, std::size_t m, std::size_t checked,
                            const BandIntegrand& integrand,
                            const BandIntegrationOptions& options = {});

/// Nodes and weights of the n-point Gauss-Legendre rule (kept for tests and
/// callers that want a plain rule) on [-1, 1], computed by
/// Newton's method on the Legendre polynomial P_n (to machine precision).
void gauss_legendre(int n, std::vector<double>& nodes, std::vector<double>& weights);

}  // namespace tacet
