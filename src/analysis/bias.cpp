// Bias analysis: one DC factorisation, then one solve for the nominal point
// and one per DC error source (vos, ios, ib of every op amp).

#include "tacet/analysis/bias.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <memory>

#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/mna.hpp"

namespace tacet {
namespace {

using Vector = std::vector<std::complex<double>>;
constexpr std::size_t kLargestShown = 3;

/// The MNA matrix at s = 0, factored once; every solve reuses the factors.
class DcSolver {
 public:
  DcSolver(const Circuit& circuit, SolverKind kind)
      : mna_(circuit, AnalysisKind::dc), lu_(make_sparse_lu(kind)) {
    lu_->analyse(mna_.pattern());
    Vector values(static_cast<std::size_t>(mna_.pattern().nonzeros()));
    mna_.assemble(0.0, values.data());
    if (lu_->factor(values.data()) == FactorStatus::singular) throw_singular(mna_, lu_->singular_column(), 0.0);
  }
  const MnaSystem& mna() const { return mna_; }
  Vector zero_rhs() const { return Vector(static_cast<std::size_t>(mna_.size())); }
  Vector solve(Vector rhs) const {
    lu_->solve(rhs.data());
    return rhs;
  }

 private:
  MnaSystem mna_;
  std::unique_ptr<SparseLu> lu_;
};

// A current `amps` leaving `node` (into an op-amp pin or a source): KCL row -= amps.
void draw_current(const MnaSystem& mna, Vector& rhs, int node, double amps) {
  const int u = mna.node_unknown(node);
  if (u >= 0) rhs[static_cast<std::size_t>(u)] -= amps;
}

Vector nominal_rhs(const Circuit& circuit, const DcSolver& dc) {
  const MnaSystem& mna = dc.mna();
  Vector rhs = dc.zero_rhs();
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    switch (traits(e.kind).drive) {
      case Drive::none:
        break;
      case Drive::voltage:
        rhs[static_cast<std::size_t>(mna.branch_unknown(i))] += e.dc;
        break;
      case Drive::current:
        draw_current(mna, rhs, e.nodes[0], e.dc);
        draw_current(mna, rhs, e.nodes[1], -e.dc);
        break;
    }
    if (e.kind == ElementKind::opamp) {
      const double ib = circuit.model_of(e).ib;
      draw_current(mna, rhs, e.nodes[0], ib);
      draw_current(mna, rhs, e.nodes[1], ib);
    }
  }
  return rhs;
}

struct DcError {
  std::size_t element;
  DcErrorKind kind;
  double limit;  // V (vos) or A (ios, ib)
};

std::vector<DcError> dc_errors(const Circuit& circuit) {
  std::vector<DcError> errors;
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    if (e.kind != ElementKind::opamp) continue;
    const auto& m = circuit.model_of(e);
    if (m.vos != 0) errors.push_back({i, DcErrorKind::vos, std::abs(m.vos)});
    if (m.ios != 0) errors.push_back({i, DcErrorKind::ios, std::abs(m.ios)});
    if (m.ib != 0) errors.push_back({i, DcErrorKind::ib, m.ib});
  }
  return errors;
}

// The right-hand side of one unit of the error: 1 V of vos, 1 A of s ios, 1 A of ib.
Vector unit_rhs(const Circuit& circuit, const DcSolver& dc, const DcError& error) {
  const MnaSystem& mna = dc.mna();
  const auto& pins = circuit.elements[error.element].nodes;
  Vector rhs = dc.zero_rhs();
  switch (error.kind) {
    case DcErrorKind::vos:
      rhs[static_cast<std::size_t>(mna.opamp_gain_row(error.element))] = 1.0;
      break;
    case DcErrorKind::ios:
      draw_current(mna, rhs, pins[0], 0.5);
      draw_current(mna, rhs, pins[1], -0.5);
      break;
    case DcErrorKind::ib:
      draw_current(mna, rhs, pins[0], 1.0);
      draw_current(mna, rhs, pins[1], 1.0);
      break;
  }
  return rhs;
}

double at_node(const MnaSystem& mna, const Vector& x, int node) {
  const int u = mna.node_unknown(node);
  return u >= 0 ? x[static_cast<std::size_t>(u)].real() : 0.0;
}

bool drives(const Circuit& circuit, int node) {
  return std::any_of(circuit.elements.begin(), circuit.elements.end(), [&](const Element& e) {
    return e.kind == ElementKind::opamp && e.nodes[2] == node;
  });
}

// Where a bias or offset current turns into a voltage: of the resistors on the
// op amp's input pins, the one with the largest voltage across it in that
// error's solution `x`. A pin that is an op-amp output (a follower's - input)
// is left out: that op amp supplies the current, not the resistors on it.
std::string busiest_resistor(const Circuit& circuit, const MnaSystem& mna, const Vector& x,
                             const Element& opamp) {
  std::string name;
  double largest = 0;
  for (const int pin : {opamp.nodes[0], opamp.nodes[1]}) {
    if (pin == 0 || drives(circuit, pin)) continue;
    for (const auto& e : circuit.elements) {
      if (e.kind != ElementKind::resistor || (e.nodes[0] != pin && e.nodes[1] != pin)) continue;
      const double across = std::abs(at_node(mna, x, e.nodes[0]) - at_node(mna, x, e.nodes[1]));
      if (across > largest) largest = across, name = e.name;
    }
  }
  return name;
}

