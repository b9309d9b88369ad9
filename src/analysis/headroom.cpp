// Headroom: one AC factorisation per frequency of the band, one solve per
// source with a declared level, then every op-amp pin against its limits.

#include "tacet/analysis/headroom.hpp"

#include "tacet/circuit/band.hpp"
#include "tacet/common/constants.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <functional>
#include <memory>

#include "tacet/analysis/ac.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/parallel.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/response.hpp"

namespace tacet {
namespace {

constexpr double kSqrt2 = 1.4142135623730950488016887242097;
// The usual extra-low-voltage limits (docs/analyses/bias.md, "Cautions").
constexpr double kHazardRms = 30.0;
constexpr double kHazardPeak = 42.4;

using Vector = std::vector<std::complex<double>>;

std::vector<LevelSource> level_sources(const Circuit& circuit) {
  std::vector<LevelSource> sources;
  for (const auto& e : circuit.elements)
    if (e.kind == ElementKind::vsource && e.level)
      sources.push_back({e.name, *e.level, peak_volts(*e.level), rms_volts(*e.level),
                         is_hazardous(*e.level)});
  return sources;
}

/// The headroom band: the one given, else from the lowest band_low= to the
/// highest band_high= of the level sources.
Band headroom_band(const Circuit& circuit, const HeadroomOptions& options,
                   const std::vector<LevelSource>& sources) {
  if (options.band_low > 0) return {options.band_low, options.band_high};
  Band band{0, 0};
  for (const auto& e : circuit.elements) {
    if (e.kind != ElementKind::vsource || !e.level || e.band_low <= 0) continue;
    band.from = band.from > 0 ? std::min(band.from, e.band_low) : e.band_low;
    band.to = std::max(band.to, e.band_high);
  }
  if (band.from > 0) return band;
  const std::string& name = sources.front().name;
  throw InputError::usage(
      fmt::format("the headroom at the level of '{}' needs a band", name),
      fmt::format("add band_low=20Hz band_high=20kHz to '{}', or give --band 20..20k", name));
}

// The limits of one op amp's pins; NaN where there are no rails.
void set_limits(const Circuit& circuit, const Element& e, OpAmpHeadroom& amp) {
  const auto rails = rails_for(circuit, e);
  const auto& m = circuit.model_of(e);
  amp.has_cm_range = m.vcm_low.has_value() || m.vcm_high.has_value();
  amp.slew.available = m.slew;
  amp.current.available = m.iout_max;
  if (!rails) return;
  amp.has_rails = true;
  amp.out.limit_low = rails->low + m.swing;
  amp.out.limit_high = rails->high - m.swing;
  for (PinHeadroom* pin : {&amp.plus, &amp.minus}) {
    pin->limit_low = rails->low + m.vcm_low.value_or(0.0);
    pin->limit_high = rails->high - m.vcm_high.value_or(0.0);
  }
}

// Keeps the frequency where the pin's margin is smallest (without limits:
// where its signal is largest).
void track(PinHeadroom& pin, const NodeBias& dc, double peak, double f) {
  const double low = dc.nominal - dc.worst - peak;
  const double high = dc.nominal + dc.worst + peak;
  const double margin = std::min(pin.limit_high - high, low - pin.limit_low);
  const bool first = pin.frequency == 0;
  const bool worse = std::isnan(margin) ? peak > pin.signal_peak : !(margin >= pin.margin);
  if (!first && !worse) return;
  pin.signal_peak = peak, pin.low = low, pin.high = high, pin.margin = margin, pin.frequency = f;
}

void track_current(CurrentHeadroom& current, double peak, double f) {
  if (current.frequency == 0 || peak > current.needed) current.needed = peak, current.frequency = f;
}

void track_slew(SlewHeadroom& slew, double peak, double f) {
  const double needed = kTwoPi * f * peak;
  if (slew.frequency == 0 || needed > slew.needed) slew.needed = needed, slew.frequency = f;
}

/// A level source as the solver sees it: its branch row and its peak.
struct LevelDrive {
  int row = 0;
  double peak = 0;  ///< V
};

std::vector<LevelDrive> drives_of(const Circuit& circuit, const MnaSystem& mna, const std::vector<LevelSource>& sources) {
  std::vector<LevelDrive> drives;
  for (const auto& source : sources)
    drives.push_back({mna.branch_unknown(*circuit.find_element(source.name)), source.peak});
  return drives;
}

// |V| at every node (index = node id) and |I| of every op amp's output branch
// (`branches`, its unknowns), summed over the level sources.
void signal_peaks(const MnaSystem& mna, SparseLu& lu, const std::vector<LevelDrive>& drives, Vector& x,
                  std::vector<double>& peaks, const std::vector<int>& branches,
                  std::vector<double>& currents) {
  std::fill(peaks.begin(), peaks.end(), 0.0);
  std::fill(currents.begin(), currents.end(), 0.0);
  for (const auto& drive : drives) {
    std::fill(x.begin(), x.end(), std::complex<double>{});
    x[static_cast<std::size_t>(drive.row)] = drive.peak;
    lu.solve(x.data());
    for (std::size_t node = 1; node < peaks.size(); ++node)
      peaks[node] += std::abs(mna.node_voltage(x.data(), static_cast<int>(node)));
    for (std::size_t k = 0; k < branches.size(); ++k)
      currents[k] += std::abs(x[static_cast<std::size_t>(branches[k])]);
  }
}

// The signal peaks of a band's frequencies on `threads` workers: waves of a
// few frequencies per worker are solved at once (each worker on a response of
// its own, anchored where the main one is), then handed to `take` one by one
// in frequency order, so whatever keeps a running worst sees exactly the
// sequence one thread would.
class PeakSweep {
 public:
  PeakSweep(FrequencyResponse& response, const std::vector<double>& frequencies, int threads, std::size_t nodes,
            std::size_t branches)
      : response_(response) {
    response.anchor_at(frequencies.front());  // the pivots every worker reuses (response.hpp)
    // No more workers than frequencies: each worker is a whole numeric factorisation.
    const auto workers = std::max<std::size_t>(
        1, std::min(static_cast<std::size_t>(resolve_threads(threads)), frequencies.size()));
    for (std::size_t w = 1; w < workers; ++w) own_.push_back(response.worker());
    const std::size_t slots = workers == 1 ? 1 : workers * kPerWorker;  // one thread: one at a time
    x_.assign(workers, Vector(static_cast<std::size_t>(response.mna().size())));
    peaks_.assign(slots, std::vector<double>(nodes));
    currents_.assign(slots, std::vector<double>(branches));
  }

