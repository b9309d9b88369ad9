// Loop gain: one closed-loop factorisation per frequency, one solve per op amp,
// then crossovers and phase crossovers by bisection on the continuous T(f).

#include "tacet/analysis/loop.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "tacet/common/constants.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/common/spelling.hpp"
#include "tacet/solve/block_form.hpp"
#include "tacet/solve/dense_lu.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/search.hpp"

namespace tacet {
namespace {

const OpAmpModel& model_of(const Circuit& circuit, std::size_t element) {
  return circuit.models.at(static_cast<std::size_t>(circuit.elements[element].model));
}

double arg_deg(std::complex<double> t) { return std::arg(t) * 180 / kPi; }

// The points crossovers are bracketed on: the sweep's own when they are dense
// enough and log-spaced, else a log grid over the same range.
std::vector<double> scan_grid(const Sweep& sweep, const std::vector<double>& frequencies) {
  if (sweep.kind == SweepKind::log && sweep.per_decade >= kSearchGridPerDecade) return frequencies;
  const auto [low, high] = std::minmax_element(frequencies.begin(), frequencies.end());
  if (*low == *high) return {};
  return log_grid(*low, *high);
}

// Crossings of T(f) between the points of a scan grid, each refined by
// bisection on the continuous response.
class LoopSearch {
 public:
  explicit LoopSearch(const std::function<std::complex<double>(double)>& t) : t_(t) {}

  /// `values[i]` is T at grid[i]: the brackets come from them, so a caller
  /// that has T on the grid already (the sweep, or one factorisation a grid
  /// point shared by every op amp) pays only for the refinements.
  void scan(const std::vector<double>& grid, const std::vector<std::complex<double>>& values,
            LoopTrace& trace) {
    if (grid.empty()) return;
    double deg0 = arg_deg(values[0]);
    for (std::size_t k = 1; k < grid.size(); ++k) {
      const double deg1 = unwrap_deg(deg0, values[k]);
      find_crossover(grid[k - 1], values[k - 1], grid[k], values[k], deg0, trace);
      find_phase_crossovers(grid[k - 1], deg0, grid[k], deg1, trace);
      deg0 = deg1;
    }
  }

 private:
  // Unwrapped phase inside a scan interval, continued from its left end.
  double phase(double f, double deg_left) { return unwrap_deg(deg_left, t_(f)); }

  void find_crossover(double f0, std::complex<double> t0, double f1, std::complex<double> t1,
                      double deg0, LoopTrace& trace) {
    const bool above0 = std::abs(t0) >= 1, above1 = std::abs(t1) >= 1;
    if (above0 == above1) return;
    const double f = bisect_log(f0, f1, [&](double x) { return (std::abs(t_(x)) >= 1) == above1; });
    trace.crossovers.push_back({f, 180 + phase(f, deg0)});
  }

  void find_phase_crossovers(double f0, double deg0, double f1, double deg1, LoopTrace& trace) {
    // Levels -180 - 360k (k >= 0) strictly between the ends or reached at the
    // right end; the levels 180 + 360m above -180 are not phase crossovers.
    const double lo = std::min(deg0, deg1), hi = std::min(std::max(deg0, deg1), -180.0);
    for (double level = 180 + 360 * std::ceil((lo - 180) / 360); level <= hi; level += 360) {
      if (level == deg0) continue;  // counted in the interval that ends there
      const bool rising = deg1 > deg0;
      const double f = bisect_log(f0, f1, [&](double x) {
        const double d = phase(x, deg0);
        return rising ? d >= level : d <= level;
      });
      trace.phase_crossovers.push_back({f, -20 * std::log10(std::abs(t_(f)))});
    }
  }

