#include "tacet/analysis/check.hpp"

#include <algorithm>
#include <cmath>
#include <exception>
#include <optional>
#include <functional>
#include <limits>
#include <functional>
#include <map>
#include <memory>
#include <tuple>
#include <unordered_map>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/common/parallel.hpp"
#include "tacet/solve/probe.hpp"
#include "tacet/solve/response.hpp"
#include "tacet/solve/search.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/headroom.hpp"
#include "tacet/analysis/loop.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/analysis/settle.hpp"
#include "tacet/analysis/poles.hpp"

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
        shared_bias_(shared.bias), shared_dc_(shared.dc) {}

  SpecResult measure(const Spec& spec) {
    SpecResult r{spec, std::nullopt, 0, false, 0, {}, {}, {}};
    if (!spec.probe.empty()) probe_ = resolve_probe(spec.probe, circuit_);
    input_.reset();
    if (!spec.input.empty() && spec.kind != SpecKind::snr)
      input_ = resolve_source(spec.input, circuit_, "input=");
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
      if (spec.kind == SpecKind::stable) r.pass = r.margin > 0;  // a pole on the axis is not stable
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
      case SpecKind::deviation: deviation(r); break;
      case SpecKind::mask: mask(r); break;
      case SpecKind::settling:
      case SpecKind::overshoot: step(r); break;
      case SpecKind::phase_margin:
      case SpecKind::gain_margin: loop_margin(r); break;
      case SpecKind::peaking: peaking(r); break;
      case SpecKind::impedance: impedance(r); break;
      case SpecKind::stable: stable(r); break;
    }
  }

  // One FrequencyResponse for every AC, noise and headroom spec, anchored at
  // check_anchor(): a singular matrix there leaves it to anchor at its first
  // frequency, as any response does.
  FrequencyResponse& response() {
    if (shared_response_) return *shared_response_;
    if (!response_) {
      response_ = std::make_unique<FrequencyResponse>(circuit_);
      try {
        response_->anchor_at(check_anchor(circuit_));
      } catch (const SolveError&) {
      }
    }
    return *response_;
  }
  // The response to every source's ac, or with input= the transfer from that source alone.
  std::complex<double> h(double f) {
    return input_ ? response().transfer_at(probe_, *input_, f) : response().at(probe_, f);
  }
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

  /// The largest `value` over [from, to]: a log grid, then a golden-section
  /// refinement between the worst grid point's neighbours (an interior peak).
  static Peak largest_over_band(double from, double to, const std::function<double(double)>& value) {
    const auto grid = log_grid(from, to);
    std::size_t worst = 0;
    double worst_value = -std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < grid.size(); ++i) {
      const double v = value(grid[i]);
      if (v > worst_value) worst = i, worst_value = v;
    }
    Peak best{grid[worst], worst_value};
    if (worst > 0 && worst + 1 < grid.size())
      if (const Peak peak = golden_max_log(grid[worst - 1], grid[worst + 1], value);
          peak.value > best.value)
        best = peak;
    return best;
  }

  /// Largest |dB(H(f)) - dB(H(ref))| over the band.
  void flatness(SpecResult& r) {
    const Spec& s = r.spec;
    const double reference = db_at(s.ref);
    const Peak worst = largest_over_band(s.from, s.to, [&](double f) { return std::abs(db_at(f) - reference); });
    r.value = worst.value;
    r.where = worst.f;
  }

  /// Largest |dB(H/H(ref)) - dB(T/T(ref))| over the band, found as flatness is.
  void deviation(SpecResult& r) {
    const Spec& s = r.spec;
    const double reference = db_at(s.ref) - to_db(s.target.at(s.ref));
    const Peak worst = largest_over_band(s.from, s.to, [&](double f) {
      return std::abs(db_at(f) - to_db(s.target.at(f)) - reference);
    });
    r.value = worst.value;
    r.where = worst.f;
  }

  /// Largest dB(H(f)) - dB(H(ref)) over the band: the resonant rise of the response.
  void peaking(SpecResult& r) {
    const Spec& s = r.spec;
    const double reference = db_at(s.ref);
    const Peak worst = largest_over_band(s.from, s.to, [&](double f) { return db_at(f) - reference; });
    r.value = worst.value;
    r.where = worst.f;
  }

  /// The closest approach of dB(H) to the mask's bounds (negative: outside),
  /// each bound of each segment on its own (a smooth function of log f there),
  /// found as flatness is, and every point's own bounds at its frequency.
  void mask(SpecResult& r) {
    const Spec& s = r.spec;
    const double reference = s.relative ? db_at(s.ref) : 0.0;
    // Both bounds of a segment scan the same grid: each point is solved once.
    std::unordered_map<double, double> solved;
    auto level = [&](double f) {
      const auto [it, added] = solved.try_emplace(f, 0.0);
      if (added) it->second = db_at(f) - reference;
      return it->second;
    };
    Peak closest{0, std::numeric_limits<double>::infinity()};
    bool upper = false;
    auto take = [&](Peak p, bool is_upper) {
      if (p.value < closest.value) closest = p, upper = is_upper;
    };
    for (const MaskPoint& p : s.mask) {
      if (p.low) take({p.f, level(p.f) - *p.low}, false);
      if (p.high) take({p.f, *p.high - level(p.f)}, true);
    }
    for (std::size_t i = 0; i + 1 < s.mask.size(); ++i) {
      const MaskPoint &a = s.mask[i], &b = s.mask[i + 1];
      auto bound_at = [&](double f, double bound_a, double bound_b) {
        return bound_a + (bound_b - bound_a) * std::log(f / a.f) / std::log(b.f / a.f);
      };
      if (a.low && b.low) {
        const Peak p = largest_over_band(a.f, b.f, [&](double f) { return bound_at(f, *a.low, *b.low) - level(f); });
        take({p.f, -p.value}, false);
      }
      if (a.high && b.high) {
        const Peak p = largest_over_band(a.f, b.f, [&](double f) { return level(f) - bound_at(f, *a.high, *b.high); });
        take({p.f, -p.value}, true);
      }
    }
    r.value = closest.value;
    r.where = closest.f;
    r.note = fmt::format("closest at {}Hz to the {} bound{}", format_si(closest.f),
                         upper ? "upper" : "lower",
                         s.relative ? fmt::format(", re {}Hz", format_si(s.ref)) : std::string());
  }

  /// |Z| of the spec's z() probe at one frequency, or its largest over the band.
  void impedance(SpecResult& r) {
    const Spec& s = r.spec;
    if (s.at > 0) {
      r.value = std::abs(h(s.at));
      r.where = s.at;
      return;
    }
    const Peak worst = largest_over_band(s.from, s.to, [&](double f) { return std::abs(h(f)); });
    r.value = worst.value;
    r.where = worst.f;
  }

  // Loop gain on the shared response; each op amp's margins over each range are
  // found once, for every phase_margin and gain_margin spec on that loop.
  LoopGain& loop_gain() {
    if (!loop_gain_) loop_gain_ = std::make_unique<LoopGain>(response());
    return *loop_gain_;
  }

  std::pair<double, double> loop_range(const Spec& s) {
    if (!loop_range_) {
      const Sweep sweep = default_loop_sweep(circuit_);
      loop_range_ = std::pair{sweep.from, sweep.to};
    }
    return {s.from > 0 ? s.from : loop_range_->first, s.to > 0 ? s.to : loop_range_->second};
  }

  /// The smallest margin of the op amp's loop, at its crossover; with none in
  /// the range the margin is unbounded (passes) when |T| has fallen below 1 by
  /// the top of the range, and unknown (fails) when it has not.
  void loop_margin(SpecResult& r) {
    const Spec& s = r.spec;
    const std::size_t opamp = *circuit_.find_element(s.opamp);
    const auto [from, to] = loop_range(s);
    if (!(from < to)) {
      r.note = fmt::format("the loop's range {}Hz .. {}Hz is empty: from= must be below to=", format_si(from),
                           format_si(to));
      return;
    }
    const auto key = std::tuple{opamp, from, to};
    auto found = loops_.find(key);
    if (found == loops_.end()) found = loops_.emplace(key, loop_margins(loop_gain(), opamp, from, to)).first;
    const LoopTrace& loop = found->second;
    const bool phase = s.kind == SpecKind::phase_margin;
    // A loop that starts left of -1 (T negative and |T| > 1: positive feedback
    // at low frequency, a latch) is unstable whatever its crossovers say.
    if (const std::complex<double> low = loop_gain().at(opamp, from); regenerative(low)) {
      r.note = fmt::format("Re T of {} is {:.4g} at {}Hz (|T| = {:.4g}): positive feedback with |T| > 1, "
                           "which no {} describes; a stable spec decides",
                           s.opamp, low.real(), format_si(from), std::abs(low),
                           phase ? "phase margin" : "gain margin");
      return;
    }
    if (phase ? loop.phase_margin.has_value() : loop.gain_margin.has_value()) {
      r.value = phase ? *loop.phase_margin : *loop.gain_margin;
      for (const auto& c : loop.crossovers)
        if (phase && c.phase_margin == *r.value) r.where = c.f;
      for (const auto& c : loop.phase_crossovers)
        if (!phase && c.gain_margin == *r.value) r.where = c.f;
      return;
    }
    const double top_db = to_db(loop_gain().at(opamp, to));
    const std::string range = fmt::format("from {}Hz to {}Hz", format_si(from), format_si(to));
    if (top_db >= 0) {
      r.note = fmt::format("|T| of {} is still {:.1f} dB at {}Hz: its {} lies above the range; widen to=",
                           s.opamp, top_db, format_si(to), phase ? "crossover" : "phase crossover");
      return;
    }
    r.pass = true;
    r.note = phase ? fmt::format("|T| of {} stays below 1 {}: no crossover, the phase margin is unbounded",
                                 s.opamp, range)
                   : fmt::format("the phase of {}'s loop does not reach -180 deg {}: the gain margin is "
                                 "unbounded",
                                 s.opamp, range);
  }

  /// The rightmost pole's real part Re s/(2 pi), Hz: below 0 when every pole
  /// is in the left half-plane. The dense pole method serves kMaxPoleUnknowns
  /// in one block (poles.hpp): beyond it the spec cannot be measured (exit
  /// 3), the others still are.
  void stable(SpecResult& r) {
    const int unknowns = pole_unknowns(response().mna());
    const int block = unknowns > kMaxPoleUnknowns ? largest_pole_block(response().mna()) : unknowns;
    if (block > kMaxPoleUnknowns)
      throw SolveError::unsolvable(
          fmt::format("{} unknowns, {} in one block: more than the {} the dense pole method serves", unknowns,
                      block, kMaxPoleUnknowns),
          "check each op amp's loop with phase_margin and gain_margin specs, or the stage on its own "
          "with a stable spec");
    const PolesResult poles = run_poles(circuit_);
    if (poles.poles.empty()) {
      r.pass = true;
      r.note = "the circuit has no poles (no capacitor, inductor or op-amp pole): nothing can ring";
      return;
    }
    const Root* rightmost = &poles.poles.front();
    for (const Root& p : poles.poles)
      if (p.s.real() > rightmost->s.real()) rightmost = &p;
    r.value = rightmost->re_hz();
    r.where = rightmost->f0();
    const int unstable = static_cast<int>(std::count_if(poles.poles.begin(), poles.poles.end(),
                                                        [](const Root& p) { return p.s.real() >= 0; }));
    r.note = fmt::format("rightmost pole {}Hz{}, f0 {}Hz", format_si(rightmost->re_hz()),
                         rightmost->im_hz() != 0 ? fmt::format(" +-j{}Hz", format_si(std::abs(rightmost->im_hz())))
                                                 : std::string(),
                         format_si(rightmost->f0()));
    if (unstable > 0)
      r.note += fmt::format("; {} pole{} in the right half-plane{}", unstable, unstable == 1 ? "" : "s",
                            poles.unstable_loops.empty()
                                ? std::string()
                                : fmt::format(", unstable loops: {}", fmt::join(poles.unstable_loops, ", ")));
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
    // The corner lies beyond the search range, on the side a one-sided window allows.
    const bool beyond_is_inside = upward ? s.min && !s.max : s.max && !s.min;
    if (beyond_is_inside) {
      r.pass = true;
      r.note += fmt::format(": the corner lies {} {}Hz, so {} {}={}Hz", upward ? "above" : "below",
                            format_si(upward ? s.to : s.from), upward ? "above" : "below",
                            upward ? "min" : "max", format_si(upward ? *s.min : *s.max));
    }
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
      if (s.ref > 0) options.reference = s.ref;
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
      r.note = fmt::format("signal {}V rms at {}Hz, noise {}V rms", format_si(signal.signal_rms),
                           format_si(signal.reference), format_si(noise_rms));
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
      if (!bias_)
        bias_ = std::make_unique<BiasResult>(shared_dc_ ? run_bias(*shared_dc_) : run_bias(circuit_));
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
    // Where the smallest margin is, worded once at the end: a draw of a
    // spread measures this spec thousands of times and reads only the value.
    const OpAmpBias* dc_amp = nullptr;
    const OpAmpHeadroom* level_amp = nullptr;
    const PinHeadroom* level_pin = nullptr;
    auto smaller = [&](double margin) {
      if (std::isnan(margin) || (smallest && !(margin < *smallest))) return false;
      smallest = margin;
      return true;
    };
    for (const auto& op : b.opamps)
      if (op.ok.has_value() && smaller(std::min(op.limit_high - op.high, op.low - op.limit_low)))
        dc_amp = &op;
    const bool has_level = std::any_of(circuit_.elements.begin(), circuit_.elements.end(),
                                       [](const Element& e) { return e.level.has_value(); });
    if (has_level) {
      const HeadroomResult& h = headroom();
      for (const auto& op : h.opamps) {
        if (!op.has_rails) continue;
        for (const auto* pin : {&op.out, &op.plus, &op.minus})
          if (smaller(pin->margin)) level_amp = &op, level_pin = pin;
      }
    }
    r.value = smallest;
    if (!smallest)
      r.note = "no op amp has rails to check: declare supply or rails=";
    else if (level_amp)
      r.note = fmt::format("{} pin '{}' at {}Hz at the declared level", level_amp->name, level_pin->node,
                           format_si(level_pin->frequency));
    else
      r.note = fmt::format("{} output at DC", dc_amp->name);
  }

  /// One step response per (input, probe, band), shared by its settling and
  /// overshoot specs; overshoot takes the default band (it does not depend on it).
  const SettleTrace& step_response(const Spec& s, double band) {
    const std::string key = fmt::format("{}\n{}\n{}", s.input, s.probe, band);
    auto it = steps_.find(key);
    if (it == steps_.end()) {
      SettleOptions options;
      options.probes = {s.probe};
      options.input = s.input;
      options.band = band;
      options.points = 2;
      it = steps_.emplace(key, run_settle(circuit_, options)).first;
    }
    return it->second.traces.front();
  }

  void step(SpecResult& r) {
    const Spec& s = r.spec;
    const bool settling = s.kind == SpecKind::settling;
    const SettleTrace& t = step_response(s, settling ? s.band : SettleOptions{}.band);
    const std::string final = format_si(t.final, 6) + t.unit;
    if (!t.overshoot) {
      r.note = "the final value is 0 (no DC gain): no overshoot or settling relative to it";
      return;
    }
    if (settling) {
      r.value = t.settling_time;
      r.note = t.settling_time ? fmt::format("to +-{:g} % of {}", 100 * s.band, final)
                               : "the response has not settled";
    } else {
      r.value = t.overshoot;
      r.note = fmt::format("peak {}{}, final {}", format_si(t.peak, 6), t.unit, final);
    }
  }

  const Circuit& circuit_;
  std::map<std::string, SettleResult> steps_;
  std::unique_ptr<BiasResult> bias_;
  std::optional<SolveError> bias_error_;  ///< why the DC analysis cannot run; empty: it can (or not tried)
  std::unique_ptr<HeadroomResult> headroom_;
  std::unique_ptr<FrequencyResponse> response_;
  FrequencyResponse* shared_response_;
  std::unique_ptr<LoopGain> loop_gain_;  ///< on response(), for every margin spec
  std::optional<std::pair<double, double>> loop_range_;  ///< Hz: default_loop_sweep's ends
  std::map<std::tuple<std::size_t, double, double>, LoopTrace> loops_;  ///< (op amp, from, to)
  const BiasResult* shared_bias_;
  const DcSystem* shared_dc_;
  Probe probe_;  ///< the probe of the spec being measured
  std::optional<std::size_t> input_;  ///< input=: the one source driving it; empty: every source
};

}  // namespace