  template <typename Take>
  void run(const std::vector<double>& frequencies, const std::vector<LevelDrive>& drives,
           const std::vector<int>& branches, Take&& take) {
    const std::size_t workers = x_.size(), slots = peaks_.size();
    for (std::size_t first = 0; first < frequencies.size(); first += slots) {
      const std::size_t count = std::min(slots, frequencies.size() - first);
      for_blocks(count, block_count(count, static_cast<int>(workers), 1), [&](int w, std::size_t begin, std::size_t end) {
        const auto worker = static_cast<std::size_t>(w);
        FrequencyResponse& response = worker == 0 ? response_ : *own_[worker - 1];
        for (std::size_t k = begin; k < end; ++k) {
          response.factor_at(frequencies[first + k]);
          signal_peaks(response.mna(), response.lu(), drives, x_[worker], peaks_[k], branches, currents_[k]);
        }
      });
      for (std::size_t k = 0; k < count; ++k) take(frequencies[first + k], peaks_[k], currents_[k]);
    }
  }

 private:
  static constexpr std::size_t kPerWorker = 8;  // frequencies per worker and wave
  FrequencyResponse& response_;
  std::vector<std::unique_ptr<FrequencyResponse>> own_;
  std::vector<Vector> x_;  // per worker
  std::vector<std::vector<double>> peaks_, currents_;  // per slot of a wave
};

void warn_pin(const std::string& amp, const char* what, const PinHeadroom& pin, const char* limit,
              std::vector<std::string>& warnings) {
  if (pin.ok()) return;
  const bool above = pin.limit_high - pin.high <= pin.low - pin.limit_low;
  warnings.push_back(fmt::format("{}: {} '{}' reaches {}V at {}Hz, {} {}V ({}): {} short", amp,
                                 what, pin.node, format_si(above ? pin.high : pin.low),
                                 format_si(pin.frequency), above ? "above" : "below",
                                 format_si(above ? pin.limit_high : pin.limit_low), limit,
                                 format_si(-pin.margin) + "V"));
}

void warn(const OpAmpHeadroom& amp, std::vector<std::string>& warnings) {
  if (amp.has_rails) {
    warn_pin(amp.name, "output", amp.out, "rail less swing", warnings);
    const char* range = amp.has_cm_range ? "common-mode range" : "supply";
    warn_pin(amp.name, "+ input", amp.plus, range, warnings);
    warn_pin(amp.name, "- input", amp.minus, range, warnings);
  }
  if (!amp.current.ok())
    warnings.push_back(fmt::format("{}: the output must deliver {}A peak at {}Hz, more than its "
                                   "iout_max {}A",
                                   amp.name, format_si(amp.current.needed),
                                   format_si(amp.current.frequency),
                                   format_si(amp.current.available)));
  if (!amp.slew.ok())
    warnings.push_back(fmt::format("{}: the signal needs {}V/us at {}Hz, more than its slew {}V/us",
                                   amp.name, format_si(amp.slew.needed * 1e-6),
                                   format_si(amp.slew.frequency),
                                   format_si(amp.slew.available * 1e-6)));
}

std::string caution(const LevelSource& source) {
  return fmt::format(
      "caution: '{}' declares {}V rms ({}V peak), above the usual extra-low-voltage limits "
      "(30 V rms, 42.4 V peak): the input carries a hazardous voltage. Follow local electrical "
      "codes and licensed practice for anything built and connected; tacet does not assess safety.",
      source.name, format_si(source.rms), format_si(source.peak));
}

// The ripple at every op-amp output: one solve per op amp with psrr, its
// error R/psrr on its gain row (headroom.hpp).
void supply_ripple(const Circuit& circuit, FrequencyResponse& response, HeadroomResult& result) {
  result.ripple = circuit.supply_ripple;
  result.ripple_hz = circuit.supply_ripple_hz;
  std::vector<std::size_t> amps, rejecting;
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    if (circuit.elements[i].kind != ElementKind::opamp) continue;
    amps.push_back(i);
    if (circuit.model_of(circuit.elements[i]).psrr > 0) rejecting.push_back(i);
  }
  if (rejecting.empty()) return;
  response.factor_at(circuit.supply_ripple_hz);
  const MnaSystem& mna = response.mna();
  std::vector<double> peak(amps.size(), 0.0);
  Vector x(static_cast<std::size_t>(mna.size()));
  for (const std::size_t k : rejecting) {
    std::fill(x.begin(), x.end(), std::complex<double>{});
    x[static_cast<std::size_t>(mna.opamp_gain_row(k))] =
        circuit.supply_ripple / circuit.model_of(circuit.elements[k]).psrr;
    response.lu().solve(x.data());
    for (std::size_t a = 0; a < amps.size(); ++a) {
      const int u = mna.node_unknown(circuit.elements[amps[a]].nodes[2]);
      if (u >= 0) peak[a] += std::abs(x[static_cast<std::size_t>(u)]);
    }
  }
  for (std::size_t a = 0; a < amps.size(); ++a) {
    const Element& e = circuit.elements[amps[a]];
    result.ripple_at.push_back({e.name, circuit.node_names[static_cast<std::size_t>(e.nodes[2])], peak[a]});
  }
}

}  // namespace

