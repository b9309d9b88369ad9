#include "tacet/analysis/check.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/probe.hpp"
#include "tacet/solve/response.hpp"
#include "tacet/solve/search.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/headroom.hpp"
#include "tacet/analysis/noise.hpp"

namespace tacet {

int CheckResult::unsolved() const {
  return static_cast<int>(std::count_if(specs.begin(), specs.end(), [](const SpecResult& r) { return !r.unsolved.empty(); }));
}

SolveError CheckResult::unsolved_error() const {
  std::vector<std::string> names;
  const SpecResult* first = nullptr;
  for (const auto& r : specs) {
    if (r.unsolved.empty()) continue;
    names.push_back("'" + r.spec.name + "'");
    if (!first) first = &r;
  }
  // "circuit cannot be solved at DC: X" -> "spec 'dc' at DC: X"; "...: X" -> "spec 'g': X".
  constexpr std::string_view kPrefix = "circuit cannot be solved";
  std::string rest = first ? first->unsolved : std::string();
  if (rest.rfind(kPrefix, 0) == 0) rest.erase(0, kPrefix.size());
  if (!rest.empty() && rest.front() == ' ') rest.erase(0, 1);
  const std::string who =
      fmt::format("spec{} {}", names.size() == 1 ? "" : "s", fmt::join(names, ", "));
  return SolveError::unsolvable(who + (rest.empty() || rest.front() == ':' ? "" : " ") + rest,
                                first ? first->unsolved_hint : std::string());
}

int CheckResult::failed() const {
  return static_cast<int>(std::count_if(specs.begin(), specs.end(), [](const SpecResult& r) { return !r.pass; }));
}

double window_margin(double value, std::optional<double> min, std::optional<double> max) {
  double margin = std::numeric_limits<double>::infinity();
  if (min) margin = std::min(margin, value - *min);
  if (max) margin = std::min(margin, *max - value);
  return margin;
}

double phase_in_window(double degrees, std::optional<double> min, std::optional<double> max) {
  if (!min && !max) return degrees;
  const double target = min && max ? (*min + *max) / 2 : min ? *min : *max;
  return degrees + 360 * std::round((target - degrees) / 360);
}

namespace {

class SpecMeter {
 public:
  SpecMeter(const Circuit& circuit, const SharedAnalyses& shared)
      : circuit_(circuit), bias_error_(shared.bias_error), shared_response_(shared.response),
        shared_bias_(shared.bias) {}

  SpecResult measure(const Spec& spec) {
    SpecResult r{spec, std::nullopt, 0, false, 0, {}, {}, {}};
    if (!spec.probe.empty()) probe_ = resolve_probe(spec.probe, circuit_);
    try {
      measure_kind(r);
    } catch (const SolveError& e) {
      // This spec's analysis cannot run; the others are still measured.
      r = SpecResult{spec, std::nullopt, 0, false, 0, e.sentence(), e.sentence(), e.hint()};
    }
    if (r.value && !std::isfinite(*r.value)) {  // never a number that is not one
      r.value.reset();
      r.note = "the measured value is not finite: the circuit's values overflow a double";
    }
    if (r.value) {
      r.margin = window_margin(*r.value, spec.min, spec.max);
      r.pass = r.margin >= 0;
    }
    return r;
  }

 private:
  void measure_kind(SpecResult& r) {
    switch (r.spec.kind) {
      case SpecKind::gain: gain(r); break;
      case SpecKind::phase: phase(r); break;
      case SpecKind::flatness: flatness(r); break;
      case SpecKind::upper_corner:
      case SpecKind::lower_corner: corner(r); break;
      case SpecKind::noise:
      case SpecKind::snr: noise(r); break;
      case SpecKind::offset: offset(r); break;
      case SpecKind::rails: rails(r); break;
    }
  }

