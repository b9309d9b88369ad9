#include "tacet/response.hpp"

#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "tacet/errors.hpp"
#include "tacet/format.hpp"

namespace tacet {

void throw_singular(const MnaSystem& mna, int column, double f) {
  throw SolveError(fmt::format(
      "error: circuit cannot be solved at {}Hz: {}", format_si(f),
      column >= 0 ? fmt::format("the equations do not determine {} (singular matrix)", mna.unknown_name(column))
                  : std::string("the matrix is singular")));
}

FrequencyResponse::FrequencyResponse(const Circuit& circuit, SolverKind solver)
    : mna_(circuit), lu_(make_sparse_lu(solver)) {
  lu_->analyse(mna_.pattern());
  values_.resize(static_cast<std::size_t>(mna_.pattern().nonzeros()));
  excitation_.resize(static_cast<std::size_t>(mna_.size()));
  x_.resize(excitation_.size());
  scratch_.reserve(8);
  mna_.excitation(excitation_.data());
  mna_.assemble(0.0, values_.data());  // the constant entries, once
}

void FrequencyResponse::solve_at(double f) {
  if (f == frequency_) return;
  const std::complex<double> s(0, 2 * std::numbers::pi * f);
  mna_.assemble_varying(s, values_.data());
  if (lu_->factor(values_.data()) == FactorStatus::singular) {
    frequency_ = -1;
    throw_singular(mna_, lu_->singular_column(), f);
  }
  x_ = excitation_;
  lu_->solve(x_.data());
  frequency_ = f;
}

std::complex<double> FrequencyResponse::value(const Probe& probe) {
  const std::complex<double> s(0, 2 * std::numbers::pi * frequency_);
  const auto v = probe_value(probe, mna_, s, x_.data(), scratch_);
  if (!std::isfinite(v.real()) || !std::isfinite(v.imag()))
    throw SolveError(fmt::format("error: circuit cannot be solved at {}Hz: probe '{}' is not finite",
                                 format_si(frequency_), probe.text));
  return v;
}

std::complex<double> FrequencyResponse::at(const Probe& probe, double f) {
  solve_at(f);
  return value(probe);
}

}  // namespace tacet
