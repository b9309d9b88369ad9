#pragma once
// The MNA system as a sparse linear pencil G + s C, for analyses in the time
// domain (settle): C x' + G x = b u(t).
//
// The MNA matrix is a polynomial in s of degree two where an op amp has a
// second pole: its gain row holds (1 + s/wp)(1 + s/wp2)/aol. Each such entry
// (r, c) gets one more unknown w = (s / sigma) x_c (sigma = c1/c2, so w is of
// the size of x_c), the row  w - (s / sigma) x_c = 0,  and the entry becomes
// c0 + c1 s on x_c plus c2 sigma s on w: a pencil of the same determinant up
// to a constant, so the op amp's second pole is a state of the time response
// (the same construction as the dense one of poles.hpp, here sparse).
//
// Unknowns: the MNA's (mna.hpp) first, in their order, then one w per
// quadratic entry. Both matrices share one CSC pattern (their union).

#include <complex>
#include <vector>

#include "tacet/solve/mna.hpp"
#include "tacet/solve/sparse_solver.hpp"

namespace tacet {

struct SparsePencil {
  CscPattern pattern;      ///< the union of G's and C's entries
  std::vector<double> g;   ///< G in pattern order (S, or 1 on incidence entries)
  std::vector<double> c;   ///< C in pattern order (F, H, s)
  int mna_unknowns = 0;    ///< the first unknowns are the MNA's; the rest are w's

  int size() const { return pattern.n; }
  bool has_storage() const;  ///< some entry of C is non-zero
  /// values = G + s C, in pattern order.
  void assemble(double s, double* values) const;
  void assemble(std::complex<double> s, std::complex<double>* values) const;
  /// out = G x and out = C x (size() values each).
  void multiply_g(const double* x, double* out) const;
  void multiply_c(const double* x, double* out) const;
};

/// The pencil of an assembled MNA system; linear in the circuit's size.
SparsePencil sparse_pencil(const MnaSystem& mna);

}  // namespace tacet