  const std::function<std::complex<double>(double)>& t_;
};

void summarise(LoopTrace& trace) {
  auto by_f = [](const auto& a, const auto& b) { return a.f < b.f; };
  std::sort(trace.crossovers.begin(), trace.crossovers.end(), by_f);
  std::sort(trace.phase_crossovers.begin(), trace.phase_crossovers.end(), by_f);
  for (const auto& c : trace.crossovers)
    if (!trace.phase_margin || c.phase_margin < *trace.phase_margin)
      trace.phase_margin = c.phase_margin;
  for (const auto& c : trace.phase_crossovers)
    if (!trace.gain_margin || c.gain_margin < *trace.gain_margin) trace.gain_margin = c.gain_margin;
}

}  // namespace

void find_loop_margins(const std::function<std::complex<double>(double)>& t,
                       const std::vector<double>& grid, LoopTrace& trace) {
  std::vector<std::complex<double>> values;
  values.reserve(grid.size());
  for (const double f : grid) values.push_back(t(f));
  find_loop_margins(t, grid, values, trace);
}

void find_loop_margins(const std::function<std::complex<double>(double)>& t,
                       const std::vector<double>& grid,
                       const std::vector<std::complex<double>>& values, LoopTrace& trace) {
  LoopSearch(t).scan(grid, values, trace);
  summarise(trace);
}

LoopTrace loop_margins(LoopGain& gain, std::size_t opamp, double from, double to) {
  LoopTrace trace;
  trace.opamp = gain.response().mna().circuit().elements[opamp].name;
  find_loop_margins([&](double f) { return gain.at(opamp, f); }, log_grid(from, to), trace);
  return trace;
}

std::complex<double> opamp_gain(const OpAmpModel& m, std::complex<double> s) {
  const double wp = kTwoPi * m.gbw / m.aol;
  std::complex<double> denominator = 1.0 + s / wp;
  if (m.fp2 > 0) denominator *= 1.0 + s / (kTwoPi * m.fp2);
  return m.aol / denominator;
}

bool regenerative(std::complex<double> t_low) {
  return t_low.real() < 0 && t_low.imag() >= 0 && std::abs(t_low) > 1;
}

double unwrap_deg(double previous, std::complex<double> t) {
  const double step = std::remainder(arg_deg(t) - previous, 360.0);
  return previous + step;
}

Sweep default_loop_sweep(const Circuit& circuit) {
  double low = std::numeric_limits<double>::infinity(), high = 0;
  for (const auto& e : circuit.elements) {
    if (e.kind != ElementKind::opamp) continue;
    const auto& m = circuit.models.at(static_cast<std::size_t>(e.model));
    low = std::min(low, m.gbw / m.aol);
    high = std::max({high, m.gbw, m.fp2});
  }
  Sweep sweep;
  if (high == 0) return sweep;
  sweep.from = std::pow(10.0, std::floor(std::log10(low)) - 1);
  sweep.to = std::pow(10.0, std::ceil(std::log10(high)) + 2);
  sweep.per_decade = 20;
  return sweep;
}

std::vector<std::size_t> resolve_opamps(const Circuit& circuit,
                                        const std::vector<std::string>& names) {
  std::vector<std::size_t> all;
  std::vector<std::string> all_names;
  for (std::size_t i = 0; i < circuit.elements.size(); ++i)
    if (circuit.elements[i].kind == ElementKind::opamp) {
      all.push_back(i);
      all_names.push_back(circuit.elements[i].name);
    }
  if (all.empty())
    throw InputError::usage(
        "the circuit has no op amp: loop gain is the return ratio of an op amp's gain source");
  if (names.empty()) return all;
  std::vector<std::size_t> chosen;
  for (const auto& name : names) {
    const auto found = std::find(all_names.begin(), all_names.end(), name);
    if (found != all_names.end()) {
      chosen.push_back(all[static_cast<std::size_t>(found - all_names.begin())]);
      continue;
    }
    std::string message = fmt::format("--opamp '{}' is not an op amp of the circuit", name);
    if (const auto element = circuit.find_element(name))
      message += fmt::format(" (it is a {})", to_keyword(circuit.elements[*element].kind));
    throw InputError::usage(message, choice_hint(name, all_names, "op amps"));
  }
  return chosen;
}

// The op amp's block and its dense factors at the frequency factored last.
struct LoopGain::Blocks {
  BlockForm form;
  // Each block's entries as polynomials, side by side in block order: read
  // where the CSC array holds them, a block's few entries are scattered over
  // a matrix that outgrows the cache. Copied again after a restamp.
  struct Polynomial {
    double c0, c1, c2;
  };
  std::vector<Polynomial> polynomials;  // per form.entries
  unsigned copied = 0;                  // the restamps they were copied at
  DenseBlockLu<std::complex<double>> lu{kMostBlockUnknowns};
  std::vector<std::complex<double>> rhs, x;
  int block = -1;  // whose factors lu holds; -1: none
  double f = -1;
  unsigned restamps = 0;
};

LoopGain::LoopGain(const Circuit& circuit, SolverKind solver, bool blocks)
    : owned_(std::make_unique<FrequencyResponse>(circuit, solver)),
      response_(*owned_),
      rhs_(static_cast<std::size_t>(response_.mna().size())) {
  if (auto form = blocks ? block_form(response_.mna().pattern()) : std::nullopt) {
    blocks_ = std::make_unique<Blocks>();
    blocks_->form = std::move(*form);
  }
}

LoopGain::LoopGain(FrequencyResponse& shared, bool blocks)
    : response_(shared), rhs_(static_cast<std::size_t>(response_.mna().size())) {
  if (auto form = blocks ? block_form(response_.mna().pattern()) : std::nullopt) {
    blocks_ = std::make_unique<Blocks>();
    blocks_->form = std::move(*form);
  }
}

LoopGain::~LoopGain() = default;

namespace {

// T = -A(s) d / v_x from a solution of the unit in the op amp's gain row,
// read through value(unknown): the whole solution, or a block's alone (zero
// outside it), with no state left behind whatever happens.
template <typename Value>
std::complex<double> return_ratio(const MnaSystem& mna, std::size_t opamp, double f, Value&& value) {
  const auto& e = mna.circuit().elements[opamp];
  auto voltage = [&](int node) {
    const auto terms = mna.voltage_terms(node);
    std::complex<double> v{};
    for (int k = 0; k < terms.count; ++k)
      v += terms.term[static_cast<std::size_t>(k)].coefficient * value(terms.term[static_cast<std::size_t>(k)].unknown);
    return v;
  };
  // The voltage the gain source amplifies, with its common-mode error (mna.hpp).
  const std::complex<double> s(0, kTwoPi * f);
  const std::complex<double> plus = voltage(e.nodes[0]), minus = voltage(e.nodes[1]);
  const std::complex<double> d =
      plus - minus + common_mode_feedthrough(model_of(mna.circuit(), opamp), s) * (plus + minus);
  const int source = mna.opamp_source_unknown(opamp);
  const auto node_unknowns = static_cast<int>(mna.circuit().node_count()) - 1;
  const std::complex<double> vx = source < node_unknowns ? voltage(source + 1) : value(source);
  const std::complex<double> t = -opamp_gain(model_of(mna.circuit(), opamp), s) * d / vx;
  if (!std::isfinite(t.real()) || !std::isfinite(t.imag()))
    throw SolveError::unsolvable_at(
        f, fmt::format("the loop gain of '{}' is not finite: its gain source sets no voltage",
                       e.name));
  return t;
}

}  // namespace

std::optional<std::complex<double>> LoopGain::on_block(std::size_t opamp, double f) {
  Blocks& b = *blocks_;
  const MnaSystem& mna = response_.mna();
  const int row = mna.opamp_gain_row(opamp);
  const int j = b.form.row_block[static_cast<std::size_t>(row)];
  const BlockForm::Block& block = b.form.blocks[static_cast<std::size_t>(j)];
  const int n = block.size;
  if (n > kMostBlockUnknowns) return std::nullopt;
  if (b.polynomials.empty() || b.copied != response_.restamps()) {
    const auto all = mna.polynomials();  // CSC order: position `at`
    b.polynomials.resize(b.form.entries.size());
    for (std::size_t i = 0; i < b.form.entries.size(); ++i) {
      const auto& p = all[static_cast<std::size_t>(b.form.entries[i].at)];
      b.polynomials[i] = {p.c0, p.c1, p.c2};
    }
    b.copied = response_.restamps();
  }
  if (b.block != j || b.f != f || b.restamps != response_.restamps()) {
    const std::complex<double> s(0, kTwoPi * f);
    std::complex<double>* a = b.lu.matrix(n);
    for (int i = block.entries_begin; i < block.entries_end; ++i) {
      const BlockForm::Entry& entry = b.form.entries[static_cast<std::size_t>(i)];
      const Blocks::Polynomial& c = b.polynomials[static_cast<std::size_t>(i)];
      a[entry.row * n + entry.col] = c.c0 + s * (c.c1 + s * c.c2);  // as MnaSystem::assemble
    }
    b.block = -1;
    if (!b.lu.factor()) return std::nullopt;
    b.block = j, b.f = f, b.restamps = response_.restamps();
  }
  b.rhs.assign(static_cast<std::size_t>(n), {});
  b.x.resize(static_cast<std::size_t>(n));
  b.rhs[static_cast<std::size_t>(b.form.row_local[static_cast<std::size_t>(row)])] = 1.0;
  if (!b.lu.solve(b.rhs.data(), b.x.data())) return std::nullopt;
  // Nothing upstream of the block moves; what it drives downstream is not read.
  const auto value = [&](int unknown) {
    return b.form.col_block[static_cast<std::size_t>(unknown)] == j
               ? b.x[static_cast<std::size_t>(b.form.col_local[static_cast<std::size_t>(unknown)])]
               : std::complex<double>{};
  };
  return return_ratio(mna, opamp, f, value);
}

std::complex<double> LoopGain::at(std::size_t opamp, double f) {
  last_on_block_ = false;
  if (blocks_)
    if (const auto t = on_block(opamp, f)) {
      last_on_block_ = true;
      return *t;
    }
  response_.factor_at(f);
  const MnaSystem& mna = response_.mna();
  std::fill(rhs_.begin(), rhs_.end(), std::complex<double>{});
  rhs_[static_cast<std::size_t>(mna.opamp_gain_row(opamp))] = 1.0;
  response_.lu().solve(rhs_.data());
  return return_ratio(mna, opamp, f, [&](int unknown) { return rhs_[static_cast<std::size_t>(unknown)]; });
}

LoopResult run_loop(const Circuit& circuit, const LoopOptions& options) {
  const std::vector<std::size_t> opamps = resolve_opamps(circuit, options.opamps);
  LoopResult result;
  result.sweep = options.sweep ? *options.sweep : default_loop_sweep(circuit);
  if (auto problem = result.sweep.validate(); !problem.empty())
    throw InputError::usage(problem);
  result.frequencies = result.sweep.frequencies();
  LoopGain gain(circuit, options.solver);
  result.loops.resize(opamps.size());
  for (std::size_t k = 0; k < opamps.size(); ++k) {
    result.loops[k].opamp = circuit.elements[opamps[k]].name;
    result.loops[k].t.reserve(result.frequencies.size());
    result.loops[k].deg.reserve(result.frequencies.size());
  }
  for (const double f : result.frequencies)
    for (std::size_t k = 0; k < opamps.size(); ++k) {
      LoopTrace& trace = result.loops[k];
      const std::complex<double> t = gain.at(opamps[k], f);
      trace.deg.push_back(trace.t.empty() ? arg_deg(t) : unwrap_deg(trace.deg.back(), t));
      trace.t.push_back(t);
    }
  // The scan shares one factorisation a grid point between the op amps (the
  // sweep's own points when they are dense enough); only the refinements,
  // which move the factorisation around, are per op amp.
  const std::vector<double> grid = scan_grid(result.sweep, result.frequencies);
  const bool on_sweep = grid == result.frequencies;
  std::vector<std::vector<std::complex<double>>> scanned(on_sweep ? 0 : opamps.size());
  if (!on_sweep)
    for (const double f : grid)
      for (std::size_t k = 0; k < opamps.size(); ++k) scanned[k].push_back(gain.at(opamps[k], f));
  for (std::size_t k = 0; k < opamps.size(); ++k) {
    const std::size_t opamp = opamps[k];
    find_loop_margins([&](double f) { return gain.at(opamp, f); }, grid,
                      on_sweep ? result.loops[k].t : scanned[k], result.loops[k]);
    if (!on_sweep) std::vector<std::complex<double>>().swap(scanned[k]);
  }
  return result;
}

}  // namespace tacet