  // One FrequencyResponse for every AC, noise and headroom spec.
  FrequencyResponse& response() {
    if (shared_response_) return *shared_response_;
    if (!response_) response_ = std::make_unique<FrequencyResponse>(circuit_);
    return *response_;
  }
  std::complex<double> h(double f) { return response().at(probe_, f); }
  double db_at(double f) { return to_db(h(f)); }

  void gain(SpecResult& r) {
    const auto z = h(r.spec.at);
    r.value = r.spec.unit == SpecUnit::db ? to_db(z) : std::abs(z);
    r.where = r.spec.at;
  }

  void phase(SpecResult& r) {
    const double measured = to_degrees(h(r.spec.at));
    r.value = phase_in_window(measured, r.spec.min, r.spec.max);
    r.where = r.spec.at;
    if (*r.value != measured)
      r.note = fmt::format("measured {:.2f} deg, the same angle as {:.2f} deg", measured, *r.value);
  }

  /// Largest |dB(H(f)) - dB(H(ref))| over the band: grid, then a golden-section
  /// refinement around the worst grid point.
  void flatness(SpecResult& r) {
    const Spec& s = r.spec;
    const double reference = db_at(s.ref);
    auto deviation = [&](double f) { return std::abs(db_at(f) - reference); };
    const auto grid = log_grid(s.from, s.to);
    std::size_t worst = 0;
    double worst_value = -1;
    for (std::size_t i = 0; i < grid.size(); ++i) {
      const double d = deviation(grid[i]);
      if (d > worst_value) worst = i, worst_value = d;
    }
    double where = grid[worst];
    if (worst > 0 && worst + 1 < grid.size()) {
      if (const Peak peak = golden_max_log(grid[worst - 1], grid[worst + 1], deviation);
          peak.value > worst_value)
        worst_value = peak.value, where = peak.f;
    }
    r.value = worst_value;
    r.where = where;
  }

  /// The first frequency, going away from ref, where the response has fallen
  /// `drop` dB below its value at ref; bisection in log f to 1e-12.
  void corner(SpecResult& r) {
    const Spec& s = r.spec;
    const double target = db_at(s.ref) - s.drop;
    const bool upward = s.kind == SpecKind::upper_corner;
    const auto grid = upward ? log_grid(s.ref, s.to) : log_grid(s.from, s.ref);
    auto below = [&](double f) { return db_at(f) < target; };
    const std::size_t n = grid.size();
    for (std::size_t k = 1; k < n; ++k) {
      const double inside = upward ? grid[k - 1] : grid[n - k];
      const double outside = upward ? grid[k] : grid[n - 1 - k];
      if (!below(outside)) continue;
      r.value = bisect_log(inside, outside, below);
      r.where = *r.value;
      return;
    }
    r.note = fmt::format("the response stays within {:.4g} dB of its value at {}Hz from {}Hz to {}Hz",
                         s.drop, format_si(s.ref), format_si(upward ? s.ref : s.from),
                         format_si(upward ? s.to : s.ref));
  }

  /// Noise over the spec's band: the rms total, or the SNR at the spec's level.
  void noise(SpecResult& r) {
    const Spec& s = r.spec;
    NoiseOptions options;
    options.sweep.kind = SweepKind::list;
    options.sweep.at = {s.from, s.to};
    options.probe = s.probe;
    options.band = Band{s.from, s.to};
    options.weight = s.weight;
    if (s.kind == SpecKind::snr) {
      options.input = s.input;
      options.level = s.level;
    }
    const NoiseResult n = run_noise(circuit_, options, response());
    if (s.kind == SpecKind::noise) {
      r.value = n.total_rms;
      r.note = n.total_rms > 0 ? fmt::format("largest: {} {} {:.0f}%", n.contributors[0].source,
                                             to_string(n.contributors[0].mechanism),
                                             100 * n.contributors[0].share)
                               : "no noise reaches the probe";
    } else if (n.signal) {
      snr(r, *n.signal, n.total_rms);
    }
    if (s.weight != Weighting::none) r.note = fmt::format("{}-weighted; {}", to_string(s.weight), r.note);
  }