double check_anchor(const Circuit& circuit) {
  if (circuit.specs.empty()) return 1e3;
  const Spec& first = circuit.specs.front();
  for (double f : {first.at, first.ref, first.from})
    if (std::isfinite(f) && f > 0) return f;
  return 1e3;
}

namespace {

bool needs_bias(const Spec& spec) { return spec.kind == SpecKind::offset || spec.kind == SpecKind::rails; }

// Specs that share a cached analysis in the meter go to one worker, so that
// it is computed once: a loop's margins, a step response, the headroom sweep.
std::string shared_work(const Spec& s) {
  switch (s.kind) {
    case SpecKind::phase_margin:
    case SpecKind::gain_margin: return fmt::format("loop\n{}\n{}\n{}", s.opamp, s.from, s.to);
    case SpecKind::settling:
    case SpecKind::overshoot: return fmt::format("step\n{}\n{}", s.input, s.probe);
    case SpecKind::rails: return "rails";
    default: return {};
  }
}

// The specs in groups of shared work, each group in spec order, the groups in
// the order of their first spec.
std::vector<std::vector<std::size_t>> spec_groups(const std::vector<Spec>& specs) {
  std::vector<std::vector<std::size_t>> groups;
  std::map<std::string, std::size_t> group_of;
  for (std::size_t i = 0; i < specs.size(); ++i) {
    const std::string key = shared_work(specs[i]);
    if (key.empty()) {
      groups.push_back({i});
      continue;
    }
    const auto [it, added] = group_of.try_emplace(key, groups.size());
    if (added) groups.emplace_back();
    groups[it->second].push_back(i);
  }
  return groups;
}

}  // namespace

