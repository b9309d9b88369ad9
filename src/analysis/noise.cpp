// Noise analysis: one MNA system, one symbolic analysis, then per frequency
// one factorisation and one transposed (adjoint) solve for every source at once.
// With several threads each worker has a response of its own anchored where
// the analysis' response is (response.hpp); the band integral's batches of
// samples and the printed points are shared out in contiguous blocks and
// every sample written into its own slot, summed afterwards in the order one
// thread sums them: the figures are the one thread's, bit for bit.

#include "tacet/analysis/noise.hpp"

#include "tacet/solve/response.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>

#include "tacet/common/spelling.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/common/parallel.hpp"
#include "tacet/analysis/weighting.hpp"
#include "tacet/solve/integrate.hpp"
#include "tacet/solve/mna.hpp"

namespace tacet {
namespace {

constexpr double kZeroCelsius = 273.15;  // K

// A noise source seen by the adjoint: its transfer to the probe is
// y[plus] - y[minus] (an unknown of -1 is gnd and counts as 0).
struct NoiseSource {
  std::size_t element = 0;
  NoiseMechanism mechanism = NoiseMechanism::thermal;
  int plus = -1, minus = -1;
  double white = 0;   // white power density, A^2/Hz or V^2/Hz
  double corner = 0;  // 1/f corner, Hz
  // The part of the source that reaches the probe without the network: a
  // current probe on a resistor reads that resistor's own noise current too.
  double direct = 0;
  double power(double f) const { return white * (1 + corner / f); }
};

std::complex<double> transfer(const std::vector<std::complex<double>>& y, int plus, int minus) {
  std::complex<double> h{};
  if (plus >= 0) h += y[static_cast<std::size_t>(plus)];
  if (minus >= 0) h -= y[static_cast<std::size_t>(minus)];
  return h;
}

// The source's transfer to the probe: through the network, plus its direct part.
std::complex<double> transfer(const std::vector<std::complex<double>>& y, const NoiseSource& source) {
  return transfer(y, source.plus, source.minus) + source.direct;
}

// i(R) is the current from R's first node through R to its second, i.e. the
// conductance current plus the parallel noise current; the noise source pushes
// its current into the first node, so it enters i(R) with the sign -1.
double direct_coupling(const Probe& probe, std::size_t element, NoiseMechanism mechanism) {
  const bool own = probe.kind == ProbeKind::current && probe.element == element;
  return own && mechanism == NoiseMechanism::thermal ? -1.0 : 0.0;
}

std::vector<NoiseSource> noise_sources(const Circuit& circuit, const MnaSystem& mna,
                                       const Probe& probe, double kelvin) {
  std::vector<NoiseSource> sources;
  sources.reserve(circuit.elements.size());  // mostly one per element: grown once or twice at most
  auto add = [&](std::size_t i, NoiseMechanism m, int plus, int minus, double white, double corner) {
    const double direct = direct_coupling(probe, i, m);
    if (white > 0 && (plus >= 0 || minus >= 0 || direct != 0))
      sources.push_back({i, m, plus, minus, white, corner, direct});
  };
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const Element& e = circuit.elements[i];
    if (e.noiseless) continue;
    if (traits(e.kind).thermal_noise)
      add(i, NoiseMechanism::thermal, mna.node_unknown(e.nodes[0]), mna.node_unknown(e.nodes[1]),
          4 * kBoltzmann * kelvin / e.value, 0);
    if (e.kind != ElementKind::opamp) continue;
    const OpAmpModel& m = circuit.model_of(e);
    add(i, NoiseMechanism::en, mna.opamp_gain_row(i), -1, m.en * m.en, m.fce);
    add(i, NoiseMechanism::in_plus, mna.node_unknown(e.nodes[0]), -1, m.in * m.in, m.fci);
    add(i, NoiseMechanism::in_minus, mna.node_unknown(e.nodes[1]), -1, m.in * m.in, m.fci);
  }
  return sources;
}

// The adjoint solution at f: factor, then one transposed solve for the probe.
class AdjointSolver {
 public:
  AdjointSolver(FrequencyResponse& response, const Probe& probe) : response_(response), probe_(probe) {}
  const std::vector<std::complex<double>>& solve(double f) {
    response_.factor_at(f);
    return response_.adjoint(probe_);
  }