double peak_volts(const SignalLevel& level) {
  switch (level.unit) {
    case LevelUnit::rms: return level.value * kSqrt2;
    case LevelUnit::peak: return level.value;
    case LevelUnit::power: return std::sqrt(2.0 * level.value * level.load);
  }
  return 0;
}

double rms_volts(const SignalLevel& level) { return peak_volts(level) / kSqrt2; }

bool is_hazardous(const SignalLevel& level) {
  return rms_volts(level) > kHazardRms || peak_volts(level) > kHazardPeak;
}

std::string HeadroomOptions::validate() const {
  if (per_decade < 1) return fmt::format("--per-decade {} must be at least 1", per_decade);
  if (band_low == 0 && band_high == 0) return {};
  return Band{band_low, band_high}.validate();
}

// The analysis; `response` gives the FrequencyResponse when the sweep needs one.
static HeadroomResult headroom_of(const Circuit& circuit, const BiasResult& bias,
                           const HeadroomOptions& options,
                           const std::function<FrequencyResponse&()>& response_of) {
  if (auto problem = options.validate(); !problem.empty())
    throw InputError::usage(problem);
  HeadroomResult result;
  if (circuit.supply && circuit.supply_ripple > 0) supply_ripple(circuit, response_of(), result);
  result.sources = level_sources(circuit);
  for (const auto& source : result.sources)
    if (source.hazardous) result.cautions.push_back(caution(source));
  if (result.sources.empty()) return result;
  const Band band = headroom_band(circuit, options, result.sources);
  result.band_low = band.from, result.band_high = band.to;

  // Sized once: a spread draw runs this again, and growth would reallocate
  // about log2(op amps) times per table.
  const auto opamp_count = static_cast<std::size_t>(std::count_if(
      circuit.elements.begin(), circuit.elements.end(), [](const Element& e) { return e.kind == ElementKind::opamp; }));
  std::vector<const Element*> amps;
  std::vector<std::size_t> amp_elements;
  amps.reserve(opamp_count), amp_elements.reserve(opamp_count), result.opamps.reserve(opamp_count);
  for (std::size_t i = 0; i < circuit.elements.size(); ++i) {
    const Element& e = circuit.elements[i];
    if (e.kind != ElementKind::opamp) continue;
    amp_elements.push_back(i);
    OpAmpHeadroom amp;
    amp.name = e.name;
    amp.out.node = circuit.node_names[static_cast<std::size_t>(e.nodes[2])];
    amp.plus.node = circuit.node_names[static_cast<std::size_t>(e.nodes[0])];
    amp.minus.node = circuit.node_names[static_cast<std::size_t>(e.nodes[1])];
    set_limits(circuit, e, amp);
    result.opamps.push_back(amp);
    amps.push_back(&e);
  }

  Sweep grid;
  grid.from = band.from, grid.to = band.to, grid.per_decade = options.per_decade;
  FrequencyResponse& response = response_of();
  const MnaSystem& mna = response.mna();
  const std::vector<LevelDrive> drives = drives_of(circuit, mna, result.sources);
  std::vector<int> branches;
  branches.reserve(amp_elements.size());
  for (const std::size_t i : amp_elements) branches.push_back(mna.branch_unknown(i));
  const std::vector<double> frequencies = grid.frequencies();
  PeakSweep sweep(response, frequencies, options.threads, circuit.node_count(), branches.size());
  sweep.run(frequencies, drives, branches, [&](double f, const std::vector<double>& peaks,
                                                const std::vector<double>& currents) {
    for (std::size_t k = 0; k < amps.size(); ++k) {
      const auto& pins = amps[k]->nodes;
      auto& amp = result.opamps[k];
      track(amp.out, bias.node(pins[2]), peaks[static_cast<std::size_t>(pins[2])], f);
      track(amp.plus, bias.node(pins[0]), peaks[static_cast<std::size_t>(pins[0])], f);
      track(amp.minus, bias.node(pins[1]), peaks[static_cast<std::size_t>(pins[1])], f);
      track_slew(amp.slew, peaks[static_cast<std::size_t>(pins[2])], f);
      track_current(amp.current, currents[k], f);
    }
  });
  for (const auto& amp : result.opamps) warn(amp, result.warnings);
  return result;
}

HeadroomResult run_headroom(const Circuit& circuit, const BiasResult& bias,
                            const HeadroomOptions& options) {
  std::unique_ptr<FrequencyResponse> response;  // only when some source declares a level
  return headroom_of(circuit, bias, options, [&]() -> FrequencyResponse& {
    if (!response) response = std::make_unique<FrequencyResponse>(circuit, options.solver);
    return *response;
  });
}

HeadroomResult run_headroom(const Circuit& circuit, const BiasResult& bias,
                            const HeadroomOptions& options, FrequencyResponse& response) {
  return headroom_of(circuit, bias, options, [&]() -> FrequencyResponse& { return response; });
}

}  // namespace tacet
