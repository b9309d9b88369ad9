// Bias analysis: one DC factorisation, then one solve for the nominal point
// and one per DC error source (vos, ios, ib of every op amp).

#include "tacet/analysis/bias.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <memory>
#include <numeric>
#include <optional>

#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/mna.hpp"

namespace tacet {
namespace {

using Vector = std::vector<double>;
constexpr std::size_t kLargestShown = 3;
constexpr int kBlock = 16;  // DC error right-hand sides solved together

/// The real MNA matrix at s = 0, factored once; every solve reuses the factors.
class DcSolver {
 public:
  DcSolver(const Circuit& circuit, SolverKind kind)
      : mna_(circuit, AnalysisKind::dc), lu_(make_real_sparse_lu(kind)) {
    lu_->analyse(mna_.pattern());
    Vector values(static_cast<std::size_t>(mna_.pattern().nonzeros()));
    mna_.assemble_dc(values.data());
    if (lu_->factor(values.data()) == FactorStatus::singular) throw_singular(mna_, lu_->singular_column(), 0.0);
  }
  const MnaSystem& mna() const { return mna_; }
  std::size_t size() const { return static_cast<std::size_t>(mna_.size()); }
  /// `count` right-hand sides of size() values each, solved in place.
  void solve(Vector& block, int count) const { lu_->solve(block.data(), count); }