 private:
  FrequencyResponse& response_;
  const Probe& probe_;
};

// One adjoint solver per worker: worker 0 on the analysis' response, the
// others on responses of their own (made here, on the calling thread, after
// the analysis' response is anchored).
class AdjointTeam {
 public:
  AdjointTeam(FrequencyResponse& response, const Probe& probe, int threads) {
    solvers_.emplace_back(response, probe);
    for (int w = 1; w < threads; ++w) {
      own_.push_back(response.worker());
      solvers_.emplace_back(*own_.back(), probe);
    }
    // Below about this much work (unknowns x samples) a block costs more in
    // thread start-up than it saves.
    constexpr std::size_t kLeastBlockWork = 4000;
    const auto unknowns = static_cast<std::size_t>(std::max(1, response.mna().size()));
    least_ = std::max<std::size_t>(1, kLeastBlockWork / unknowns);
  }
  int size() const { return static_cast<int>(solvers_.size()); }
  AdjointSolver& main() { return solvers_.front(); }
  /// solve(solver, index, worker) for every index in [0, count), in blocks.
  template <class Solve>
  void for_each(std::size_t count, Solve&& solve) {
    for_blocks(count, block_count(count, size(), least_), [&](int block, std::size_t begin, std::size_t end) {
      for (std::size_t k = begin; k < end; ++k) solve(solvers_[static_cast<std::size_t>(block)], k, block);
    });
  }

