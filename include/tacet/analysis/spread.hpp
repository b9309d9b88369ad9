#pragma once
// spread: every spec of a circuit measured over random draws of every
// toleranced value (Monte Carlo), with the yield and what drives it.
//
// What spreads: each element with tol= (or ratio= in a matched set) and each
// op-amp model parameter with KEY_tol, per op-amp instance (two op amps of one
// model spread independently). A value in a draw is nominal (1 + d), d its
// relative deviation:
//   a part on its own:      d = tol u
//   a part of matched set:  1 + d = (1 + tol c) (1 + ratio u)
// with u the part's own normalised draw and c the set's common one, both in
// [-1, 1]: uniform, or normal with sigma 1/3 drawn again beyond +-1 (dist=).
//
// Random streams (spread_random.hpp): every normalised draw comes from its own
// counter-based stream, keyed by the seed, the draw's index and the name of
// what is drawn ("R1/value", "U1/gbw", "set:RA"), so the values of draw i do
// not depend on the thread that runs it, on the shard, or on the other parts.
//
// Sharding and merge: shard I of N runs the contiguous draws
// [floor((I-1) runs / N), floor(I runs / N)); its samples (every spec's value
// in every draw) are written as JSON and merged back in draw order, and every
// statistic is computed from the samples in draw order, so the merge of
// shards 1/N..N/N is the whole run, bit for bit.
//
// Per draw, each thread restamps its own copy of the circuit on the MNA
// pattern built once (FrequencyResponse::restamp) and measures every spec as
// tacet check does; no parse, no elaboration, no new pattern.

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "tacet/analysis/spread_corners.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/circuit/spec.hpp"

