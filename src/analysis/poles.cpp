// Poles and zeros: a dense linear pencil from the MNA polynomials, then
// Eigen's real QZ; see poles.hpp for the method and its limits.

#include "tacet/analysis/poles.hpp"

#include <Eigen/Dense>
#include <Eigen/Eigenvalues>
#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "tacet/analysis/loop.hpp"
#include "tacet/common/constants.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/solve/block_form.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/pencil.hpp"
#include "tacet/solve/probe.hpp"

namespace tacet {
namespace {

using Matrix = Eigen::MatrixXd;

// Zeros beyond this many times the highest pole's |s| are taken as infinite.
constexpr double kZeroReach = 1e4;

struct Pencil {
  Matrix g, c;
};

// G + s C from the MNA polynomials, one more unknown per quadratic entry;
// `extra` rows and columns are left zero at the end for the caller.
Pencil linear_pencil(const MnaSystem& mna, int extra) {
  const auto entries = mna.polynomials();
  int n = mna.size();
  const int size = pole_unknowns(mna) + extra;
  if (size > kMaxPoleUnknowns)
    throw InputError::usage(
        fmt::format("poles: the circuit has {} unknowns; the dense eigenvalue method serves at "
                    "most {}",
                    size, kMaxPoleUnknowns),
        "use tacet loop for each op amp's margins, or analyse the stage on its own");
  Pencil p{Matrix::Zero(size, size), Matrix::Zero(size, size)};
  for (const auto& e : entries) {
    p.g(e.row, e.col) += e.c0;
    if (e.c2 == 0) {
      p.c(e.row, e.col) += e.c1;
      continue;
    }
    const double sigma = e.c1 != 0 ? std::abs(e.c1 / e.c2) : 1 / std::sqrt(std::abs(e.c2));
    const int w = n++;  // w = (s / sigma) x_col
    p.g(w, w) = 1;
    p.c(w, e.col) = -1 / sigma;
    p.c(e.row, e.col) += e.c1;
    p.c(e.row, w) += e.c2 * sigma;
  }
  return p;
}

bool by_f0(const Root& a, const Root& b) { return a.f0() != b.f0() ? a.f0() < b.f0() : a.s.imag() < b.s.imag(); }

// Finite generalised eigenvalues s of (G + s C) x = 0.
std::vector<Root> finite_roots(const Pencil& p) {
  const double norm_c = p.c.norm();
  if (norm_c == 0) return {};  // no storage element: no natural frequency
  const double w0 = p.g.norm() / norm_c;
  // G x = lambda (w0 C) x with lambda = -s / w0.
  Eigen::GeneralizedEigenSolver<Matrix> qz(p.g, w0 * p.c, false);
  if (qz.info() != Eigen::Success)
    throw SolveError::unsolvable("the eigenvalue iteration (QZ) did not converge");
  std::vector<Root> roots;
  const auto& alpha = qz.alphas();
  const auto& beta = qz.betas();
  for (Eigen::Index k = 0; k < alpha.size(); ++k) {
    if (!(std::abs(alpha(k)) < 1e10 * std::abs(beta(k)))) continue;  // infinite
    std::complex<double> s = -w0 * alpha(k) / beta(k);
    if (std::abs(s) < 1e-12 * w0) s = 0;  // a pole at the origin, not a rounding of it
    if (std::abs(s.imag()) < 1e-12 * std::abs(s)) s.imag(0);
    roots.push_back({s});
  }
  std::sort(roots.begin(), roots.end(), by_f0);
  return roots;
}

std::vector<Root> transfer_zeros(const MnaSystem& mna, const Probe& probe, std::size_t input) {
  const int n = static_cast<int>(linear_pencil(mna, 0).g.rows());
  Pencil p = linear_pencil(mna, 1);
  const Element& source = mna.circuit().elements[input];
  if (source.kind == ElementKind::vsource) {
    p.g(mna.branch_unknown(input), n) = -1;
  } else {  // a unit current out of its first node, into its second
    const int plus = mna.node_unknown(source.nodes[0]), minus = mna.node_unknown(source.nodes[1]);
    if (plus >= 0) p.g(plus, n) = 1;
    if (minus >= 0) p.g(minus, n) = -1;
  }
  std::vector<ProbeTerm> at0, at1;
  probe_functional(probe, mna, 0.0, at0);
  probe_functional(probe, mna, 1.0, at1);
  for (std::size_t k = 0; k < at0.size(); ++k) {
    p.g(n, at0[k].unknown) += at0[k].coefficient.real();
    p.c(n, at1[k].unknown) += (at1[k].coefficient - at0[k].coefficient).real();
  }
  return finite_roots(p);
}

// The poles of a pencil beyond kMaxPoleUnknowns: those of each diagonal block
// of its block triangular form, each block by the dense method.
std::vector<Root> block_poles(const MnaSystem& mna) {
  const SparsePencil pencil = sparse_pencil(mna);
  const auto form = block_form(pencil.pattern);
  int largest = 0;
  if (form)
    for (const auto& b : form->blocks) largest = std::max(largest, b.size);
  if (!form || largest > kMaxPoleUnknowns)
    throw InputError::usage(
        fmt::format("poles: the circuit has {} unknowns, {} of them in one block that the dense "
                    "eigenvalue method must solve whole; it serves at most {}",
                    pencil.size(), form ? largest : pencil.size(), kMaxPoleUnknowns),
        "use tacet loop for each op amp's margins, or analyse the stage on its own");
  std::vector<Root> roots;
  for (const auto& b : form->blocks) {
    Pencil dense{Matrix::Zero(b.size, b.size), Matrix::Zero(b.size, b.size)};
    for (int i = b.entries_begin; i < b.entries_end; ++i) {
      const BlockForm::Entry& e = form->entries[static_cast<std::size_t>(i)];
      dense.g(e.row, e.col) = pencil.g[static_cast<std::size_t>(e.at)];
      dense.c(e.row, e.col) = pencil.c[static_cast<std::size_t>(e.at)];
    }
    const std::vector<Root> own = finite_roots(dense);
    roots.insert(roots.end(), own.begin(), own.end());
  }
  std::sort(roots.begin(), roots.end(), by_f0);
  return roots;
}

std::vector<std::string> unstable_loops(const Circuit& circuit) {
  std::vector<std::string> names;
  bool any = false;
  for (const auto& e : circuit.elements) any = any || e.kind == ElementKind::opamp;
  if (!any) return names;
  for (const auto& loop : run_loop(circuit, LoopOptions{}).loops)
    if ((loop.phase_margin && *loop.phase_margin < 0) || (loop.gain_margin && *loop.gain_margin < 0) ||
        (!loop.t.empty() && regenerative(loop.t.front())))  // a latch
      names.push_back(loop.opamp);
  return names;
}

}  // namespace

int largest_pole_block(const MnaSystem& mna) {
  const SparsePencil pencil = sparse_pencil(mna);
  const auto form = block_form(pencil.pattern);
  if (!form) return pencil.size();
  int largest = 0;
  for (const auto& b : form->blocks) largest = std::max(largest, b.size);
  return largest;
}

int pole_unknowns(const MnaSystem& mna) {
  const auto entries = mna.polynomials();
  return mna.size() + static_cast<int>(std::count_if(entries.begin(), entries.end(),
                                                     [](const auto& e) { return e.c2 != 0; }));
}

double Root::re_hz() const { return s.real() / kTwoPi; }
double Root::im_hz() const { return s.imag() / kTwoPi; }
double Root::f0() const { return std::abs(s) / kTwoPi; }
double Root::q() const { return std::abs(s) / (-2 * s.real()); }

PolesResult run_poles(const Circuit& circuit, const PolesOptions& options) {
  if (options.probe.empty() != options.input.empty())
    throw InputError::usage("zeros need both --probe and --input",
                            "--probe out --input Vin, or neither for the poles alone");
  PolesResult result;
  std::optional<Probe> probe;
  std::size_t input = 0;
  if (!options.probe.empty()) {
    probe = resolve_probe(options.probe, circuit);
    if (probe->kind == ProbeKind::impedance)
      throw InputError::usage("zeros need a voltage or current probe, not an impedance");
    input = resolve_source(options.input, circuit, "--input");
  }
  const MnaSystem mna(circuit);
  result.unknowns = pole_unknowns(mna);
  result.poles = result.unknowns > kMaxPoleUnknowns && !probe ? block_poles(mna) : finite_roots(linear_pencil(mna, 0));
  for (const Root& pole : result.poles) result.stable = result.stable && pole.s.real() < 0;
  if (probe) {
    result.probe = probe->text;
    result.input = options.input;
    result.zeros = transfer_zeros(mna, *probe, input);
    // The system pencil's infinite eigenvalues sit in longer chains than the
    // circuit's, and QZ resolves them only to about eps^(1/k): a "zero" far
    // beyond every pole is one of them, not a property of the transfer.
    double highest = 0;
    for (const Root& pole : result.poles) highest = std::max(highest, std::abs(pole.s));
    if (highest > 0)
      std::erase_if(result.zeros, [&](const Root& z) { return std::abs(z.s) > kZeroReach * highest; });
  }
  if (!result.stable) result.unstable_loops = unstable_loops(circuit);
  return result;
}

}  // namespace tacet
