#pragma once
// Poles and zeros: the natural frequencies of the small-signal circuit, the
// finite generalised eigenvalues s of (G + s C) x = 0 of the MNA system, and
// with a probe and an input the finite zeros of that transfer.
//
// The MNA matrix is a polynomial in s of degree two where an op amp has a
// second pole (its gain row holds (1 + s/wp)(1 + s/wp2)/aol). Each such
// entry (r, c) gets one more unknown w = (s/sigma) x_c, sigma = c1/c2 so the
// new entries are of the size of the old, which makes the pencil linear:
// G + s C with det unchanged up to a constant, so the finite eigenvalues are
// the roots of det Y(s), the op amp's internal poles among them.
//
// Zeros are the finite eigenvalues of the system pencil
// [[G + s C, b], [c(s)^T, 0]] (b the input's unit excitation, c the probe's
// functional): where it loses rank the transfer c^T (G + sC)^-1 b vanishes.
// Zeros more than 1e4 times the highest pole's |s| away are dropped as the
// imperfectly resolved infinite eigenvalues of that larger pencil.
// A pole-zero pair that cancels (a mode the input cannot reach or the probe
// cannot see) is listed in both.
//
// Eigen's dense real QZ (GeneralizedEigenSolver): G and C are real, C is
// singular (algebraic rows: sources, resistors), so no symmetric or Cholesky
// based solver applies and the QZ's alpha/beta form keeps the infinite
// eigenvalues apart (beta ~ 0). Before it, s is scaled by w0 = |G|/|C|
// (Frobenius), so the two matrices have equal norms; an eigenvalue with
// |alpha| > 1e10 |beta| is taken as infinite. Cost O(N^3), memory O(N^2).
//
// Above kMaxPoleUnknowns the poles alone are found block by block: in block
// upper triangular form (solve/block_form.hpp) P (G + s C) Q has the same
// diagonal blocks at every s, so det(G + s C) is the product of the blocks'
// determinants and the poles are the blocks' poles together: a cascade of
// stages, each a small block, costs the sum of its stages (linear in its
// length). A block beyond kMaxPoleUnknowns (a long passive ladder is one
// strongly connected block), or zeros of a pencil that large (the bordered
// system pencil couples the input to the probe across every block), are
// refused with a clear error.

#include <complex>
#include <cstddef>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"

namespace tacet {

/// Largest pencil (MNA unknowns plus one per op amp with a second pole) the
/// dense method serves; QZ takes about a second there on one core.
inline constexpr int kMaxPoleUnknowns = 600;

class MnaSystem;

/// The size of the pencil run_poles solves for this MNA system: its unknowns
/// plus one per entry quadratic in s (an op amp with a second pole).
int pole_unknowns(const MnaSystem& mna);
/// The largest diagonal block of that pencil in block triangular form: what
/// the dense method must solve whole when the pencil is beyond kMaxPoleUnknowns.
int largest_pole_block(const MnaSystem& mna);

struct PolesOptions {
  std::string probe;  ///< with input: the transfer whose zeros are found
  std::string input;  ///< a vsource or isource
};

struct Root {
  std::complex<double> s;  ///< rad/s
  double re_hz() const;    ///< Re s / (2 pi)
  double im_hz() const;
  double f0() const;       ///< |s| / (2 pi), Hz
  double q() const;        ///< |s| / (-2 Re s); infinite on the imaginary axis
};

struct PolesResult {
  std::vector<Root> poles;  ///< sorted by f0, then by imaginary part
  std::vector<Root> zeros;  ///< with a probe and an input
  std::string probe, input;
  bool stable = true;                   ///< every pole has Re s < 0
  std::vector<std::string> unstable_loops;  ///< op amps whose margins are negative or whose T starts left of -1
  int unknowns = 0;                     ///< size of the pencil solved
};

/// Throws InputError for a circuit too large for the dense method, a probe or
/// an input that does not resolve, and SolveError for an unsolvable circuit.
PolesResult run_poles(const Circuit& circuit, const PolesOptions& options = {});

}  // namespace tacet
