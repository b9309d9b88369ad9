// Per spec: the derivative of each spec's measured value with respect to
// every parameter, from the adjoint where the measurement is a smooth function
// of a few transfers (gain, phase, flatness, corners), else from central
// differences of the same measurement on a re-stamped copy of the circuit.

#include <cmath>
#include <numbers>
#include <optional>

#include <fmt/format.h>

#include "tacet/analysis/check.hpp"
#include "tacet/analysis/sensitivity.hpp"
#include "tacet/common/constants.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/response.hpp"

namespace tacet {

const char* to_string(SpecMethod method) {
  switch (method) {
    case SpecMethod::adjoint: return "adjoint";
    case SpecMethod::adjoint_flatness: return "adjoint at the worst point";
    case SpecMethod::implicit_corner: return "implicit differentiation at the corner";
    case SpecMethod::restamp_difference: return "central difference on re-stamped values";
    case SpecMethod::none: return "none";
  }
  return "?";
}

bool spec_has_adjoint(SpecKind kind) {
  switch (kind) {
    case SpecKind::gain:
    case SpecKind::phase:
    case SpecKind::flatness:
    case SpecKind::upper_corner:
    case SpecKind::lower_corner: return true;
    default: return false;
  }
}

namespace {

constexpr double kDbPerNeper = 20 / std::numbers::ln10;

// The number a Parameter names, in a circuit of the same shape.
double& parameter_in(Circuit& circuit, const Parameter& p) {
  Element& e = circuit.elements[p.element];
  if (p.key == ParameterKey::value) return e.value;
  OpAmpModel& m = circuit.models[static_cast<std::size_t>(e.model)];
  switch (p.key) {
    case ParameterKey::gbw: return m.gbw;
    case ParameterKey::aol: return m.aol;
    case ParameterKey::fp2: return m.fp2;
    case ParameterKey::rout: return m.rout;
    case ParameterKey::rin: return m.rin;
    case ParameterKey::value: break;
  }
  return e.value;
}

// A model shared by several instances gets a copy per instance in the
// re-stamped circuit, so that varying U1's gbw leaves U2's alone.
Circuit with_own_model(const Circuit& circuit, std::size_t element) {
  Circuit copy = circuit;
  Element& e = copy.elements[element];
  if (e.kind == ElementKind::opamp) {
    copy.models.push_back(copy.models[static_cast<std::size_t>(e.model)]);
    e.model = static_cast<int>(copy.models.size()) - 1;
  }
  return copy;
}

class SpecDifferentiator {
 public:
  SpecDifferentiator(const Circuit& circuit, SpecSensitivities& out)
      : circuit_(circuit), response_(circuit), transfer_(response_), out_(out) {
    out_.parameters = transfer_.parameters();
    for (const Parameter& p : out_.parameters) {
      const Element& e = circuit.elements[p.element];
      out_.names.push_back(e.name);
      out_.tolerances.push_back(p.key == ParameterKey::value ? e.tolerance : 0.0);
    }
  }

  SpecSensitivity differentiate(const SpecResult& r) {
    SpecSensitivity s{r.spec.name, r.spec.kind, r.spec.unit, r.value, SpecMethod::none, {}, {}};
    if (!r.value) {
      s.note = "not measured";
      return s;
    }
    if (!r.spec.probe.empty()) probe_ = resolve_probe(r.spec.probe, circuit_);
    // The transfer the spec measures: from its input= source alone, as check does.
    drive_.source.reset();
    if (!r.spec.input.empty() && r.spec.kind != SpecKind::snr)
      drive_.source = resolve_source(r.spec.input, circuit_, "input=");
    try {
      if (!spec_has_adjoint(r.spec.kind)) {
        restamped(r, s);
        return s;
      }
      switch (r.spec.kind) {
        case SpecKind::gain: gain(r, s); break;
        case SpecKind::phase: phase(r, s); break;
        case SpecKind::flatness: flatness(r, s); break;
        case SpecKind::upper_corner:
        case SpecKind::lower_corner: corner(r, s); break;
        default: break;
      }
    } catch (const SolveError& e) {
      s.derivatives.clear();
      s.method = SpecMethod::none;
      s.note = e.sentence();
    }
    return s;
  }

 private:
  // d ln H/dx for every parameter at f: Re is d ln|H|/dx, Im is d arg H/dx (rad).
  const std::vector<std::complex<double>>& log_derivatives(double f, std::complex<double>& h) {
    h = transfer_.at(probe_, drive_, f, scratch_);
    if (h == 0.0) throw SolveError::unsolvable_at(f, "the probe's value is zero there");
    for (auto& d : scratch_) d /= h;
    return scratch_;
  }

  std::complex<double> measured_at(double f) {
    if (drive_.source && probe_.kind != ProbeKind::impedance)
      return response_.transfer_at(probe_, *drive_.source, f);
    return response_.at(probe_, f);
  }

  void fill(SpecSensitivity& s, SpecMethod method, const std::vector<double>& derivatives) {
    s.method = method;
    s.derivatives.resize(derivatives.size());
    for (std::size_t k = 0; k < derivatives.size(); ++k)
      s.derivatives[k] = {k, derivatives[k], derivatives[k] * out_.parameters[k].value / 100};
  }

