#include "tacet/solve/response.hpp"

#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "tacet/common/errors.hpp"
#include "tacet/common/spelling.hpp"

namespace tacet {

FrequencyResponse::FrequencyResponse(const Circuit& circuit, SolverKind solver)
    : mna_(std::make_shared<MnaSystem>(circuit)), lu_(make_sparse_lu(solver)), solver_(solver) {
  lu_->analyse(mna_->pattern());
  values_.resize(static_cast<std::size_t>(mna_->pattern().nonzeros()));
  excitation_.resize(static_cast<std::size_t>(mna_->size()));
  allocate_work();
  mna_->excitation(excitation_.data());
  mna_->assemble(0.0, values_.data());  // the constant entries, once
}

FrequencyResponse::FrequencyResponse(const FrequencyResponse& main)
    : mna_(main.mna_), lu_(main.lu_->share_analysis()), solver_(main.solver_),
      values_(main.values_), excitation_(main.excitation_), pending_anchor_(main.anchor_) {
  if (!lu_) {  // a backend that cannot share its analysis makes its own
    lu_ = make_sparse_lu(solver_);
    lu_->analyse(mna_->pattern());
  }
  allocate_work();
}

void FrequencyResponse::allocate_work() {
  x_.resize(excitation_.size());
  y_.resize(excitation_.size());
  z_.resize(excitation_.size());
  w_.resize(excitation_.size());
  scratch_.reserve(8);
}

std::unique_ptr<FrequencyResponse> FrequencyResponse::worker() const {
  return std::unique_ptr<FrequencyResponse>(new FrequencyResponse(*this));
}

void FrequencyResponse::anchor_at(double f) {
  if (anchor_ < 0 && pending_anchor_ < 0) factor_at(f);
}

void FrequencyResponse::restamp() {
  mna_->restamp();
  ++restamps_;
  mna_->assemble(0.0, values_.data());
  mna_->excitation(excitation_.data());
  factored_ = -1;
  solved_ = -1;
}

void FrequencyResponse::factor_at(double f) {
  if (f == factored_) return;
  solved_ = -1;
  single_solved_ = -1;
  if (pending_anchor_ >= 0) {  // a worker takes its pivots where its main response took them
    const double anchor = pending_anchor_;
    pending_anchor_ = -1;
    if (anchor != f) factor_values_at(anchor);
  }
  factor_values_at(f);
  if (anchor_ < 0) anchor_ = f;
  factored_ = f;
}

void FrequencyResponse::factor_values_at(double f) {
  mna_->assemble_varying(std::complex<double>(0, 2 * std::numbers::pi * f), values_.data());
  lu_->at_point(f);
  if (lu_->factor(values_.data()) == FactorStatus::singular) {
    factored_ = -1;
    throw_singular(*mna_, lu_->singular_column(), f);
  }
}

void FrequencyResponse::solve_at(double f) {
  factor_at(f);
  if (f == solved_) return;
  x_ = excitation_;
  lu_->solve(x_.data());
  solved_ = f;
}

const std::vector<std::complex<double>>& FrequencyResponse::adjoint(const Probe& probe) {
  const std::complex<double> s(0, 2 * std::numbers::pi * factored_);
  std::fill(y_.begin(), y_.end(), std::complex<double>{});
  probe_functional(probe, *mna_, s, scratch_);
  for (const ProbeTerm& term : scratch_) y_[static_cast<std::size_t>(term.unknown)] += term.coefficient;
  lu_->solve_transposed(y_.data());
  return y_;
}

std::complex<double> FrequencyResponse::impedance(const Probe& probe) {
  std::fill(z_.begin(), z_.end(), std::complex<double>{});
  const int plus = mna_->node_unknown(probe.plus), minus = mna_->node_unknown(probe.minus);
  if (plus >= 0) z_[static_cast<std::size_t>(plus)] += 1.0;  // a unit current into plus
  if (minus >= 0) z_[static_cast<std::size_t>(minus)] -= 1.0;
  lu_->solve(z_.data());
  return mna_->node_voltage(z_.data(), probe.plus) - mna_->node_voltage(z_.data(), probe.minus);
}

std::complex<double> FrequencyResponse::value(const Probe& probe) {
  const std::complex<double> s(0, 2 * std::numbers::pi * solved_);
  const auto v = probe.kind == ProbeKind::impedance ? impedance(probe)
                                                    : probe_value(probe, *mna_, s, x_.data(), scratch_);
  if (!std::isfinite(v.real()) || !std::isfinite(v.imag()))
    throw SolveError::unsolvable_at(solved_, fmt::format("probe '{}' is not finite", probe.text));
  return v;
}

std::complex<double> FrequencyResponse::transfer_at(const Probe& probe, std::size_t source, double f) {
  factor_at(f);
  if (probe.kind == ProbeKind::impedance) return value_after_solve(probe, f, impedance(probe));
  if (f != single_solved_ || source != single_source_) {
    std::fill(w_.begin(), w_.end(), std::complex<double>{});
    const Element& e = mna_->circuit().elements[source];
    if (traits(e.kind).drive == Drive::voltage) {
      w_[static_cast<std::size_t>(mna_->branch_unknown(source))] = 1.0;
    } else {  // a current source draws its current out of its first node into its second
      const int plus = mna_->node_unknown(e.nodes[0]), minus = mna_->node_unknown(e.nodes[1]);
      if (plus >= 0) w_[static_cast<std::size_t>(plus)] -= 1.0;
      if (minus >= 0) w_[static_cast<std::size_t>(minus)] += 1.0;
    }
    lu_->solve(w_.data());
    single_solved_ = f;
    single_source_ = source;
  }
  const std::complex<double> s(0, 2 * std::numbers::pi * f);
  std::complex<double> v = probe_functional(probe, *mna_, s, scratch_);
  for (const auto& term : scratch_) v += term.coefficient * w_[static_cast<std::size_t>(term.unknown)];
  // A current source's own current is its phasor: here the unit, or 0 for any other source.
  if (probe.kind == ProbeKind::current &&
      mna_->circuit().elements[probe.element].kind == ElementKind::isource)
    v = probe.element == source ? 1.0 : 0.0;
  return value_after_solve(probe, f, v);
}

std::complex<double> FrequencyResponse::value_after_solve(const Probe& probe, double f,
                                                          std::complex<double> v) const {
  if (!std::isfinite(v.real()) || !std::isfinite(v.imag()))
    throw SolveError::unsolvable_at(f, fmt::format("probe '{}' is not finite", probe.text));
  return v;
}

std::complex<double> FrequencyResponse::at(const Probe& probe, double f) {
  solve_at(f);
  return value(probe);
}

}  // namespace tacet