void require_finite(const Vector& x, const MnaSystem& mna) {
  for (std::size_t u = 0; u < x.size(); ++u)
    if (!std::isfinite(x[u].real()))
      throw SolveError::unsolvable_at(
          0, fmt::format("{} is not finite", mna.unknown_name(static_cast<int>(u))));
}

void keep_largest(std::vector<OffsetContribution>& all) {
  const auto bigger = [](const OffsetContribution& a, const OffsetContribution& b) {
    return std::abs(a.volts) > std::abs(b.volts);
  };
  std::stable_sort(all.begin(), all.end(), bigger);
  std::erase_if(all, [](const OffsetContribution& c) { return c.volts == 0; });
  if (all.size() > kLargestShown) all.resize(kLargestShown);
}

void check_rails(const Circuit& circuit, OpAmpBias& amp, std::vector<std::string>& warnings) {
  const Element& e = circuit.elements[amp.element];
  amp.rails = rails_for(circuit, e);
  if (!amp.rails) {
    warnings.push_back(fmt::format(
        "{}: no rails (no supply line, no rails= on the instance): output not checked", amp.name));
    return;
  }
  const double swing = circuit.model_of(e).swing;
  amp.limit_low = amp.rails->low + swing;
  amp.limit_high = amp.rails->high - swing;
  amp.ok = amp.low >= amp.limit_low && amp.high <= amp.limit_high;
  if (amp.high > amp.limit_high)
    warnings.push_back(fmt::format(
        "{}: output '{}' can reach {}V, above {}V (rail {}V less swing {}V): it can saturate",
        amp.name, amp.out, format_si(amp.high), format_si(amp.limit_high),
        format_si(amp.rails->high), format_si(swing)));
  if (amp.low < amp.limit_low)
    warnings.push_back(fmt::format(
        "{}: output '{}' can reach {}V, below {}V (rail {}V plus swing {}V): it can saturate",
        amp.name, amp.out, format_si(amp.low), format_si(amp.limit_low),
        format_si(amp.rails->low), format_si(swing)));
}

}  // namespace

const char* to_string(DcErrorKind kind) {
  switch (kind) {
    case DcErrorKind::vos: return "vos";
    case DcErrorKind::ios: return "ios";
    case DcErrorKind::ib: return "ib";
  }
  return "?";
}

const NodeBias& BiasResult::node(int node) const {
  static const NodeBias gnd{"gnd", 0, 0, 0};
  if (node <= 0) return gnd;
  return nodes.at(static_cast<std::size_t>(node - 1));
}

std::optional<Rails> rails_for(const Circuit& circuit, const Element& opamp) {
  return opamp.rails ? opamp.rails : circuit.supply;
}

BiasResult run_bias(const Circuit& circuit, const BiasOptions& options) {
  const DcSolver dc(circuit, options.solver);
  const MnaSystem& mna = dc.mna();
  BiasResult result;
  const Vector x = dc.solve(nominal_rhs(circuit, dc));
  require_finite(x, mna);
  for (std::size_t node = 1; node < circuit.node_count(); ++node)
    result.nodes.push_back({circuit.node_names[node], at_node(mna, x, static_cast<int>(node)), 0, 0});
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    if (e.kind != ElementKind::opamp) continue;
    OpAmpBias amp;
    amp.name = e.name;
    amp.element = i;
    amp.out = circuit.node_names[static_cast<std::size_t>(e.nodes[2])];
    amp.nominal = at_node(mna, x, e.nodes[2]);
    result.opamps.push_back(amp);
  }

  std::vector<double> squares(result.nodes.size(), 0.0);
  for (const DcError& error : dc_errors(circuit)) {
    const Vector s = dc.solve(unit_rhs(circuit, dc, error));
    require_finite(s, mna);
    const std::string through =
        error.kind == DcErrorKind::vos ? std::string() : busiest_resistor(circuit, mna, s, circuit.elements[error.element]);
    if (error.kind != DcErrorKind::ib)
      for (std::size_t k = 0; k < result.nodes.size(); ++k) {
        const double term = std::abs(s[k].real()) * error.limit;
        result.nodes[k].worst += term;
        squares[k] += term * term;
      }
    for (auto& amp : result.opamps) {
      const double sensitivity = at_node(mna, s, circuit.elements[amp.element].nodes[2]);
      const double volts = error.kind == DcErrorKind::ib ? sensitivity * error.limit
                                                         : std::abs(sensitivity) * error.limit;
      amp.largest.push_back(
          {circuit.elements[error.element].name, error.kind, std::abs(sensitivity), volts, through});
    }
  }
  for (std::size_t k = 0; k < result.nodes.size(); ++k) result.nodes[k].rss = std::sqrt(squares[k]);

  for (auto& amp : result.opamps) {
    const double worst = result.node(circuit.elements[amp.element].nodes[2]).worst;
    amp.low = amp.nominal - worst;
    amp.high = amp.nominal + worst;
    keep_largest(amp.largest);
    check_rails(circuit, amp, result.warnings);
  }
  return result;
}

}  // namespace tacet