namespace tacet {

/// Limit of one process: draws x specs held in memory (9 bytes each; a
/// larger run is cut into shards). Threads are bounded as for every command
/// (common/parallel.hpp).
inline constexpr std::int64_t kMostSpreadValues = 200000000;

struct SpreadOptions {
  std::int64_t runs = 1000;  ///< draws in the whole run
  std::uint64_t seed = 1;
  int threads = 0;           ///< worker threads; 0: one per core
  int shard = 1;             ///< which shard, 1 .. shards
  int shards = 1;            ///< how many shards the run is cut into
  /// Called from the calling thread about ten times a second while draws run
  /// (draws done, draws of this shard); may be empty.
  std::function<void(std::int64_t, std::int64_t)> progress;
  /// The problem as one sentence; empty when none.
  std::string validate() const;
  /// The draws of this shard: [first, first + count).
  std::int64_t first() const;
  std::int64_t count() const;
};

/// One value that spreads.
struct SpreadParameter {
  std::string name;   ///< the element ("R1") or the op-amp instance ("U1")
  std::string param;  ///< "value", or the model key ("gbw")
  double tolerance = 0;  ///< relative
  Distribution dist = Distribution::uniform;
  int set = -1;       ///< index into SpreadPlan::sets; -1: not matched
  double ratio = 0;   ///< relative, inside the matched set
  bool operator==(const SpreadParameter&) const = default;
};

struct SpreadPlan {
  std::vector<SpreadParameter> parameters;  ///< elements in order, then op-amp instances
  std::vector<std::string> sets;            ///< matched sets, in order of first appearance
  bool operator==(const SpreadPlan&) const = default;
};

/// What spreads in a circuit.
SpreadPlan plan_spread(const Circuit& circuit);

/// The normalised draws of draw `index`, each in [-1, 1]: own[k] of parameter
/// k, common[j] of matched set j; resized once and reused.
void draw_components(const SpreadPlan& plan, std::uint64_t seed, std::uint64_t index,
                     std::vector<double>& own, std::vector<double>& common);

/// Relative deviation of every parameter from its normalised components
/// (own[k] per parameter, common[j] per matched set, each in [-1, 1]):
/// tol u alone, (1 + tol c)(1 + ratio u) - 1 in a set; `out` resized and reused.
void deviations_of(const SpreadPlan& plan, const std::vector<double>& own, const std::vector<double>& common,
                   std::vector<double>& out);

/// Relative deviation of every parameter in draw `index` (out[k] for
/// parameters[k]); `out` is resized once and reused.
void draw_deviations(const SpreadPlan& plan, std::uint64_t seed, std::uint64_t index,
                     std::vector<double>& out);

/// A spec as the spread reports it (everything a merge needs, without the circuit).
struct SpreadSpec {
  std::string name;
  SpecKind kind = SpecKind::gain;
  SpecUnit unit = SpecUnit::db;
  std::optional<double> min, max;  ///< the limits, in `unit`
  std::optional<double> nominal;   ///< measured at the nominal values; nullopt: not measured
  bool nominal_pass = false;
  bool operator==(const SpreadSpec&) const = default;
};

/// The samples of (a shard of) a run: every spec's value in every draw held.
struct SpreadSamples {
  std::string netlist_hash;  ///< circuit_fingerprint(), 16 hex digits
  std::uint64_t seed = 1;
  std::int64_t runs = 0;     ///< draws of the whole run
  int shard = 1, shards = 1;
  std::int64_t first = 0;    ///< the draws held: [first, first + count)
  std::int64_t count = 0;
  SpreadPlan plan;
  std::vector<SpreadSpec> specs;
  std::vector<std::vector<double>> values;       ///< [spec][draw - first], NaN: not measured
  std::vector<std::vector<std::uint8_t>> pass;   ///< [spec][draw - first], 1: passed
};

/// Runs this shard's draws (all of them unless options.shards > 1).
/// Throws InputError for bad options.
SpreadSamples sample_spread(const Circuit& circuit, const SpreadOptions& options);

/// How many consecutive draws a worker claims at a time: up to 8, fewer when
/// the run is short, so that each of `threads` workers gets at least eight
/// claims and none idles long while another finishes its last claim.
std::int64_t spread_claim_size(std::int64_t count, int threads);

/// Shards 1/N..N/N of one run, in any order, as one whole run. Throws
/// InputError (exit 2) for shards of different netlists, seeds or runs, a
/// shard given twice or one missing; `names` (the files) say which.
SpreadSamples merge_spread_samples(std::vector<SpreadSamples> shards,
                                   const std::vector<std::string>& names);

/// A part's influence on a spec: Pearson's correlation over the draws of its
/// own draw with the spec's measured value (sign: the value rises with it).
/// For a part of a matched set its own draw is its ratio draw; the set's
/// common draw is a driver of its own (name: the set, param "set").
struct SpreadDriver {
  std::string name, param;
  double correlation = 0;
};

struct SpreadQuantile {
  double p = 0;      ///< 0.01 .. 0.99
  double value = 0;  ///< in the spec's unit
};

struct SpreadSpecStats {
  SpreadSpec spec;
  std::int64_t measured = 0;  ///< draws in which the spec could be measured
  std::int64_t passed = 0;
  double mean = 0, sd = 0, min = 0, max = 0;  ///< over measured draws; NaN when none
  std::vector<SpreadQuantile> quantiles;      ///< 1, 5, 50, 95, 99 %
  double yield = 0, yield_low = 0, yield_high = 0;  ///< passed / runs, its 95 % Wilson interval
  std::vector<SpreadDriver> drivers;  ///< the largest |correlation| first, at most 3; failing specs only
  std::vector<double> values;         ///< the measured values in draw order, for histograms
  std::optional<SpecCorner> corner;   ///< the worst corner (--corners); empty: not asked for
};

struct SpreadResult {
  std::string netlist_hash;
  std::uint64_t seed = 1;
  std::int64_t runs = 0;
  std::int64_t passed = 0;  ///< draws in which every spec passed
  double yield = 0, yield_low = 0, yield_high = 0;
  std::size_t parameters = 0;  ///< how many values spread
  std::vector<SpreadSpecStats> specs;  ///< in the order written
  bool corners = false;  ///< every spec carries its corner (--corners)
};

/// Adds the corners of run_spread_corners (in the order of the specs) to a result.
void attach_corners(SpreadResult& result, std::vector<SpecCorner> corners);

/// The statistics of a whole run's samples (first == 0, count == runs).
SpreadResult summarise_spread(const SpreadSamples& samples);

/// sample_spread then summarise_spread, for a run that is not sharded.
SpreadResult run_spread(const Circuit& circuit, const SpreadOptions& options);

/// The 95 % (z = 1.96) score interval of a binomial proportion (Wilson 1927):
/// centre (p + z^2/2n) / (1 + z^2/n), half-width
/// z / (1 + z^2/n) sqrt(p (1 - p) / n + z^2 / 4n^2), p = passed / n.
struct WilsonInterval {
  double low = 0, high = 1;
};
WilsonInterval wilson_interval(std::int64_t passed, std::int64_t n,
                               double z = 1.959963984540054);

/// Quantile p of sorted values, linear between order statistics: type 7 of
/// Hyndman and Fan (1996), h = (n - 1) p, as NumPy's default.
double quantile_of_sorted(const std::vector<double>& sorted, double p);

/// 16 hex digits (FNV-1a, 64 bit) of everything in the circuit that shapes a
/// spread: elements, values, tolerances, models, specs, ambient. Shards of
/// one netlist (with the same --set) agree; any change of value differs.
std::string circuit_fingerprint(const Circuit& circuit);


}  // namespace tacet
