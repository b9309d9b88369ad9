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

class LoopSearch {
 public:
  LoopSearch(LoopGain& gain, std::size_t opamp) : gain_(gain), opamp_(opamp) {}

  void scan(const std::vector<double>& grid, LoopTrace& trace) {
    if (grid.empty()) return;
    double f0 = grid[0];
    std::complex<double> t0 = gain_.at(opamp_, f0);
    double deg0 = arg_deg(t0);
    for (std::size_t k = 1; k < grid.size(); ++k) {
      const double f1 = grid[k];
      const std::complex<double> t1 = gain_.at(opamp_, f1);
      const double deg1 = unwrap_deg(deg0, t1);
      find_crossover(f0, t0, f1, t1, deg0, trace);
      find_phase_crossovers(f0, deg0, f1, deg1, trace);
      f0 = f1, t0 = t1, deg0 = deg1;
    }
  }

 private:
  // Unwrapped phase inside a scan interval, continued from its left end.
  double phase(double f, double deg_left) {
    return unwrap_deg(deg_left, gain_.at(opamp_, f));
  }

  void find_crossover(double f0, std::complex<double> t0, double f1, std::complex<double> t1,
                      double deg0, LoopTrace& trace) {
    const bool above0 = std::abs(t0) >= 1, above1 = std::abs(t1) >= 1;
    if (above0 == above1) return;
    const double f = bisect_log(f0, f1, [&](double x) {
      return (std::abs(gain_.at(opamp_, x)) >= 1) == above1;
    });
    trace.crossovers.push_back({f, 180 + phase(f, deg0)});
  }

  void find_phase_crossovers(double f0, double deg0, double f1, double deg1, LoopTrace& trace) {
    // Levels -180 - 360k strictly between the ends or reached at the right end.
    const double lo = std::min(deg0, deg1), hi = std::max(deg0, deg1);
    for (double level = 180 + 360 * std::ceil((lo - 180) / 360); level <= hi; level += 360) {
      if (level == deg0) continue;  // counted in the interval that ends there
      const bool rising = deg1 > deg0;
      const double f = bisect_log(f0, f1, [&](double x) {
        const double d = phase(x, deg0);
        return rising ? d >= level : d <= level;
      });
      trace.phase_crossovers.push_back({f, -20 * std::log10(std::abs(gain_.at(opamp_, f)))});
    }
  }

  LoopGain& gain_;
  std::size_t opamp_;
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

std::complex<double> opamp_gain(const OpAmpModel& m, std::complex<double> s) {
  const double wp = kTwoPi * m.gbw / m.aol;
  std::complex<double> denominator = 1.0 + s / wp;
  if (m.fp2 > 0) denominator *= 1.0 + s / (kTwoPi * m.fp2);
  return m.aol / denominator;
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

LoopGain::LoopGain(const Circuit& circuit, SolverKind solver)
    : response_(circuit, solver), rhs_(static_cast<std::size_t>(response_.mna().size())) {}

std::complex<double> LoopGain::at(std::size_t opamp, double f) {
  response_.factor_at(f);
  const MnaSystem& mna = response_.mna();
  std::fill(rhs_.begin(), rhs_.end(), std::complex<double>{});
  rhs_[static_cast<std::size_t>(mna.opamp_gain_row(opamp))] = 1.0;
  response_.lu().solve(rhs_.data());
  const auto& e = mna.circuit().elements[opamp];
  auto voltage = [&](int node) {
    const int u = mna.node_unknown(node);
    return u < 0 ? std::complex<double>{} : rhs_[static_cast<std::size_t>(u)];
  };
  // The voltage the gain source amplifies, with its common-mode error (mna.hpp).
  const std::complex<double> s(0, kTwoPi * f);
  const std::complex<double> plus = voltage(e.nodes[0]), minus = voltage(e.nodes[1]);
  const std::complex<double> d =
      plus - minus + common_mode_feedthrough(model_of(mna.circuit(), opamp), s) * (plus + minus);
  const std::complex<double> vx = rhs_[static_cast<std::size_t>(mna.opamp_source_unknown(opamp))];
  const std::complex<double> t = -opamp_gain(model_of(mna.circuit(), opamp), s) * d / vx;
  if (!std::isfinite(t.real()) || !std::isfinite(t.imag()))
    throw SolveError::unsolvable_at(
        f, fmt::format("the loop gain of '{}' is not finite: its gain source sets no voltage",
                       e.name));
  return t;
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
  // The sweep shares one factorisation a frequency between the op amps; the
  // searches, which move the factorisation around.
  const std::vector<double> grid = scan_grid(result.sweep, result.frequencies);
  for (std::size_t k = 0; k < opamps.size(); ++k) {
    LoopSearch(gain, opamps[k]).scan(grid, result.loops[k]);
    summarise(result.loops[k]);
  }
  return result;
}

}  // namespace tacet