 private:
  std::vector<std::unique_ptr<FrequencyResponse>> own_;
  std::vector<AdjointSolver> solvers_;
  std::size_t least_ = 1;
};

// Where a unit of the input source enters: G = y[plus] - y[minus].
struct InputPort {
  int plus = -1, minus = -1;
};

InputPort resolve_input(const std::string& name, const Circuit& circuit, const MnaSystem& mna) {
  const std::size_t index = resolve_source(name, circuit, "--input");
  const Element& e = circuit.elements[index];
  if (traits(e.kind).drive == Drive::voltage) return {mna.branch_unknown(index), -1};
  // A current source draws its current out of its first node into its second.
  return {mna.node_unknown(e.nodes[1]), mna.node_unknown(e.nodes[0])};
}

// The noise figure's source: a resistor that makes thermal noise.
std::size_t resolve_source_resistor(const std::string& name, const Circuit& circuit) {
  std::vector<std::string> resistors;
  for (const Element& e : circuit.elements)
    if (traits(e.kind).thermal_noise && !e.noiseless) resistors.push_back(e.name);
  const std::string listed = resistors.empty()
                                 ? "the circuit has no resistor that makes noise"
                                 : fmt::format("the noisy resistors are {}", fmt::join(resistors, ", "));
  const auto index = circuit.find_element(name);
  if (!index) {
    const std::string near = nearest_word(name, resistors);
    throw InputError::usage(fmt::format("--source '{}' is not an element of the circuit", name),
                            near.empty() ? listed : "did you mean '" + near + "'?");
  }
  const Element& e = circuit.elements[*index];
  if (!traits(e.kind).thermal_noise)
    throw InputError::usage(
        fmt::format("--source '{}' is a {}, not a resistor: a noise figure is taken against a "
                    "resistor's thermal noise",
                    name, to_keyword(e.kind)),
        "name the source resistance; " + listed);
  if (e.noiseless)
    throw InputError::usage(
        fmt::format("--source '{}' is noiseless: it has no thermal noise to compare against", name),
        "drop `noiseless` from it, or name another resistor; " + listed);
  return *index;
}

// Which of the noise sources is the source resistor's thermal noise; none
// when its noise cannot reach the probe (both ends on gnd).
std::optional<std::size_t> source_noise(const std::vector<NoiseSource>& sources, std::size_t element) {
  for (std::size_t i = 0; i < sources.size(); ++i)
    if (sources[i].element == element && sources[i].mechanism == NoiseMechanism::thermal) return i;
  return std::nullopt;
}

// 10 log10(total / part), +inf where the part is 0 (the source does not reach).
double noise_figure(double total, double part) {
  if (part > 0) return 10 * std::log10(total / part);
  return std::numeric_limits<double>::infinity();
}

/// The integration band: the one given, else the sweep's lowest to highest point.
Band integration_band(const NoiseOptions& options) {
  if (options.band) return *options.band;
  const auto f = options.sweep.frequencies();
  const auto [low, high] = std::minmax_element(f.begin(), f.end());
  return {*low, *high};
}

// The power at the probe must be finite: a source or a transfer that
// overflows leaves nothing finite to say (exit 3), never a printed inf.
void require_finite_power(double power, double f, const Probe& probe) {
  if (std::isfinite(power)) return;
  throw SolveError::unsolvable_at(
      f, fmt::format("the noise at probe '{}' is not finite: the circuit's values overflow a double",
                     probe.text));
}

// Every source's density where it is largest in the analysis (its 1/f part
// grows downward) must be a number, or no figure can be.
void require_finite_sources(const Circuit& circuit, const std::vector<NoiseSource>& sources,
                            double lowest) {
  for (const NoiseSource& source : sources) {
    if (std::isfinite(source.power(lowest))) continue;
    const std::string& name = circuit.elements[source.element].name;
    throw SolveError::unsolvable_at(
        lowest,
        fmt::format("the {} noise of '{}' is not finite: its density overflows a double",
                    to_string(source.mechanism), name),
        fmt::format("check the values that set it ({})",
                    source.mechanism == NoiseMechanism::thermal ? "the resistance"
                    : source.mechanism == NoiseMechanism::en    ? "the model's en and fce"
                                                                : "the model's in and fci"));
  }
}

// Output power over |G|^2: none when there is no noise to refer, infinite
// where the input does not reach the probe.
double input_referred_power(double output_power, std::complex<double> gain) {
  return output_power == 0 ? 0.0 : output_power / std::norm(gain);
}

// Sweep points: the density, the densities of the `largest` sources, and with
// an input the gain and the input-referred density; each point into its slot.
void fill_points(NoiseResult& result, AdjointTeam& team, const Circuit& circuit,
                 const std::vector<NoiseSource>& sources, const std::vector<std::size_t>& largest,
                 const InputPort* input, std::optional<std::size_t> source, bool figure) {
  const std::size_t n = result.frequencies.size();
  result.contributor_density.reserve(largest.size());
  for (std::size_t k : largest)
    result.contributor_density.push_back(
        {circuit.elements[sources[k].element].name, sources[k].mechanism, std::vector<double>(n)});
  result.density.resize(n);
  if (figure) result.spot_noise_figure_db.resize(n);
  if (input) result.gain.resize(n), result.input_density.resize(n);
  std::vector<std::vector<double>> parts(static_cast<std::size_t>(team.size()),
                                         std::vector<double>(sources.size()));
  team.for_each(n, [&](AdjointSolver& adjoint, std::size_t point, int worker) {
    const double f = result.frequencies[point];
    std::vector<double>& part = parts[static_cast<std::size_t>(worker)];
    const auto& y = adjoint.solve(f);
    double power = 0;
    for (std::size_t i = 0; i < sources.size(); ++i) {
      part[i] = std::norm(transfer(y, sources[i])) * sources[i].power(f);
      power += part[i];
    }
    require_finite_power(power, f, result.probe);
    for (std::size_t j = 0; j < largest.size(); ++j)
      result.contributor_density[j].density[point] = std::sqrt(part[largest[j]]);
    result.density[point] = std::sqrt(power);
    if (figure) result.spot_noise_figure_db[point] = noise_figure(power, source ? part[*source] : 0.0);
    if (!input) return;
    const auto g = transfer(y, input->plus, input->minus);
    result.gain[point] = g;
    result.input_density[point] = power == 0 ? 0.0 : std::sqrt(power) / std::abs(g);
  });
}

// The statement for an input that does not reach the probe somewhere in the band.
std::string unreached_note(const NoiseResult& result, double f) {
  return fmt::format("the input '{}' does not reach the probe '{}' at {}Hz (between {}Hz and "
                     "{}Hz): the input-referred noise is unbounded",
                     result.input, result.probe.text, format_si(f), format_si(result.band.from),
                     format_si(result.band.to));
}

// The band integral; components: total power, [input-referred power], each
// source. Returns the sources' indices, largest share first (the contributors' order).
std::vector<std::size_t> integrate_contributors(NoiseResult& result, AdjointTeam& team,
                                                const Circuit& circuit,
                                                const std::vector<NoiseSource>& sources,
                                                const InputPort* input, Weighting weight) {
  if (sources.empty()) {  // nothing makes noise: 0 V, and 0 referred to any input
    if (input) result.input_referred_rms = 0.0;
    return {};
  }
  const std::size_t first = input ? 2 : 1;
  const std::size_t m = first + sources.size();
  auto sample = [&](AdjointSolver& adjoint, double f, double* out) {
    const auto& y = adjoint.solve(f);
    const double w = weighting_gain(weight, f);
    out[0] = 0;
    for (std::size_t i = 0; i < sources.size(); ++i) {
      const auto& source = sources[i];
      out[first + i] = std::norm(transfer(y, source)) * source.power(f) * w * w;
      out[0] += out[first + i];
    }
    require_finite_power(out[0], f, result.probe);
    if (input) out[1] = input_referred_power(out[0], transfer(y, input->plus, input->minus));
  };
  const auto integral = integrate_band_batched(
      result.band.from, result.band.to, m, first,
      [&](const double* f, std::size_t count, double* out) {
        team.for_each(count, [&](AdjointSolver& adjoint, std::size_t k, int) { sample(adjoint, f[k], out + k * m); });
      });
  result.band_evaluations = integral.evaluations;
  if (!integral.converged)
    result.notes.push_back(
        "the band integral did not reach its tolerance (1e-8): the totals are approximate");
  const double total = integral.values[0];
  result.total_rms = std::sqrt(total);
  if (input && integral.non_finite_at[1] == 0) result.input_referred_rms = std::sqrt(integral.values[1]);
  if (input && integral.non_finite_at[1] != 0)
    result.notes.push_back(unreached_note(result, integral.non_finite_at[1]));
  std::vector<std::size_t> order(sources.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return integral.values[first + a] > integral.values[first + b];
  });
  result.contributors.reserve(order.size());
  for (std::size_t i : order) {
    const double power = integral.values[first + i];
    result.contributors.push_back({circuit.elements[sources[i].element].name,
                                   sources[i].mechanism, std::sqrt(power),
                                   total > 0 ? power / total : 0.0});
  }
  return order;
}

