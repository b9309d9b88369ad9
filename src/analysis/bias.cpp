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

// A current `amps` leaving `node` (into an op-amp pin or a source): KCL row -= amps.
void draw_current(const MnaSystem& mna, double* rhs, int node, double amps) {
  const int u = mna.node_unknown(node);
  if (u >= 0) rhs[u] -= amps;
}

/// 2^((T - 25 C)/ib_double): how bias and offset currents grow with temperature.
double current_factor(const OpAmpModel& m, double celsius) {
  return m.ib_double > 0 ? std::exp2((celsius - kModelReferenceCelsius) / m.ib_double) : 1.0;
}

/// The temperatures the DC errors are taken over: the declared range, else the ambient.
AmbientRange error_range(const Circuit& circuit) {
  return circuit.ambient_range.value_or(AmbientRange{circuit.ambient_celsius, circuit.ambient_celsius});
}

}  // namespace

DcLimits dc_limits(const Circuit& circuit, const OpAmpModel& m) {
  const AmbientRange range = error_range(circuit);
  const double farthest = std::max(std::abs(range.low - kModelReferenceCelsius),
                                   std::abs(range.high - kModelReferenceCelsius));
  DcLimits limits;
  limits.vos = std::abs(m.vos) + std::abs(m.vos_drift) * farthest;
  limits.ios = std::abs(m.ios) * current_factor(m, range.high);
  limits.ib = m.ib * current_factor(m, circuit.ambient_celsius);
  // The largest and smallest magnitude the bias current reaches over the
  // range, the worst one from ib_max (ib when not given), the least from ib.
  const double largest = std::max(std::abs(m.ib), m.ib_max.value_or(0.0)) * current_factor(m, range.high);
  const double least = std::abs(m.ib) * current_factor(m, range.low);
  limits.ib_excess = std::max({0.0, largest - std::abs(limits.ib), std::abs(limits.ib) - least});
  return limits;
}