  void gain(const SpecResult& r, SpecSensitivity& s) {
    std::complex<double> h;
    const auto& d = log_derivatives(r.spec.at, h);
    // dB: 20 log10|H|; a ratio: |H| itself (d|H| = |H| d ln|H|).
    const double scale = r.spec.unit == SpecUnit::db ? kDbPerNeper : std::abs(h);
    std::vector<double> out(d.size());
    for (std::size_t k = 0; k < d.size(); ++k) out[k] = scale * d[k].real();
    fill(s, SpecMethod::adjoint, out);
  }

  void phase(const SpecResult& r, SpecSensitivity& s) {
    std::complex<double> h;
    const auto& d = log_derivatives(r.spec.at, h);
    std::vector<double> out(d.size());
    for (std::size_t k = 0; k < d.size(); ++k) out[k] = 180 / kPi * d[k].imag();
    fill(s, SpecMethod::adjoint, out);
  }

  // dB(f) - dB(ref) differentiated: the gain sensitivity at f minus at ref, in dB.
  std::vector<double> relative_db(double f, double ref, std::complex<double>& h_f,
                                  std::complex<double>& h_ref) {
    std::vector<double> at_ref;
    for (const auto& d : log_derivatives(ref, h_ref)) at_ref.push_back(kDbPerNeper * d.real());
    const auto& d = log_derivatives(f, h_f);
    std::vector<double> out(d.size());
    for (std::size_t k = 0; k < d.size(); ++k) out[k] = kDbPerNeper * d[k].real() - at_ref[k];
    return out;
  }

  // |dB(fw) - dB(ref)| at the worst frequency fw: a maximum over f, so to first
  // order its change is the change at fw held fixed (envelope theorem).
  void flatness(const SpecResult& r, SpecSensitivity& s) {
    std::complex<double> h_f, h_ref;
    std::vector<double> out = relative_db(r.where, r.spec.ref, h_f, h_ref);
    const double sign = to_db(h_f) - to_db(h_ref) >= 0 ? 1.0 : -1.0;
    for (double& v : out) v *= sign;
    fill(s, SpecMethod::adjoint_flatness, out);
  }

  // G(f, x) = dB(f) - dB(ref) + drop is 0 at the corner fc, so
  // dfc/dx = -(dG/dx)/(dG/df); dG/df by a central difference of two solves.
  void corner(const SpecResult& r, SpecSensitivity& s) {
    const double fc = *r.value;
    std::complex<double> h_f, h_ref;
    std::vector<double> out = relative_db(fc, r.spec.ref, h_f, h_ref);
    constexpr double kStep = 1e-6;  // relative: truncation ~1e-12, rounding ~1e-10
    const double slope = (to_db(measured_at(fc * (1 + kStep))) -
                          to_db(measured_at(fc * (1 - kStep)))) /
                         (2 * kStep * fc);
    if (slope == 0 || !std::isfinite(slope))
      throw SolveError::unsolvable_at(fc, "the response is flat at the corner");
    for (double& v : out) v = -v / slope;
    fill(s, SpecMethod::implicit_corner, out);
  }

  // The spec measured again by check itself on a copy with one value scaled
  // by 1 +- h: whatever the kind measures (noise over its band, a DC worst
  // case), the derivative is of exactly that number.
  void restamped(const SpecResult& r, SpecSensitivity& s) {
    constexpr double kStep = 1e-3;  // relative; the band integral's own error is far below h^2
    const auto& parameters = out_.parameters;
    const bool all = parameters.size() <= kMostRestampedParameters;
    s.method = SpecMethod::restamp_difference;
    for (std::size_t k = 0; k < parameters.size(); ++k) {
      if (!all && out_.tolerances[k] == 0) continue;
      const double up = remeasure(r.spec, parameters[k], 1 + kStep);
      const double down = remeasure(r.spec, parameters[k], 1 - kStep);
      const double d = (up - down) / (2 * kStep * parameters[k].value);
      if (!std::isfinite(d)) continue;
      s.derivatives.push_back({k, d, d * parameters[k].value / 100});
    }
    if (!all)
      s.note = fmt::format("{} parameters: only those with tol= are differentiated",
                           parameters.size());
  }

  double remeasure(const Spec& spec, const Parameter& p, double factor) {
    Circuit changed = with_own_model(circuit_, p.element);
    changed.specs = {spec};
    Parameter own = p;
    parameter_in(changed, own) *= factor;
    const CheckResult check = run_check(changed);
    const auto& value = check.specs.front().value;
    return value ? *value : std::nan("");
  }

  const Circuit& circuit_;
  FrequencyResponse response_;
  TransferDerivatives transfer_;
  SpecSensitivities& out_;
  Probe probe_;
  TransferDrive drive_;
  std::vector<std::complex<double>> scratch_;
};

}  // namespace

SpecSensitivities run_spec_sensitivities(const Circuit& circuit, const CheckResult& check) {
  SpecSensitivities out;
  std::optional<SpecDifferentiator> differentiator;
  try {
    differentiator.emplace(circuit, out);
  } catch (const SolveError& e) {
    // No AC system (check has already said why, spec by spec): nothing to differentiate.
    for (const SpecResult& r : check.specs)
      out.specs.push_back({r.spec.name, r.spec.kind, r.spec.unit, r.value, SpecMethod::none,
                           e.sentence(), {}});
    return out;
  }
  for (const SpecResult& r : check.specs) out.specs.push_back(differentiator->differentiate(r));
  return out;
}

}  // namespace tacet