// The band figure from the contributors: total power over the source's part.
double band_noise_figure(NoiseResult& result, const std::string& source) {
  for (const NoiseContributor& c : result.contributors)
    if (c.source == source && c.mechanism == NoiseMechanism::thermal && c.rms > 0)
      return noise_figure(result.total_rms * result.total_rms, c.rms * c.rms);
  result.notes.push_back(fmt::format(
      "the thermal noise of '{}' does not reach the probe '{}': the noise figure is unbounded",
      source, result.probe.text));
  return std::numeric_limits<double>::infinity();
}

SignalToNoise signal_to_noise(const NoiseResult& result, const NoiseOptions& options,
                              AdjointSolver& adjoint, const InputPort& input) {
  SignalToNoise snr;
  snr.level = *options.level;
  snr.reference = options.reference.value_or(std::sqrt(result.band.from * result.band.to));
  snr.signal_rms = snr.level * std::abs(transfer(adjoint.solve(snr.reference), input.plus, input.minus));
  // Without noise the ratio is unbounded, without signal it is none: neither is a number.
  snr.ratio_db = snr.signal_rms > 0 && result.total_rms > 0
                     ? 20 * std::log10(snr.signal_rms / result.total_rms)
                     : std::numeric_limits<double>::quiet_NaN();
  return snr;
}