namespace {

Vector nominal_rhs(const Circuit& circuit, const DcSystem& dc) {
  const MnaSystem& mna = dc.mna();
  Vector rhs(dc.size(), 0.0);
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    switch (traits(e.kind).drive) {
      case Drive::none:
        break;
      case Drive::voltage:
        rhs[static_cast<std::size_t>(mna.branch_unknown(i))] += e.dc;
        break;
      case Drive::current:
        draw_current(mna, rhs.data(), e.nodes[0], e.dc);
        draw_current(mna, rhs.data(), e.nodes[1], -e.dc);
        break;
    }
    if (e.kind == ElementKind::opamp) {
      const double ib = dc_limits(circuit, circuit.model_of(e)).ib;
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

// An op amp's DC errors. Its vos is one right-hand side; its ios and ib are
// both made of the currents drawn from its two pins, so two solves (a unit
// drawn from + alone, from - alone) give both: ios = (P - M)/2, ib = P + M.
struct OpAmpErrors {
  std::size_t element;
  double vos, ios, ib, ib_excess;  // |vos| V, |ios| A, ib A (signed), ib_excess A
  bool pins() const { return ios != 0 || ib != 0 || ib_excess != 0; }
  std::size_t columns() const { return (vos != 0 ? 1 : 0) + (pins() ? 2 : 0); }
};

std::vector<OpAmpErrors> opamp_errors(const Circuit& circuit) {
  std::vector<OpAmpErrors> errors;
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    if (e.kind != ElementKind::opamp) continue;
    const DcLimits limits = dc_limits(circuit, circuit.model_of(e));
    const OpAmpErrors amp{i, limits.vos, limits.ios, limits.ib, limits.ib_excess};
    if (amp.columns() > 0) errors.push_back(amp);
  }
  return errors;
}

// The op amp's right-hand sides into consecutive columns (zeroed) from `rhs`:
// 1 V of vos, then 1 A drawn from the + pin, then 1 A drawn from the - pin.
void unit_rhs(const Circuit& circuit, const MnaSystem& mna, const OpAmpErrors& amp, double* rhs) {
  const auto& pins = circuit.elements[amp.element].nodes;
  const std::size_t n = static_cast<std::size_t>(mna.size());
  if (amp.vos != 0) {
    rhs[mna.opamp_gain_row(amp.element)] = 1.0;
    rhs += n;
  }
  if (!amp.pins()) return;
  draw_current(mna, rhs, pins[0], 1.0);
  draw_current(mna, rhs + n, pins[1], 1.0);
}

double at_node(const MnaSystem& mna, const double* x, int node) { return mna.node_voltage(x, node); }

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
  throw SolveError::unsolvable_at(
      0,
      fmt::format("the worst-case offset at node '{}' is not finite: {} of '{}' ({}) times its "
                  "gain overflows a double",
                  node, to_string(error.kind), circuit.elements[error.element].name,
                  format_si(error.limit) + (error.kind == DcErrorKind::vos ? "V" : "A")),
      fmt::format("check the model's {}", to_string(error.kind)));
}

// The running sums of every node's band, in plain arrays (the node loop is
// the inner loop of the analysis), and each op amp's output unknown.
struct Bands {
  std::vector<double> worst, squares;
  std::vector<int> outputs;  // per result.opamps entry; -1: gnd
};

// Folds one error's solution x into every node's band and every op amp's
// largest contributors.
void add_error(const Circuit& circuit, const MnaSystem& mna, const PinNeighbours& pins,
               const DcError& error, const double* x, BiasResult& result, Bands& bands) {
  if (error.kind != DcErrorKind::ib) {
    double total = 0;
    for (std::size_t k = 0; k < bands.worst.size(); ++k) {
      const double term = std::abs(mna.voltage_at_unknown(x, static_cast<int>(k))) * error.limit;
      total += term;
      bands.worst[k] += term;
      bands.squares[k] += term * term;
    }
    if (!std::isfinite(total))  // rare: find the node to name
      for (std::size_t k = 0; k < bands.worst.size(); ++k)
        if (!std::isfinite(std::abs(mna.voltage_at_unknown(x, static_cast<int>(k))) * error.limit))
          overflowing(circuit, error, result.nodes[k].name);
  }
  std::optional<std::string> through;
  for (std::size_t a = 0; a < result.opamps.size(); ++a) {
    const int u = bands.outputs[a];
    const double sensitivity = mna.voltage_at_unknown(x, u);
    if (sensitivity == 0) continue;
    auto& amp = result.opamps[a];
    const double volts = error.kind == DcErrorKind::ib ? sensitivity * error.limit
                                                       : std::abs(sensitivity) * error.limit;
    if (!std::isfinite(volts)) overflowing(circuit, error, amp.out);
    if (!amp.largest.empty() && amp.largest.size() == kLargestShown &&
        !(std::abs(volts) > std::abs(amp.largest.back().volts)))
      continue;  // would not be kept
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
    case DcErrorKind::ib_max: return "ib_max";
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

DcSystem::DcSystem(const Circuit& circuit, SolverKind kind)
    : mna_(std::make_unique<MnaSystem>(circuit, AnalysisKind::dc)), lu_(make_real_sparse_lu(kind)) {
  lu_->analyse(mna_->pattern());
  values_.resize(static_cast<std::size_t>(mna_->pattern().nonzeros()));
  factor();
}

DcSystem::~DcSystem() = default;

void DcSystem::factor() {
  mna_->assemble_dc(values_.data());
  if (lu_->factor(values_.data()) == FactorStatus::singular) throw_singular(*mna_, lu_->singular_column(), 0.0);
}

void DcSystem::restamp() {
  mna_->restamp();
  factor();
}

const Circuit& DcSystem::circuit() const { return mna_->circuit(); }

std::size_t DcSystem::size() const { return static_cast<std::size_t>(mna_->size()); }

void DcSystem::solve(Vector& block, int count) const { lu_->solve(block.data(), count); }

BiasResult run_bias(const Circuit& circuit, const BiasOptions& options) {
  return run_bias(DcSystem(circuit, options.solver));
}

BiasResult run_bias(const DcSystem& dc) {
  const Circuit& circuit = dc.circuit();
  const MnaSystem& mna = dc.mna();
  BiasResult result;
  result.range = error_range(circuit);
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

  // The DC errors in blocks of right-hand sides on the one factorisation,
  // whole op amps at a time.
  const PinNeighbours pins(circuit);
  const std::vector<OpAmpErrors> amps = opamp_errors(circuit);
  Bands bands{std::vector<double>(result.nodes.size(), 0.0), std::vector<double>(result.nodes.size(), 0.0), {}};
  for (const auto& amp : result.opamps)
    bands.outputs.push_back(mna.node_unknown(circuit.elements[amp.element].nodes[2]));
  const std::size_t n = dc.size();
  Vector block(n * kBlock), combined(n);
  auto column = [&](std::size_t c) { return &block[c * n]; };
  for (std::size_t first = 0, last = 0; first < amps.size(); first = last) {
    std::size_t columns = 0;
    while (last < amps.size() && columns + amps[last].columns() <= kBlock) columns += amps[last++].columns();
    std::fill(block.begin(), block.begin() + static_cast<std::ptrdiff_t>(columns * n), 0.0);
    for (std::size_t k = first, c = 0; k < last; c += amps[k++].columns()) unit_rhs(circuit, mna, amps[k], column(c));
    dc.solve(block, static_cast<int>(columns));
    if (!std::all_of(block.begin(), block.begin() + static_cast<std::ptrdiff_t>(columns * n),
                     [](double v) { return std::isfinite(v); }))
      for (std::size_t c = 0; c < columns; ++c) require_finite(Vector(column(c), column(c) + n), mna);
    for (std::size_t k = first, c = 0; k < last; ++k) {
      const OpAmpErrors& amp = amps[k];
      if (amp.vos != 0) add_error(circuit, mna, pins, {amp.element, DcErrorKind::vos, amp.vos}, column(c++), result, bands);
      if (!amp.pins()) continue;
      const double* plus = column(c);
      const double* minus = column(c + 1);
      c += 2;
      if (amp.ios != 0) {
        for (std::size_t u = 0; u < n; ++u) combined[u] = 0.5 * (plus[u] - minus[u]);
        add_error(circuit, mna, pins, {amp.element, DcErrorKind::ios, amp.ios}, combined.data(), result, bands);
      }
      if (amp.ib != 0 || amp.ib_excess != 0)
        for (std::size_t u = 0; u < n; ++u) combined[u] = plus[u] + minus[u];
      if (amp.ib != 0)
        add_error(circuit, mna, pins, {amp.element, DcErrorKind::ib, amp.ib}, combined.data(), result, bands);
      if (amp.ib_excess != 0)
        add_error(circuit, mna, pins, {amp.element, DcErrorKind::ib_max, amp.ib_excess},
                  combined.data(), result, bands);
    }
  }
  for (std::size_t k = 0; k < result.nodes.size(); ++k) {
    result.nodes[k].worst = bands.worst[k];
    result.nodes[k].rss = std::sqrt(bands.squares[k]);
  }

  for (auto& amp : result.opamps) {
    const double worst = result.node(circuit.elements[amp.element].nodes[2]).worst;
    amp.low = amp.nominal - worst;
    amp.high = amp.nominal + worst;
    check_rails(circuit, amp, result.warnings);
  }
  return result;
}

}  // namespace tacet