 private:
  MnaSystem mna_;
  std::unique_ptr<RealSparseLu> lu_;
};

const OpAmpModel& model_of(const Circuit& circuit, const Element& e) {
  return circuit.models.at(static_cast<std::size_t>(e.model));
}

// A current `amps` leaving `node` (into an op-amp pin or a source): KCL row -= amps.
void draw_current(const MnaSystem& mna, double* rhs, int node, double amps) {
  const int u = mna.node_unknown(node);
  if (u >= 0) rhs[u] -= amps;
}

Vector nominal_rhs(const Circuit& circuit, const DcSolver& dc) {
  const MnaSystem& mna = dc.mna();
  Vector rhs(dc.size(), 0.0);
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    if (e.kind == ElementKind::vsource)
      rhs[static_cast<std::size_t>(mna.branch_unknown(i))] += e.dc;
    if (e.kind == ElementKind::isource) {
      draw_current(mna, rhs.data(), e.nodes[0], e.dc);
      draw_current(mna, rhs.data(), e.nodes[1], -e.dc);
    }
    if (e.kind == ElementKind::opamp) {
      const double ib = model_of(circuit, e).ib;
      draw_current(mna, rhs.data(), e.nodes[0], ib);
      draw_current(mna, rhs.data(), e.nodes[1], ib);
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
    const auto& m = model_of(circuit, e);
    if (m.vos != 0) errors.push_back({i, DcErrorKind::vos, std::abs(m.vos)});
    if (m.ios != 0) errors.push_back({i, DcErrorKind::ios, std::abs(m.ios)});
    if (m.ib != 0) errors.push_back({i, DcErrorKind::ib, m.ib});
  }
  return errors;
}

// The right-hand side of one unit of the error into `rhs` (zeroed): 1 V of
// vos, 1 A of s ios, 1 A of ib.
void unit_rhs(const Circuit& circuit, const MnaSystem& mna, const DcError& error, double* rhs) {
  const auto& pins = circuit.elements[error.element].nodes;
  switch (error.kind) {
    case DcErrorKind::vos:
      rhs[mna.opamp_gain_row(error.element)] = 1.0;
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
}

double at_node(const MnaSystem& mna, const double* x, int node) {
  const int u = mna.node_unknown(node);
  return u >= 0 ? x[u] : 0.0;
}

// The resistors at every node, and which nodes an op amp drives: looked up
// by node, so finding where a bias current turns into a voltage costs the
// pin's few neighbours, not a scan of the circuit.
class PinNeighbours {
 public:
  explicit PinNeighbours(const Circuit& circuit) : start_(circuit.node_count() + 1, 0), driven_(circuit.node_count(), false) {
    for (const auto& e : circuit.elements) {
      if (e.kind == ElementKind::opamp) driven_[static_cast<std::size_t>(e.nodes[2])] = true;
      if (e.kind != ElementKind::resistor) continue;
      ++start_[static_cast<std::size_t>(e.nodes[0]) + 1];
      if (e.nodes[1] != e.nodes[0]) ++start_[static_cast<std::size_t>(e.nodes[1]) + 1];
    }
    std::partial_sum(start_.begin(), start_.end(), start_.begin());
    resistors_.resize(start_.back());
    std::vector<std::size_t> fill(start_.begin(), start_.end() - 1);
    for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
      const auto& e = circuit.elements[i];
      if (e.kind != ElementKind::resistor) continue;
      resistors_[fill[static_cast<std::size_t>(e.nodes[0])]++] = i;
      if (e.nodes[1] != e.nodes[0]) resistors_[fill[static_cast<std::size_t>(e.nodes[1])]++] = i;
    }
  }
  bool driven(int node) const { return driven_[static_cast<std::size_t>(node)]; }
  template <typename Visit>
  void for_each_resistor(int node, Visit&& visit) const {
    for (std::size_t k = start_[static_cast<std::size_t>(node)]; k < start_[static_cast<std::size_t>(node) + 1]; ++k)
      visit(resistors_[k]);
  }

 private:
  std::vector<std::size_t> start_;  // per node, into resistors_ (CSR)
  std::vector<std::size_t> resistors_;
  std::vector<bool> driven_;
};

// Where a bias or offset current turns into a voltage: of the resistors on the
// op amp's input pins, the one with the largest voltage across it in that
// error's solution `x`. A pin that is an op-amp output (a follower's - input)
// is left out: that op amp supplies the current, not the resistors on it.
std::string busiest_resistor(const Circuit& circuit, const MnaSystem& mna, const PinNeighbours& pins,
                             const double* x, const Element& opamp) {
  const std::string* name = nullptr;
  double largest = 0;
  for (const int pin : {opamp.nodes[0], opamp.nodes[1]}) {
    if (pin == 0 || pins.driven(pin)) continue;
    pins.for_each_resistor(pin, [&](std::size_t i) {
      const Element& e = circuit.elements[i];
      const double across = std::abs(at_node(mna, x, e.nodes[0]) - at_node(mna, x, e.nodes[1]));
      if (across > largest) largest = across, name = &e.name;
    });
  }
  return name ? *name : std::string();
}

void require_finite(const Vector& x, const MnaSystem& mna) {
  for (std::size_t u = 0; u < x.size(); ++u)
    if (!std::isfinite(x[u]))
      throw SolveError::unsolvable_at(
          0, fmt::format("{} is not finite", mna.unknown_name(static_cast<int>(u))));
}

// Keeps the kLargestShown largest |volts| as contributions arrive, earlier
// first among equals; a zero contribution is no contributor.
void keep_if_large(std::vector<OffsetContribution>& kept, OffsetContribution c) {
  if (c.volts == 0) return;
  const auto at = std::find_if(kept.begin(), kept.end(), [&](const OffsetContribution& k) {
    return std::abs(c.volts) > std::abs(k.volts);
  });
  if (at == kept.end() && kept.size() >= kLargestShown) return;
  kept.insert(at, std::move(c));
  if (kept.size() > kLargestShown) kept.pop_back();
}

// A DC error's share that overflows a double says nothing: exit 3 naming it.
[[noreturn]] void overflowing(const Circuit& circuit, const DcError& error, const std::string& node) {
  throw SolveError(fmt::format(
      "error: the worst-case offset at node '{}' is not finite: {} of '{}' ({}) times its "
      "gain overflows a double\nhint: check the model's {}",
      node, to_string(error.kind), circuit.elements[error.element].name,
      format_si(error.limit) + (error.kind == DcErrorKind::vos ? "V" : "A"), to_string(error.kind)));
}

// Folds one error's solution x into every node's band and every op amp's
// largest contributors.
void add_error(const Circuit& circuit, const MnaSystem& mna, const PinNeighbours& pins,
               const DcError& error, const double* x, BiasResult& result, std::vector<double>& squares) {
  if (error.kind != DcErrorKind::ib)
    for (std::size_t k = 0; k < result.nodes.size(); ++k) {
      const double term = std::abs(x[k]) * error.limit;
      if (!std::isfinite(term)) overflowing(circuit, error, result.nodes[k].name);
      result.nodes[k].worst += term;
      squares[k] += term * term;
    }
  std::optional<std::string> through;
  for (auto& amp : result.opamps) {
    const double sensitivity = at_node(mna, x, circuit.elements[amp.element].nodes[2]);
    if (sensitivity == 0) continue;
    const double volts = error.kind == DcErrorKind::ib ? sensitivity * error.limit
                                                       : std::abs(sensitivity) * error.limit;
    if (!std::isfinite(volts)) overflowing(circuit, error, amp.out);
    if (!through)
      through = error.kind == DcErrorKind::vos
                    ? std::string()
                    : busiest_resistor(circuit, mna, pins, x, circuit.elements[error.element]);
    keep_if_large(amp.largest, {circuit.elements[error.element].name, error.kind,
                                std::abs(sensitivity), volts, *through});
  }
}

void check_rails(const Circuit& circuit, OpAmpBias& amp, std::vector<std::string>& warnings) {
  const Element& e = circuit.elements[amp.element];
  amp.rails = rails_for(circuit, e);
  if (!amp.rails) {
    warnings.push_back(fmt::format(
        "{}: no rails (no supply line, no rails= on the instance): output not checked", amp.name));
    return;
  }
  const double swing = model_of(circuit, e).swing;
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
  Vector x = nominal_rhs(circuit, dc);
  dc.solve(x, 1);
  require_finite(x, mna);
  for (std::size_t node = 1; node < circuit.node_count(); ++node)
    result.nodes.push_back({circuit.node_names[node], at_node(mna, x.data(), static_cast<int>(node)), 0, 0});
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    if (e.kind != ElementKind::opamp) continue;
    OpAmpBias amp;
    amp.name = e.name;
    amp.element = i;
    amp.out = circuit.node_names[static_cast<std::size_t>(e.nodes[2])];
    amp.nominal = at_node(mna, x.data(), e.nodes[2]);
    result.opamps.push_back(amp);
  }