bool positive(double f) { return std::isfinite(f) && f > 0; }

}  // namespace

const char* to_string(NoiseMechanism mechanism) {
  switch (mechanism) {
    case NoiseMechanism::thermal: return "thermal";
    case NoiseMechanism::en: return "en";
    case NoiseMechanism::in_plus: return "in+";
    case NoiseMechanism::in_minus: return "in-";
  }
  return "?";
}

std::optional<NoiseMechanism> parse_noise_mechanism(const std::string& text) {
  for (auto m : {NoiseMechanism::thermal, NoiseMechanism::en, NoiseMechanism::in_plus,
                 NoiseMechanism::in_minus})
    if (text == to_string(m)) return m;
  return std::nullopt;
}

std::string NoiseOptions::validate() const {
  if (auto problem = sweep.validate(); !problem.empty()) return problem;
  if (band) {
    if (auto problem = band->validate(); !problem.empty()) return problem;
  } else if (auto problem = integration_band(*this).validate(); !problem.empty()) {
    return "a single frequency has no band to integrate over: give --band F1..F2";
  }
  if (level && input.empty()) return "--level needs --input: the source that carries the signal";
  if (level && !positive(*level))
    return fmt::format("--level {} must be a finite level above 0", format_si(*level));
  if (reference && !positive(*reference))
    return fmt::format("--ref {} must be a finite frequency above 0 Hz", format_si(*reference));
  return {};
}

NoiseResult run_noise(const Circuit& circuit, const NoiseOptions& options) {
  if (auto problem = options.validate(); !problem.empty()) throw InputError::usage(problem);
  resolve_probe(options.probe, circuit);
  FrequencyResponse response(circuit, options.solver);
  return run_noise(circuit, options, response);
}

NoiseResult run_noise(const Circuit& circuit, const NoiseOptions& options,
                      FrequencyResponse& response) {
  if (auto problem = options.validate(); !problem.empty()) throw InputError::usage(problem);
  NoiseResult result;
  result.probe = resolve_probe(options.probe, circuit);
  if (result.probe.kind == ProbeKind::impedance)
    throw InputError::usage(
        fmt::format("noise needs a voltage or current probe, not the impedance '{}'",
                    result.probe.text),
        "probe the node the impedance is seen at: --probe out");
  result.input = options.input;
  result.weight = options.weight;
  result.source = options.source;
  if (!options.source.empty()) resolve_source_resistor(options.source, circuit);
  result.band = integration_band(options);
  result.temperature_kelvin = circuit.ambient_celsius + kZeroCelsius;
  result.frequencies = options.sweep.frequencies();

  const MnaSystem& mna = response.mna();
  std::optional<InputPort> input;
  if (!options.input.empty()) {
    input = resolve_input(options.input, circuit, mna);
    const auto& source = circuit.elements[*circuit.find_element(options.input)];
    result.input_unit = traits(source.kind).drive == Drive::current ? "A" : "V";
  }
  const auto sources = noise_sources(circuit, mna, result.probe, result.temperature_kelvin);
  const auto lowest = std::min_element(result.frequencies.begin(), result.frequencies.end());
  require_finite_sources(circuit, sources, std::min(result.band.from, *lowest));
  // Every worker takes its pivots where one thread takes them (response.hpp).
  response.anchor_at(result.band.from);
  AdjointTeam team(response, result.probe, resolve_threads(options.threads));
  const InputPort* port = input ? &*input : nullptr;
  std::vector<std::size_t> largest =
      integrate_contributors(result, team, circuit, sources, port, options.weight);
  const bool figure = !options.source.empty();
  std::optional<std::size_t> source;
  if (figure) {
    source = source_noise(sources, *circuit.find_element(options.source));
    result.noise_figure_db = band_noise_figure(result, options.source);
  }
  largest.resize(std::min(largest.size(), options.curves));
  fill_points(result, team, circuit, sources, largest, port, source, figure);
  if (options.level) result.signal = signal_to_noise(result, options, team.main(), *input);
  return result;
}

}  // namespace tacet
