// Sensitivity of a probe's transfer at one frequency to every parameter: one
// forward and one transposed solve, then a pass over the parameters.

#include "tacet/analysis/sensitivity.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "tacet/common/constants.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/response.hpp"

namespace tacet {
namespace {

// Sorting key: |mag| to 12 digits, so that equal sensitivities (R1 and R2 of
// a divider) keep circuit order whatever the last bit says.
double sort_key(double mag) { return std::round(std::abs(mag) * 1e12); }

}  // namespace

std::string SensitivityOptions::validate() const {
  if (!(at > 0) || !std::isfinite(at))
    return fmt::format("--at {}Hz must be a positive frequency: the sensitivity is taken at one "
                       "frequency above DC",
                       format_si(at));
  return {};
}

TransferDerivatives::TransferDerivatives(FrequencyResponse& response)
    : response_(response), parameters_(response.mna().parameters()) {
  x_.resize(static_cast<std::size_t>(response.mna().size()));
  terms_.reserve(8);
  std::vector<MnaSystem::EntryPolynomial> one;
  first_.reserve(parameters_.size() + 1);
  for (const Parameter& p : parameters_) {
    first_.push_back(entries_.size());
    response.mna().derivative(p, one);
    entries_.insert(entries_.end(), one.begin(), one.end());
  }
  first_.push_back(entries_.size());
}

std::complex<double> TransferDerivatives::at(const Probe& probe, const TransferDrive& drive,
                                             double f,
                                             std::vector<std::complex<double>>& derivatives) {
  const MnaSystem& mna = response_.mna();
  const std::complex<double> s(0, kTwoPi * f);
  response_.factor_at(f);
  // x: the solution for this drive.
  if (probe.kind == ProbeKind::impedance) {
    std::fill(x_.begin(), x_.end(), std::complex<double>{});
    const int plus = mna.node_unknown(probe.plus), minus = mna.node_unknown(probe.minus);
    if (plus >= 0) x_[static_cast<std::size_t>(plus)] += 1.0;  // a unit current into plus
    if (minus >= 0) x_[static_cast<std::size_t>(minus)] -= 1.0;
  } else if (drive.source) {
    std::fill(x_.begin(), x_.end(), std::complex<double>{});
    mna.add_excitation(*drive.source, 1.0, x_.data());
  } else {
    mna.excitation(x_.data());
  }
  response_.lu().solve(x_.data());
  std::complex<double> h = probe_value(probe, mna, s, x_.data(), terms_);
  if (probe.kind == ProbeKind::current && drive.source) {
    // A current source's own probe is its phasor: unit when it is the drive, else off.
    const Element& e = mna.circuit().elements[probe.element];
    if (e.kind == ElementKind::isource) h = probe.element == *drive.source ? 1.0 : 0.0;
  }
  const std::vector<std::complex<double>>& y = response_.adjoint(probe);
  derivatives.resize(parameters_.size());
  for (std::size_t k = 0; k < parameters_.size(); ++k) {
    std::complex<double> d{};
    for (std::size_t j = first_[k]; j < first_[k + 1]; ++j) {
      const MnaSystem::EntryPolynomial& e = entries_[j];
      const std::complex<double> dy = e.c0 + s * (e.c1 + s * e.c2);
      d -= y[static_cast<std::size_t>(e.row)] * dy * x_[static_cast<std::size_t>(e.col)];
    }
    probe_functional_derivative(probe, mna, s, parameters_[k], terms_);
    for (const auto& t : terms_) d += t.coefficient * x_[static_cast<std::size_t>(t.unknown)];
    derivatives[k] = d;
  }
  return h;
}

SensitivityResult run_sensitivity(const Circuit& circuit, const SensitivityOptions& options) {
  if (const auto problem = options.validate(); !problem.empty()) throw InputError::usage(problem);
  SensitivityResult result;
  result.probe = resolve_probe(options.probe, circuit);
  result.f = options.at;
  TransferDrive drive;
  if (!options.input.empty()) {
    if (result.probe.kind == ProbeKind::impedance)
      throw InputError::usage(
          fmt::format("--input does not apply to the impedance probe '{}'", result.probe.text),
          "an impedance is driven by its own test current; leave --input out");
    drive.source = resolve_source(options.input, circuit, "--input");
    result.input = options.input;
  }
  FrequencyResponse response(circuit);
  TransferDerivatives transfer(response);
  std::vector<std::complex<double>> derivatives;
  result.value = transfer.at(result.probe, drive, options.at, derivatives);
  const std::complex<double> h = result.value;
  if (!std::isfinite(h.real()) || !std::isfinite(h.imag()) || h == 0.0)
    throw SolveError::unsolvable_at(
        options.at, fmt::format("probe '{}' is {} there: it has no relative sensitivity",
                                result.probe.text, h == 0.0 ? "zero" : "not finite"),
        result.input.empty() ? std::string("give the sources an ac= value that reaches the probe")
                             : std::string());
  const auto& parameters = transfer.parameters();
  result.elements.reserve(parameters.size());
  for (std::size_t k = 0; k < parameters.size(); ++k) {
    const Parameter& p = parameters[k];
    const Element& e = circuit.elements[p.element];
    const std::complex<double> relative = p.value * derivatives[k] / h;
    result.elements.push_back({e.name, p.key, p.value,
                               p.key == ParameterKey::value ? e.tolerance : 0.0, derivatives[k],
                               relative.real(), relative.imag() * 180 / kPi});
  }
  std::stable_sort(result.elements.begin(), result.elements.end(),
                   [](const ParameterSensitivity& a, const ParameterSensitivity& b) {
                     return sort_key(a.mag) > sort_key(b.mag);
                   });
  return result;
}

}  // namespace tacet