  // The DC errors in blocks of right-hand sides on the one factorisation.
  const PinNeighbours pins(circuit);
  const std::vector<DcError> errors = dc_errors(circuit);
  std::vector<double> squares(result.nodes.size(), 0.0);
  const std::size_t n = dc.size();
  Vector block(n * kBlock);
  for (std::size_t first = 0; first < errors.size(); first += kBlock) {
    const std::size_t count = std::min<std::size_t>(kBlock, errors.size() - first);
    std::fill(block.begin(), block.end(), 0.0);
    for (std::size_t j = 0; j < count; ++j) unit_rhs(circuit, mna, errors[first + j], &block[j * n]);
    dc.solve(block, static_cast<int>(count));
    for (std::size_t j = 0; j < count; ++j) {
      const Vector::const_iterator column = block.begin() + static_cast<std::ptrdiff_t>(j * n);
      if (!std::all_of(column, column + static_cast<std::ptrdiff_t>(n), [](double v) { return std::isfinite(v); }))
        require_finite(Vector(column, column + static_cast<std::ptrdiff_t>(n)), mna);
      add_error(circuit, mna, pins, errors[first + j], &block[j * n], result, squares);
    }
  }
  for (std::size_t k = 0; k < result.nodes.size(); ++k) result.nodes[k].rss = std::sqrt(squares[k]);

  for (auto& amp : result.opamps) {
    const double worst = result.node(circuit.elements[amp.element].nodes[2]).worst;
    amp.low = amp.nominal - worst;
    amp.high = amp.nominal + worst;
    check_rails(circuit, amp, result.warnings);
  }
  return result;
}

}  // namespace tacet
