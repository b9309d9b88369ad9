// Bias analysis: one DC factorisation, then one solve for the nominal point
// and one per DC error source (vos, ios, ib of every op amp).

#include "tacet/analysis/bias.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstdint>
#include <exception>
#include <memory>
#include <numeric>
#include <optional>
#include <type_traits>

#include "tacet/analysis/dc_cascade.hpp"
#include "tacet/analysis/dc_tree.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/common/parallel.hpp"
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

void nominal_rhs(const Circuit& circuit, const DcSystem& dc, Vector& rhs) {
  const MnaSystem& mna = dc.mna();
  rhs.assign(dc.size(), 0.0);
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

void opamp_errors(const Circuit& circuit, std::vector<OpAmpErrors>& errors) {
  errors.clear();
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    if (e.kind != ElementKind::opamp) continue;
    const DcLimits limits = dc_limits(circuit, circuit.model_of(e));
    const OpAmpErrors amp{i, limits.vos, limits.ios, limits.ib, limits.ib_excess};
    if (amp.columns() > 0) errors.push_back(amp);
  }
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
template <typename Voltage>
const std::string* busiest_resistor(const Circuit& circuit, const PinNeighbours& pins, Voltage&& voltage,
                                    const Element& opamp) {
  const std::string* name = nullptr;
  double largest = 0;
  for (const int pin : {opamp.nodes[0], opamp.nodes[1]}) {
    if (pin == 0 || pins.driven(pin)) continue;
    pins.for_each_resistor(pin, [&](std::size_t i) {
      const Element& e = circuit.elements[i];
      const double across = std::abs(voltage(e.nodes[0]) - voltage(e.nodes[1]));
      if (across > largest) largest = across, name = &e.name;
    });
  }
  return name;
}

void require_finite(const double* x, std::size_t n, const MnaSystem& mna) {
  for (std::size_t u = 0; u < n; ++u)
    if (!std::isfinite(x[u]))
      throw SolveError::unsolvable_at(
          0, fmt::format("{} is not finite", mna.unknown_name(static_cast<int>(u))));
}

// Keeps the kLargestShown largest |volts| as contributions arrive, earlier
// first among equals, in kept[0, count); a zero contribution is no
// contributor. Entries are assigned in place and slots beyond `count` are
// spare, so a run on a result filled before reuses its strings' storage.
void keep_if_large(std::vector<OffsetContribution>& kept, std::size_t& count, const std::string& opamp,
                   DcErrorKind kind, double gain, double volts, const std::string& through) {
  if (volts == 0) return;
  const auto first = kept.begin();
  const auto at = std::find_if(first, first + static_cast<std::ptrdiff_t>(count), [&](const OffsetContribution& k) {
    return std::abs(volts) > std::abs(k.volts);
  });
  const auto index = static_cast<std::size_t>(at - first);
  if (index == count && count >= kLargestShown) return;
  if (count < kLargestShown) {
    if (kept.size() == count) kept.emplace_back();
    ++count;
  }
  // The last slot in use (dropped, or spare) moves up to `index`; swaps move no characters.
  std::rotate(kept.begin() + static_cast<std::ptrdiff_t>(index), kept.begin() + static_cast<std::ptrdiff_t>(count - 1),
              kept.begin() + static_cast<std::ptrdiff_t>(count));
  OffsetContribution& c = kept[index];
  c.opamp.assign(opamp);
  c.kind = kind;
  c.gain = gain;
  c.volts = volts;
  c.through.assign(through);
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
  std::vector<int> outputs;        // per result.opamps entry; -1: gnd
  std::vector<std::size_t> kept;   // per result.opamps entry: its contributors so far
};

// One DC error and its solution: the unknowns' shift per unit of the error.
struct ErrorColumn {
  DcError error;
  const double* x;
};

// What folding a run of errors into one range of nodes and op amps met first:
// the index (into the run) of the error whose share at a node, or at an op
// amp's output, overflows a double; none: every share was finite.
struct FoldStop {
  std::size_t node_error = SIZE_MAX, amp_error = SIZE_MAX;
};

// Folds the errors, in order, into the bands of nodes [node_begin, node_end)
// and the largest contributors of op amps [amp_begin, amp_end). Each node and
// op amp sums its errors in the same order whatever the ranges, so cutting the
// nodes and op amps across threads changes no bit. Stops at the first error
// whose share overflows in this range (the caller names it).
FoldStop fold_errors(const Circuit& circuit, const MnaSystem& mna, const PinNeighbours& pins,
                     const std::vector<ErrorColumn>& errors, std::size_t node_begin, std::size_t node_end,
                     std::size_t amp_begin, std::size_t amp_end, BiasResult& result, Bands& bands) {
  FoldStop stop;
  for (std::size_t e = 0; e < errors.size() && stop.node_error == SIZE_MAX; ++e) {
    const auto& [error, x] = errors[e];
    if (error.kind == DcErrorKind::ib) continue;  // a nominal shift, not a band
    for (std::size_t k = node_begin; k < node_end; ++k) {
      const double term = std::abs(mna.voltage_at_unknown(x, static_cast<int>(k))) * error.limit;
      if (!std::isfinite(term)) {
        stop.node_error = e;
        break;
      }
      bands.worst[k] += term;
      bands.squares[k] += term * term;
    }
  }
  for (std::size_t e = 0; e < errors.size() && e < stop.node_error && stop.amp_error == SIZE_MAX; ++e) {
    const auto& [error, x] = errors[e];
    static const std::string none;
    const std::string* through = nullptr;  // found once per error, when some op amp keeps it
    for (std::size_t a = amp_begin; a < amp_end; ++a) {
      const double sensitivity = mna.voltage_at_unknown(x, bands.outputs[a]);
      if (sensitivity == 0) continue;
      auto& amp = result.opamps[a];
      std::size_t& kept = bands.kept[a];
      const double volts = error.kind == DcErrorKind::ib ? sensitivity * error.limit
                                                         : std::abs(sensitivity) * error.limit;
      if (!std::isfinite(volts)) {
        stop.amp_error = e;
        break;
      }
      if (kept == kLargestShown && !(std::abs(volts) > std::abs(amp.largest[kept - 1].volts)))
        continue;  // would not be kept
      if (!through) {
        through = error.kind == DcErrorKind::vos
                      ? &none
                      : busiest_resistor(circuit, pins, [&](int node) { return at_node(mna, x, node); },
                                         circuit.elements[error.element]);
        if (!through) through = &none;
      }
      keep_if_large(amp.largest, kept, circuit.elements[error.element].name, error.kind, std::abs(sensitivity),
                    volts, *through);
    }
  }
  return stop;
}

// The error a single pass in order would have stopped at, named: the lowest
// error index over the ranges, a node's share before an op amp's of the same
// error (the nodes of an error are folded before its op amps).
[[noreturn]] void name_overflow(const Circuit& circuit, const MnaSystem& mna, const std::vector<ErrorColumn>& errors,
                                const std::vector<FoldStop>& stops, const BiasResult& result, const Bands& bands) {
  FoldStop first;
  for (const FoldStop& s : stops) {
    first.node_error = std::min(first.node_error, s.node_error);
    first.amp_error = std::min(first.amp_error, s.amp_error);
  }
  if (first.node_error <= first.amp_error) {
    const auto& [error, x] = errors[first.node_error];
    for (std::size_t k = 0; k < bands.worst.size(); ++k)
      if (!std::isfinite(std::abs(mna.voltage_at_unknown(x, static_cast<int>(k))) * error.limit))
        overflowing(circuit, error, result.nodes[k].name);
  }
  const auto& [error, x] = errors[std::min(first.amp_error, first.node_error)];
  for (std::size_t a = 0; a < result.opamps.size(); ++a) {
    const double sensitivity = mna.voltage_at_unknown(x, bands.outputs[a]);
    if (sensitivity != 0 && !std::isfinite(sensitivity * error.limit)) overflowing(circuit, error, result.opamps[a].out);
  }
  overflowing(circuit, error, result.opamps.front().out);  // not reached: some share overflowed
}

// The DC errors' right-hand sides in blocks of up to kBlock columns, whole op
// amps at a time; the blocks are the same for any number of threads.
struct ErrorBlock {
  std::size_t first, last;  // op amps [first, last) of opamp_errors
  std::size_t columns;
};

void error_blocks(const std::vector<OpAmpErrors>& amps, std::vector<ErrorBlock>& blocks) {
  blocks.clear();
  for (std::size_t first = 0, last = 0; first < amps.size(); first = last) {
    std::size_t columns = 0;
    while (last < amps.size() && columns + amps[last].columns() <= kBlock) columns += amps[last++].columns();
    blocks.push_back({first, last, columns});
  }
}

// Solves one block's right-hand sides into `block` and turns each pin pair
// (a unit drawn from +, one from -) into its ios and ib columns, in place:
// P <- (P - M)/2, M <- P + M. Appends the block's errors, in order, to `errors`.
void solve_block(const Circuit& circuit, const DcSystem& dc, const std::vector<OpAmpErrors>& amps,
                 const ErrorBlock& span, Vector& block, std::vector<ErrorColumn>& errors) {
  const MnaSystem& mna = dc.mna();
  const std::size_t n = dc.size();
  auto column = [&](std::size_t c) { return &block[c * n]; };
  std::fill(block.begin(), block.begin() + static_cast<std::ptrdiff_t>(span.columns * n), 0.0);
  for (std::size_t k = span.first, c = 0; k < span.last; c += amps[k++].columns())
    unit_rhs(circuit, mna, amps[k], column(c));
  dc.solve(block, static_cast<int>(span.columns));
  if (!std::all_of(block.begin(), block.begin() + static_cast<std::ptrdiff_t>(span.columns * n),
                   [](double v) { return std::isfinite(v); }))
    for (std::size_t c = 0; c < span.columns; ++c) require_finite(column(c), n, mna);
  for (std::size_t k = span.first, c = 0; k < span.last; ++k) {
    const OpAmpErrors& amp = amps[k];
    if (amp.vos != 0) errors.push_back({{amp.element, DcErrorKind::vos, amp.vos}, column(c++)});
    if (!amp.pins()) continue;
    double* plus = column(c);
    double* minus = column(c + 1);
    c += 2;
    for (std::size_t u = 0; u < n; ++u) {
      const double p = plus[u], m = minus[u];
      plus[u] = 0.5 * (p - m);
      minus[u] = p + m;
    }
    if (amp.ios != 0) errors.push_back({{amp.element, DcErrorKind::ios, amp.ios}, plus});
    if (amp.ib != 0) errors.push_back({{amp.element, DcErrorKind::ib, amp.ib}, minus});
    if (amp.ib_excess != 0) errors.push_back({{amp.element, DcErrorKind::ib_max, amp.ib_excess}, minus});
  }
}

// What a bias run works in besides its result, kept by the DcSystem for its
// next run: a second run on the same structure (spread: one per draw)
// allocates nothing.
struct BiasScratch {
  explicit BiasScratch(const Circuit& circuit) : pins(circuit) {}
  PinNeighbours pins;
  Vector x;  // the nominal point
  Bands bands;
  std::vector<OpAmpErrors> amps;
  std::vector<ErrorBlock> blocks;
  // Per worker: its own DcSystem ([0] stays empty: the system itself), the
  // restamp of the system it was last factored at, a block of solutions,
  // the errors of its block, its failure.
  std::vector<std::unique_ptr<DcSystem>> own;
  std::vector<unsigned> own_restamps;
  std::vector<Vector> buffers;
  std::vector<std::vector<ErrorColumn>> wave_errors;
  std::vector<std::exception_ptr> failed;
  std::vector<ErrorColumn> errors;  // a wave's, in order
  std::vector<FoldStop> stops;      // per range of a wave's fold
  // The cascade's path (dc_cascade.hpp): its plan, kept while the errors'
  // rows stay the same, the errors in its terms, and a node's largest shares.
  // The tree's path (dc_tree.hpp) likewise, for stages that load each other.
  DcCascade cascade;
  bool cascade_planned = false;
  DcTree tree;
  bool tree_planned = false;
  std::vector<CascadeError> cascade_errors;
  std::vector<DcError> cascade_meta;
  std::vector<CascadeShare> shares;
  std::size_t solved_error = SIZE_MAX;  // which error `solved` holds
  Vector solved;
};

// The op amps' DC errors as sums of unit right-hand sides, in the order the
// per-error path solves them: vos (+1 in the gain row), ios = (P - M)/2,
// ib = P + M and ib_max = P + M, where P (M) is 1 A drawn from the + (-) pin.
void cascade_errors(const Circuit& circuit, const MnaSystem& mna, const std::vector<OpAmpErrors>& amps,
                    std::vector<CascadeError>& out, std::vector<DcError>& meta) {
  out.clear();
  meta.clear();
  for (const OpAmpErrors& amp : amps) {
    const auto& pins = circuit.elements[amp.element].nodes;
    const int plus = mna.node_unknown(pins[0]), minus = mna.node_unknown(pins[1]);
    auto add = [&](DcErrorKind kind, double limit, double at_plus, double at_minus) {
      CascadeError e;
      e.limit = limit;
      e.in_band = kind != DcErrorKind::ib;
      auto part = [&](int row, double coefficient) {
        if (row < 0 || coefficient == 0) return;
        e.parts[static_cast<std::size_t>(e.part_count++)] = {row, coefficient};
      };
      if (kind == DcErrorKind::vos) {
        part(mna.opamp_gain_row(amp.element), 1.0);
      } else if (plus == minus) {
        part(plus, at_plus + at_minus);
      } else {
        part(plus, at_plus);
        part(minus, at_minus);
      }
      out.push_back(e);
      meta.push_back({amp.element, kind, limit});
    };
    if (amp.vos != 0) add(DcErrorKind::vos, amp.vos, 0, 0);
    if (!amp.pins()) continue;
    if (amp.ios != 0) add(DcErrorKind::ios, amp.ios, -0.5, 0.5);
    if (amp.ib != 0) add(DcErrorKind::ib, amp.ib, -1.0, -1.0);
    if (amp.ib_excess != 0) add(DcErrorKind::ib_max, amp.ib_excess, -1.0, -1.0);
  }
}

// One error's whole solution, for the rare unknown the cascade would walk
// too far to reach: solved once, kept while the same error is asked for.
const double* solved_error(const DcSystem& dc, BiasScratch& work, std::size_t error) {
  if (work.solved_error != error) {
    const CascadeError& e = work.cascade_errors[error];
    work.solved.assign(dc.size(), 0.0);
    for (int p = 0; p < e.part_count; ++p)
      work.solved[static_cast<std::size_t>(e.parts[static_cast<std::size_t>(p)].row)] += e.parts[static_cast<std::size_t>(p)].coefficient;
    dc.solve(work.solved, 1);
    work.solved_error = error;
  }
  return work.solved.data();
}

// Every DC error folded into the bands and the op amps' largest contributors
// by a linear-time path (DcCascade or DcTree), when the circuit suits it:
// false leaves both as they were, for the next path.
template <typename Path>
bool fold_linear(const DcSystem& dc, BiasResult& result, BiasScratch& work, Path& path, bool& planned) {
  const Circuit& circuit = dc.circuit();
  const MnaSystem& mna = dc.mna();
  if (!planned || !path.planned_for(work.cascade_errors)) {
    if constexpr (std::is_same_v<Path, DcTree>) path.plan(mna, dc.values(), work.cascade_errors);
    else path.plan(mna, work.cascade_errors);
    planned = true;
  }
  if (!path.usable() || !path.run(dc.values(), work.cascade_errors)) return false;
  work.solved_error = SIZE_MAX;
  Bands& bands = work.bands;
  for (std::size_t k = 0; k < bands.worst.size(); ++k) {
    bands.worst[k] = path.worst(static_cast<int>(k));
    bands.squares[k] = path.squares(static_cast<int>(k));
  }
  static const std::string none;
  for (std::size_t a = 0; a < result.opamps.size(); ++a) {
    path.largest(bands.outputs[a], kLargestShown, work.shares);
    for (const CascadeShare& share : work.shares) {
      const DcError& error = work.cascade_meta[share.error];
      const double s = share.sensitivity;
      const std::string* through = &none;
      if (error.kind != DcErrorKind::vos) {
        auto voltage = [&](int node) {
          const auto terms = mna.voltage_terms(node);
          double v = 0;
          for (int t = 0; t < terms.count; ++t) {
            const int unknown = terms.term[static_cast<std::size_t>(t)].unknown;
            double x = 0;
            if (!path.value(share.error, unknown, x)) x = solved_error(dc, work, share.error)[unknown];
            v += terms.term[static_cast<std::size_t>(t)].coefficient * x;
          }
          return v;
        };
        through = busiest_resistor(circuit, work.pins, voltage, circuit.elements[error.element]);
        if (!through) through = &none;
      }
      keep_if_large(result.opamps[a].largest, bands.kept[a], circuit.elements[error.element].name, error.kind,
                    std::abs(s), error.kind == DcErrorKind::ib ? s * error.limit : std::abs(s) * error.limit,
                    *through);
    }
  }
  return true;
}

// The first linear-time path that takes the circuit; per_error when none does.
BiasPath fold_linear_paths(const DcSystem& dc, BiasResult& result, BiasScratch& work, bool cascade, bool tree) {
  if (!cascade && !tree) return BiasPath::per_error;
  opamp_errors(dc.circuit(), work.amps);
  cascade_errors(dc.circuit(), dc.mna(), work.amps, work.cascade_errors, work.cascade_meta);
  if (cascade && fold_linear(dc, result, work, work.cascade, work.cascade_planned)) return BiasPath::cascade;
  if (tree && fold_linear(dc, result, work, work.tree, work.tree_planned)) return BiasPath::tree;
  return BiasPath::per_error;
}

// Worker w's DcSystem at the values of `dc`: built the first time, restamped
// when `dc` has been restamped since.
const DcSystem& worker_system(const DcSystem& dc, BiasScratch& work, std::size_t w) {
  if (w == 0) return dc;
  if (!work.own[w]) {
    work.own[w] = std::make_unique<DcSystem>(dc.circuit(), dc.kind());
  } else if (work.own_restamps[w] != dc.restamps()) {
    work.own[w]->restamp();
  }
  work.own_restamps[w] = dc.restamps();
  return *work.own[w];
}

// Every DC error folded into the bands and the op amps' largest contributors.
// On `threads` workers: waves of one block per worker are solved at once (a
// worker has a DcSystem of its own, as KLU's solve keeps its workspace in the
// factors), then the wave's errors are folded with the nodes and op amps cut
// into ranges, each range taking the errors in order. A failure is the one a
// single thread meets first: a block's solve fails only after the blocks
// before it have been folded.
void fold_dc_errors(const DcSystem& dc, int threads, BiasResult& result, BiasScratch& work) {
  const Circuit& circuit = dc.circuit();
  const MnaSystem& mna = dc.mna();
  opamp_errors(circuit, work.amps);
  error_blocks(work.amps, work.blocks);
  const auto& blocks = work.blocks;
  const std::size_t n = dc.size();
  const int workers = std::max(1, std::min<int>(resolve_threads(threads), static_cast<int>(blocks.size())));
  const auto slots = static_cast<std::size_t>(workers);
  if (work.own.size() < slots) {
    work.own.resize(slots);
    work.own_restamps.resize(slots);
    work.wave_errors.resize(slots);
    work.failed.resize(slots);
    work.stops.resize(slots);
  }
  if (work.buffers.size() < slots) work.buffers.resize(slots);
  for (std::size_t w = 0; w < slots; ++w) work.buffers[w].resize(n * kBlock);
  for (std::size_t first = 0; first < blocks.size(); first += slots) {
    const std::size_t count = std::min(blocks.size() - first, slots);
    for_blocks(count, static_cast<int>(count), [&](int w, std::size_t, std::size_t) {
      const auto slot = static_cast<std::size_t>(w);
      work.wave_errors[slot].clear();
      work.failed[slot] = nullptr;
      try {
        solve_block(circuit, worker_system(dc, work, slot), work.amps, blocks[first + slot], work.buffers[slot],
                    work.wave_errors[slot]);
      } catch (...) {
        work.failed[slot] = std::current_exception();
      }
    });
    work.errors.clear();
    std::size_t solved = 0;
    while (solved < count && !work.failed[solved]) {
      work.errors.insert(work.errors.end(), work.wave_errors[solved].begin(), work.wave_errors[solved].end());
      ++solved;
    }
    const int parts = work.errors.empty() ? 0 : workers;
    const auto cut = [&](std::size_t size, int p) {
      return size * static_cast<std::size_t>(p) / static_cast<std::size_t>(parts);
    };
    Bands& bands = work.bands;
    if (parts > 0)
      for_blocks(static_cast<std::size_t>(parts), parts, [&](int part, std::size_t, std::size_t) {
        work.stops[static_cast<std::size_t>(part)] =
            fold_errors(circuit, mna, work.pins, work.errors, cut(bands.worst.size(), part),
                        cut(bands.worst.size(), part + 1), cut(result.opamps.size(), part),
                        cut(result.opamps.size(), part + 1), result, bands);
      });
    for (int part = 0; part < parts; ++part)
      if (work.stops[static_cast<std::size_t>(part)].node_error != SIZE_MAX ||
          work.stops[static_cast<std::size_t>(part)].amp_error != SIZE_MAX)
        name_overflow(circuit, mna, work.errors, {work.stops.begin(), work.stops.begin() + parts}, result, bands);
    if (solved < count) std::rethrow_exception(work.failed[solved]);
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

struct DcSystem::Scratch {
  explicit Scratch(const Circuit& circuit) : bias(circuit) {}
  BiasScratch bias;
};

DcSystem::Scratch& DcSystem::scratch() const {
  if (!scratch_) scratch_ = std::make_unique<Scratch>(circuit());
  return *scratch_;
}

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
    : mna_(std::make_unique<MnaSystem>(circuit, AnalysisKind::dc)), lu_(make_real_sparse_lu(kind)), kind_(kind) {
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
  ++restamps_;
  factor();
}

const Circuit& DcSystem::circuit() const { return mna_->circuit(); }

std::size_t DcSystem::size() const { return static_cast<std::size_t>(mna_->size()); }

void DcSystem::solve(Vector& block, int count) const { lu_->solve(block.data(), count); }

BiasResult run_bias(const Circuit& circuit, const BiasOptions& options) {
  BiasResult result;
  run_bias(DcSystem(circuit, options.solver), options.threads, result, options.cascade, options.tree);
  return result;
}

BiasResult run_bias(const DcSystem& dc, int threads) {
  BiasResult result;
  run_bias(dc, threads, result);
  return result;
}

namespace {

// The nominal point's tables, assigned in place over those of an earlier run.
void fill_nominal(const Circuit& circuit, const MnaSystem& mna, const double* x, BiasResult& result) {
  result.range = error_range(circuit);
  result.nodes.resize(circuit.node_count() - 1);
  for (std::size_t node = 1; node < circuit.node_count(); ++node) {
    NodeBias& b = result.nodes[node - 1];
    b.name.assign(circuit.node_names[node]);
    b.nominal = at_node(mna, x, static_cast<int>(node));
    b.worst = b.rss = 0;
  }
  std::size_t count = 0;
  for (const auto& e : circuit.elements) count += e.kind == ElementKind::opamp ? 1 : 0;
  result.opamps.resize(count);
  for (std::size_t i = 0, a = 0; i < circuit.elements.size(); ++i) {
    const auto& e = circuit.elements[i];
    if (e.kind != ElementKind::opamp) continue;
    OpAmpBias& amp = result.opamps[a++];
    amp.name.assign(e.name);
    amp.element = i;
    amp.out.assign(circuit.node_names[static_cast<std::size_t>(e.nodes[2])]);
    amp.nominal = at_node(mna, x, e.nodes[2]);
    amp.low = amp.high = 0;
    amp.rails.reset();
    amp.limit_low = amp.limit_high = kNotGiven;
    amp.ok.reset();
  }
  result.warnings.clear();
}

void reset_bands(const Circuit& circuit, const MnaSystem& mna, const BiasResult& result, Bands& bands) {
  bands.worst.assign(result.nodes.size(), 0.0);
  bands.squares.assign(result.nodes.size(), 0.0);
  bands.outputs.clear();
  for (const auto& amp : result.opamps) bands.outputs.push_back(mna.node_unknown(circuit.elements[amp.element].nodes[2]));
  bands.kept.assign(result.opamps.size(), 0);
}

}  // namespace

void run_bias(const DcSystem& dc, int threads, BiasResult& result, bool cascade, bool tree) {
  const Circuit& circuit = dc.circuit();
  const MnaSystem& mna = dc.mna();
  BiasScratch& work = dc.scratch().bias;
  nominal_rhs(circuit, dc, work.x);
  dc.solve(work.x, 1);
  require_finite(work.x.data(), work.x.size(), mna);
  fill_nominal(circuit, mna, work.x.data(), result);

  Bands& bands = work.bands;
  reset_bands(circuit, mna, result, bands);
  result.path = fold_linear_paths(dc, result, work, cascade, tree);
  if (result.path == BiasPath::per_error) fold_dc_errors(dc, threads, result, work);
  for (std::size_t k = 0; k < result.nodes.size(); ++k) {
    result.nodes[k].worst = bands.worst[k];
    result.nodes[k].rss = std::sqrt(bands.squares[k]);
  }
  for (std::size_t a = 0; a < result.opamps.size(); ++a) {
    auto& amp = result.opamps[a];
    amp.largest.resize(bands.kept[a]);
    const double worst = result.node(circuit.elements[amp.element].nodes[2]).worst;
    amp.low = amp.nominal - worst;
    amp.high = amp.nominal + worst;
    check_rails(circuit, amp, result.warnings);
  }
}

}  // namespace tacet
