#pragma once
// Radau IIA of order 5 (3 stages) for the linear DAE  C x' + G x = b, t > 0,
// with C possibly singular (the MNA's algebraic rows), from a state x(0).
//
// Why this method: it is L-stable and stiffly accurate (the step's last stage
// is its end point), so algebraic unknowns land on their constraint at every
// step end and stiff modes (a fast op-amp pole beside a slow RC) are damped,
// not rung; it is convergent for index-1 DAEs, which the MNA of a circuit
// with a consistent topology is. Hairer and Wanner, Solving Ordinary
// Differential Equations II (Springer, 2nd ed. 1996), section IV.8.
//
// The system is linear, so the stage equations are solved exactly, with no
// Newton iteration: transformed by T (T^-1 A^-1 T = diag(gamma, [alpha -beta;
// beta alpha])), they are one real system (gamma/h C + G) w1 = r and one
// complex (alpha + i beta)/h C + G) v = r', on two sparse LU factorisations
// that are kept while the step size h is kept, i.e. the MNA matrix Y(s) at a
// real and at a complex s. Error estimate: the embedded formula of RADAU5 (a
// third-order error, one more real solve), refined once on a rejected or the
// first step. Step size: h_new = h / clamp(err^(1/4) / 0.9, 1/8, 5), the old h
// kept when h_new / h lies in [1, 2): a new h costs two factorisations, a
// step three solves, so growing in larger, rarer jumps is the cheaper way
// (on a series RLC: 30 % more steps, a quarter of the factorisations).
//
// Dense output: the collocation polynomial of each step, the cubic through
// x(t0), x(t0 + c1 h), x(t0 + c2 h), x(t0 + h) (c = (4 -+ sqrt 6)/10), which
// Step exposes as the four values.

#include <array>
#include <complex>
#include <functional>
#include <memory>
#include <vector>

#include "tacet/solve/pencil.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

namespace radau {
/// The collocation nodes in (0, 1].
inline constexpr std::array<double, 3> kNodes{0.15505102572168219018, 0.64494897427831780982,
                                              1.0};
/// Butcher matrix A of Radau IIA (3 stages), its eigen-transform T and T^-1.
extern const double kA[3][3];
extern const double kT[3][3];
extern const double kTInverse[3][3];
/// gamma, alpha, beta: A^-1 has the eigenvalues gamma and alpha +- i beta.
extern const double kGamma, kAlpha, kBeta;
}  // namespace radau

/// One accepted step from t0 to t0 + h. The vectors are the integrator's and
/// change with the next step.
struct RadauStep {
  double t0 = 0, h = 0;
  const std::vector<double>* start = nullptr;                  ///< x(t0)
  std::array<const std::vector<double>*, 3> stages{};         ///< x(t0 + c_i h); the last is x(t0 + h)
};

class RadauIntegrator {
 public:
  /// `error_norm(err)` turns an error estimate (size() values) into a number
  /// that must be <= 1 for a step to be accepted (the caller's weights).
  using ErrorNorm = std::function<double(const std::vector<double>&)>;

  RadauIntegrator(const SparsePencil& pencil, std::vector<double> b, SolverKind kind);

  /// The state at t = 0 (default: zero) and the first step to try (s).
  /// `consistent`, when given, is the state just after t = 0 with the
  /// algebraic unknowns on their constraints (x0 may have them off, as the
  /// state before a step does): the stages depend on x0 only through C x0, so
  /// they take x0, while the first error estimate, which needs f(x(0)), takes
  /// `consistent`.
  void start(std::vector<double> x0, double first_step, std::vector<double> consistent = {});
  /// Takes one accepted step, retrying smaller ones; throws SolveError when
  /// the step size underflows or a matrix is singular.
  RadauStep advance(const ErrorNorm& error_norm);

  double time() const { return t_; }
  const std::vector<double>& state() const { return y_; }
  int factorisations() const { return factorisations_; }
  int rejected() const { return rejected_; }

 private:
  void factor(double h);
  double attempt(double h, const ErrorNorm& error_norm, bool refine);

  const SparsePencil& pencil_;
  std::vector<double> b_;
  std::unique_ptr<RealSparseLu> real_;
  std::unique_ptr<SparseLu> complex_;
  std::vector<double> real_values_;
  std::vector<std::complex<double>> complex_values_;
  double factored_h_ = 0;
  double t_ = 0, h_ = 0;
  bool first_ = true;
  int factorisations_ = 0, rejected_ = 0;
  std::vector<double> y_, start_, r0_, w1_, f_, cont_, err_;
  std::vector<double> estimate_from_;  // the first step's consistent start; empty after it
  std::vector<std::complex<double>> v_;
  std::array<std::vector<double>, 3> z_, stage_;
};

}  // namespace tacet