CheckResult run_check(const Circuit& circuit, const CheckOptions& options) {
  const std::size_t n = circuit.specs.size();
  const auto groups = spec_groups(circuit.specs);
  const int workers = resolve_threads(options.threads);
  const int threads = std::min<int>(workers, static_cast<int>(groups.size()));
  if (workers <= 1) return run_check(circuit);
  // The DC analysis once, on every worker, before the specs, for every spec that needs it.
  SharedAnalyses shared;
  BiasResult bias;
  if (std::any_of(circuit.specs.begin(), circuit.specs.end(), needs_bias)) {
    try {
      BiasOptions dc_options;
      dc_options.threads = workers;
      bias = run_bias(circuit, dc_options);
      shared.bias = &bias;
    } catch (const SolveError& e) {
      shared.bias_error = e;
    }
  }
  if (threads <= 1) return run_check(circuit, shared);
  std::vector<std::unique_ptr<SpecMeter>> meters(static_cast<std::size_t>(threads));
  std::vector<std::optional<SpecResult>> measured(n);
  std::vector<std::exception_ptr> failures(n);
  for_items(groups.size(), threads, [&](int worker, std::size_t group) {
    auto& meter = meters[static_cast<std::size_t>(worker)];
    if (!meter) meter = std::make_unique<SpecMeter>(circuit, shared);
    for (std::size_t i : groups[group]) {
      try {
        measured[i] = meter->measure(circuit.specs[i]);
      } catch (...) {
        failures[i] = std::current_exception();
      }
    }
  });
  CheckResult result;
  for (std::size_t i = 0; i < n; ++i) {  // what one thread would have met first
    if (failures[i]) std::rethrow_exception(failures[i]);
    result.specs.push_back(std::move(*measured[i]));
  }
  return result;
}

CheckResult run_check(const Circuit& circuit) { return run_check(circuit, SharedAnalyses{}); }

CheckResult run_check(const Circuit& circuit, const SharedAnalyses& shared) {
  CheckResult result;
  SpecMeter meter(circuit, shared);
  result.specs.reserve(circuit.specs.size());
  for (const auto& spec : circuit.specs) result.specs.push_back(meter.measure(spec));
  return result;
}

}  // namespace tacet