  /// A ratio in dB; without noise it is unbounded (and meets any minimum),
  /// without signal there is none.
  void snr(SpecResult& r, const SignalToNoise& signal, double noise_rms) {
    if (std::isfinite(signal.ratio_db)) {
      r.value = signal.ratio_db;
      r.note = fmt::format("signal {}V rms, noise {}V rms", format_si(signal.signal_rms),
                           format_si(noise_rms));
    } else if (signal.signal_rms == 0) {
      r.note = fmt::format("the signal from '{}' does not reach the probe at {}Hz", r.spec.input,
                           format_si(signal.reference));
    } else {
      r.pass = !r.spec.max.has_value();
      r.note = "no noise reaches the probe: the ratio is unbounded";
    }
  }

  // One DC analysis for every spec; when it cannot run, every spec that needs
  // it gets the same reason without running it again.
  const BiasResult& bias() {
    if (bias_error_) throw *bias_error_;
    if (shared_bias_) return *shared_bias_;
    try {
      if (!bias_) bias_ = std::make_unique<BiasResult>(run_bias(circuit_));
    } catch (const SolveError& e) {
      bias_error_ = e;
      throw;
    }
    return *bias_;
  }

  const HeadroomResult& headroom() {
    if (!headroom_)
      headroom_ = std::make_unique<HeadroomResult>(run_headroom(circuit_, bias(), {}, response()));
    return *headroom_;
  }

  /// The largest |V| the node can reach over the offsets' unknown signs:
  /// |nominal| + worst (the nominal includes the bias currents' shift).
  void offset(SpecResult& r) {
    const NodeBias& node = bias().node(probe_.plus);
    r.value = std::abs(node.nominal) + node.worst;
    r.note = fmt::format("nominal {}V, worst-case band +-{}V", format_si(node.nominal), format_si(node.worst));
  }

  /// The smallest distance of any op-amp output from its rails minus swing,
  /// at DC over the offsets and, where a source declares level=, at that
  /// level over its band (every pin).
  void rails(SpecResult& r) {
    const BiasResult& b = bias();
    std::optional<double> smallest;
    auto take = [&](double margin, const std::string& where) {
      if (std::isnan(margin)) return;
      if (!smallest || margin < *smallest) smallest = margin, r.note = where;
    };
    for (const auto& op : b.opamps)
      if (op.ok.has_value())
        take(std::min(op.limit_high - op.high, op.low - op.limit_low), fmt::format("{} output at DC", op.name));
    const bool has_level = std::any_of(circuit_.elements.begin(), circuit_.elements.end(),
                                       [](const Element& e) { return e.level.has_value(); });
    if (has_level) {
      const HeadroomResult& h = headroom();
      for (const auto& op : h.opamps) {
        if (!op.has_rails) continue;
        for (const auto* pin : {&op.out, &op.plus, &op.minus})
          take(pin->margin, fmt::format("{} pin '{}' at {}Hz at the declared level", op.name, pin->node,
                                        format_si(pin->frequency)));
      }
    }
    r.value = smallest;
    if (!smallest) r.note = "no op amp has rails to check: declare supply or rails=";
  }

  const Circuit& circuit_;
  std::unique_ptr<BiasResult> bias_;
  std::optional<SolveError> bias_error_;  ///< why the DC analysis cannot run; empty: it can (or not tried)
  std::unique_ptr<HeadroomResult> headroom_;
  std::unique_ptr<FrequencyResponse> response_;
  FrequencyResponse* shared_response_;
  const BiasResult* shared_bias_;
  Probe probe_;  ///< the probe of the spec being measured
};

}  // namespace

CheckResult run_check(const Circuit& circuit) { return run_check(circuit, SharedAnalyses{}); }

CheckResult run_check(const Circuit& circuit, const SharedAnalyses& shared) {
  CheckResult result;
  SpecMeter meter(circuit, shared);
  for (const auto& spec : circuit.specs) result.specs.push_back(meter.measure(spec));
  return result;
}

}  // namespace tacet
