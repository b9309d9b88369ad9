// spread: the statistics of a run's samples, the Wilson interval, and the
// fingerprint that ties shards to one netlist.

#include <algorithm>
#include <cmath>
#include <limits>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "tacet/analysis/spread.hpp"
#include "tacet/analysis/spread_random.hpp"
#include "tacet/common/errors.hpp"

namespace tacet {

WilsonInterval wilson_interval(std::int64_t passed, std::int64_t n, double z) {
  if (n <= 0) return {0, 1};
  const double nn = static_cast<double>(n);
  const double p = static_cast<double>(passed) / nn;
  const double z2 = z * z;
  const double denominator = 1 + z2 / nn;
  const double centre = (p + z2 / (2 * nn)) / denominator;
  const double half = z / denominator * std::sqrt(p * (1 - p) / nn + z2 / (4 * nn * nn));
  return {std::max(0.0, centre - half), std::min(1.0, centre + half)};
}

double quantile_of_sorted(const std::vector<double>& sorted, double p) {
  if (sorted.empty()) return std::numeric_limits<double>::quiet_NaN();
  const double h = static_cast<double>(sorted.size() - 1) * p;
  const auto below = static_cast<std::size_t>(std::floor(h));
  if (below + 1 >= sorted.size()) return sorted.back();
  return sorted[below] + (h - static_cast<double>(below)) * (sorted[below + 1] - sorted[below]);
}

namespace {

constexpr double kQuantiles[] = {0.01, 0.05, 0.5, 0.95, 0.99};
constexpr std::size_t kDriversShown = 3;

void describe_values(SpreadSpecStats& stats, const std::vector<double>& values) {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  for (const double v : values)
    if (!std::isnan(v)) stats.values.push_back(v);
  stats.measured = static_cast<std::int64_t>(stats.values.size());
  stats.mean = stats.sd = stats.min = stats.max = nan;
  if (stats.values.empty()) return;
  double sum = 0;
  for (const double v : stats.values) sum += v;
  stats.mean = sum / static_cast<double>(stats.values.size());
  double squares = 0;
  for (const double v : stats.values) squares += (v - stats.mean) * (v - stats.mean);
  stats.sd = stats.values.size() > 1 ? std::sqrt(squares / static_cast<double>(stats.values.size() - 1)) : 0;
  std::vector<double> sorted = stats.values;
  std::sort(sorted.begin(), sorted.end());
  stats.min = sorted.front();
  stats.max = sorted.back();
  for (const double p : kQuantiles) stats.quantiles.push_back({p, quantile_of_sorted(sorted, p)});
}

/// Sums for Pearson's r between each parameter's deviation and one spec's value.
struct Correlations {
  double n = 0, sy = 0, syy = 0;
  std::vector<double> sx, sxx, sxy;
  double shift = 0;  ///< subtracted from every value, so the sums stay well conditioned
};

/// One pass over the draws, regenerating each draw's deviations from the seed.
void find_drivers(const SpreadSamples& samples, SpreadResult& result) {
  std::vector<std::size_t> failing;
  for (std::size_t s = 0; s < result.specs.size(); ++s)
    if (result.specs[s].passed < samples.runs && result.specs[s].measured > 2) failing.push_back(s);
  const std::size_t n_own = samples.plan.parameters.size();
  const std::size_t n_params = n_own + samples.plan.sets.size();  // own draws, then sets' common draws
  if (failing.empty() || n_params == 0) return;
  std::vector<Correlations> sums(failing.size());
  for (std::size_t f = 0; f < failing.size(); ++f) {
    sums[f].sx.assign(n_params, 0), sums[f].sxx.assign(n_params, 0), sums[f].sxy.assign(n_params, 0);
    sums[f].shift = result.specs[failing[f]].mean;
  }
  std::vector<double> own, common, d(n_params);
  for (std::int64_t i = 0; i < samples.count; ++i) {
    draw_components(samples.plan, samples.seed, static_cast<std::uint64_t>(samples.first + i), own, common);
    std::copy(own.begin(), own.end(), d.begin());
    std::copy(common.begin(), common.end(), d.begin() + static_cast<std::ptrdiff_t>(n_own));
    for (std::size_t f = 0; f < failing.size(); ++f) {
      const double v = samples.values[failing[f]][static_cast<std::size_t>(i)];
      if (std::isnan(v)) continue;
      Correlations& c = sums[f];
      const double y = v - c.shift;
      c.n += 1, c.sy += y, c.syy += y * y;
      for (std::size_t k = 0; k < n_params; ++k)
        c.sx[k] += d[k], c.sxx[k] += d[k] * d[k], c.sxy[k] += d[k] * y;
    }
  }
  for (std::size_t f = 0; f < failing.size(); ++f) {
    const Correlations& c = sums[f];
    std::vector<SpreadDriver> drivers;
    const double vy = c.n * c.syy - c.sy * c.sy;
    for (std::size_t k = 0; k < n_params; ++k) {
      const double vx = c.n * c.sxx[k] - c.sx[k] * c.sx[k];
      if (!(vx > 0) || !(vy > 0)) continue;
      const double r = (c.n * c.sxy[k] - c.sx[k] * c.sy) / std::sqrt(vx * vy);
      if (k < n_own) {
        const auto& p = samples.plan.parameters[k];
        drivers.push_back({p.name, p.set >= 0 ? "ratio" : p.param, r});
      } else {
        drivers.push_back({samples.plan.sets[k - n_own], "set", r});
      }
    }
    std::stable_sort(drivers.begin(), drivers.end(), [](const SpreadDriver& a, const SpreadDriver& b) {
      return std::abs(a.correlation) > std::abs(b.correlation);
    });
    if (drivers.size() > kDriversShown) drivers.resize(kDriversShown);
    result.specs[failing[f]].drivers = std::move(drivers);
  }
}

}  // namespace

SpreadResult summarise_spread(const SpreadSamples& samples) {
  SpreadResult result;
  result.netlist_hash = samples.netlist_hash;
  result.seed = samples.seed;
  result.runs = samples.runs;
  result.parameters = samples.plan.parameters.size();
  const auto runs = static_cast<std::size_t>(samples.count);
  std::vector<std::uint8_t> all(runs, 1);
  for (std::size_t s = 0; s < samples.specs.size(); ++s) {
    SpreadSpecStats stats;
    stats.spec = samples.specs[s];
    describe_values(stats, samples.values[s]);
    for (std::size_t i = 0; i < runs; ++i) {
      stats.passed += samples.pass[s][i];
      all[i] &= samples.pass[s][i];
    }
    const double n = static_cast<double>(samples.runs);
    stats.yield = static_cast<double>(stats.passed) / n;
    const WilsonInterval w = wilson_interval(stats.passed, samples.runs);
    stats.yield_low = w.low, stats.yield_high = w.high;
    result.specs.push_back(std::move(stats));
  }
  for (const std::uint8_t ok : all) result.passed += ok;
  result.yield = static_cast<double>(result.passed) / static_cast<double>(samples.runs);
  const WilsonInterval w = wilson_interval(result.passed, samples.runs);
  result.yield_low = w.low, result.yield_high = w.high;
  find_drivers(samples, result);
  return result;
}

std::string circuit_fingerprint(const Circuit& c) {
  // Every number in shortest round-trip form: any change of value changes the text.
  std::string text = fmt::format("ambient {}\n", c.ambient_celsius);
  if (c.supply) text += fmt::format("supply {} {}\n", c.supply->high, c.supply->low);
  text += fmt::format("ripple {} {}\n", c.supply_ripple, c.supply_ripple_hz);
  if (c.ambient_range) text += fmt::format("ambient range {} {}\n", c.ambient_range->low, c.ambient_range->high);
  for (const std::string& node : c.node_names) text += node + "\n";
  for (const Element& e : c.elements) {
    text += fmt::format("{} {} [{}] {} {} {} {} tol {} {} {} {} {} {}", to_keyword(e.kind), e.name,
                        fmt::join(e.nodes, " "), e.value, e.dc, e.ac_magnitude, e.ac_phase, e.tolerance,
                        to_string(e.dist), e.match, e.ratio, e.noiseless, e.model);
    if (e.rails) text += fmt::format(" rails {} {}", e.rails->high, e.rails->low);
    if (e.level) text += fmt::format(" level {} {} {}", static_cast<int>(e.level->unit), e.level->value, e.level->load);
    text += fmt::format(" band {} {}\n", e.band_low, e.band_high);
  }
  for (const OpAmpModel& m : c.models) {
    text += fmt::format("model {} {} {} {} {} {} {} {} {} {} {} {} {} {} {} {} {} {}", m.name, m.gbw, m.aol,
                        m.fp2, m.rout, m.rin, m.en, m.fce, m.in, m.fci, m.vos, m.ib, m.ios, m.swing,
                        m.slew, m.vcm_low.value_or(-1e300), m.vcm_high.value_or(-1e300), to_string(m.dist));
    text += fmt::format(" {} {} {} {} {} {} {} {} {}", m.cmrr, m.fcmrr, m.cin_diff, m.cin_cm, m.psrr,
                        m.ib_max.value_or(-1e300), m.vos_drift, m.ib_double, m.iout_max);
    for (const ModelTolerance& t : m.tolerances) text += fmt::format(" {} {}", t.key, t.tolerance);
    text += "\n";
  }
  for (const Spec& s : c.specs)
    text += fmt::format("spec {} {} {} {} {} {} {} {} {} {} {} {} {} {}\n", s.name, to_string(s.kind), s.probe,
                        s.at, s.from, s.to, s.ref, s.drop, s.min.value_or(-1e300), s.max.value_or(-1e300),
                        to_string(s.unit), s.input, s.level, s.margin) +
            fmt::format("  {} {} {} {} {}\n", s.opamp, s.band, static_cast<int>(s.weight), s.relative,
                        s.mask.size());
  return fmt::format("{:016x}", spread_random::fnv1a(text));
}

}  // namespace tacet
