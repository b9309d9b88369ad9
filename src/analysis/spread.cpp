// spread: what spreads, the draws, and the draws run on threads.

#include "tacet/analysis/spread.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <exception>
#include <limits>
#include <map>
#include <memory>
#include <mutex>
#include <thread>
#include <unordered_map>

#include <fmt/format.h>

#include "tacet/analysis/check.hpp"
#include "tacet/analysis/spread_draw.hpp"
#include "tacet/analysis/spread_random.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/parallel.hpp"

namespace tacet {

std::string SpreadOptions::validate() const {
  if (runs < 1) return fmt::format("--runs must be at least 1, not {}", runs);
  if (auto problem = threads_problem(threads); !problem.empty()) return problem;
  if (shards < 1 || shard < 1 || shard > shards)
    return fmt::format("--shard {}/{} does not exist: shards are numbered 1/N to N/N", shard, shards);
  if (shards > runs)
    return fmt::format("--shard {}/{} cuts {} draws into more shards than draws", shard, shards, runs);
  return {};
}

namespace {
/// floor(i runs / n) without overflow: i q + floor(i r / n), runs = q n + r.
std::int64_t shard_start(std::int64_t i, std::int64_t runs, std::int64_t n) {
  return i * (runs / n) + (i * (runs % n)) / n;
}
}  // namespace

std::int64_t SpreadOptions::first() const { return shard_start(shard - 1, runs, shards); }

std::int64_t SpreadOptions::count() const { return shard_start(shard, runs, shards) - first(); }

SpreadPlan plan_spread(const Circuit& circuit) {
  SpreadPlan plan;
  std::map<std::string, int> set_index;
  for (const Element& e : circuit.elements) {
    if (e.tolerance <= 0 && e.ratio <= 0) continue;
    SpreadParameter p{e.name, "value", e.tolerance, e.dist, -1, e.ratio};
    if (!e.match.empty()) {
      const auto [it, added] = set_index.try_emplace(e.match, static_cast<int>(plan.sets.size()));
      if (added) plan.sets.push_back(e.match);
      p.set = it->second;
    }
    plan.parameters.push_back(std::move(p));
  }
  for (const Element& e : circuit.elements) {
    if (e.kind != ElementKind::opamp) continue;
    const OpAmpModel& m = circuit.model_of(e);
    for (const ModelTolerance& t : m.tolerances)
      if (t.tolerance > 0) plan.parameters.push_back({e.name, t.key, t.tolerance, m.dist, -1, 0});
  }
  return plan;
}

namespace {

std::uint64_t parameter_key(const SpreadParameter& p) {
  using spread_random::fnv1a;
  return fnv1a(p.param, fnv1a("/", fnv1a(p.name)));
}

std::uint64_t set_key(const std::string& set) { return spread_random::fnv1a(set, spread_random::fnv1a("set:")); }

}  // namespace

void draw_components(const SpreadPlan& plan, std::uint64_t seed, std::uint64_t index,
                     std::vector<double>& own, std::vector<double>& common) {
  own.resize(plan.parameters.size());
  common.resize(plan.sets.size());
  // A set's common draw uses the distribution of its parts (elaboration makes them agree).
  std::fill(common.begin(), common.end(), 0.0);
  std::size_t drawn = 0;
  for (std::size_t k = 0; k < plan.parameters.size(); ++k) {
    const SpreadParameter& p = plan.parameters[k];
    own[k] = spread_random::Stream(seed, index, parameter_key(p)).draw(p.dist);
    if (p.set >= 0 && static_cast<std::size_t>(p.set) >= drawn) {  // sets are numbered in order of first part
      common[static_cast<std::size_t>(p.set)] =
          spread_random::Stream(seed, index, set_key(plan.sets[static_cast<std::size_t>(p.set)])).draw(p.dist);
      drawn = static_cast<std::size_t>(p.set) + 1;
    }
  }
}

void draw_deviations(const SpreadPlan& plan, std::uint64_t seed, std::uint64_t index,
                     std::vector<double>& out) {
  thread_local std::vector<double> own, common;
  draw_components(plan, seed, index, own, common);
  deviations_of(plan, own, common, out);
}

void deviations_of(const SpreadPlan& plan, const std::vector<double>& own, const std::vector<double>& common,
                   std::vector<double>& out) {
  out.resize(plan.parameters.size());
  for (std::size_t k = 0; k < plan.parameters.size(); ++k) {
    const SpreadParameter& p = plan.parameters[k];
    out[k] = p.set < 0 ? p.tolerance * own[k]
                       : (1 + p.tolerance * common[static_cast<std::size_t>(p.set)]) * (1 + p.ratio * own[k]) - 1;
  }
}

namespace {

/// The specs at the nominal values. A spec that cannot be measured there
/// (a floating node, a source loop) cannot be in any draw: exit 3 before any.
std::vector<SpreadSpec> nominal_specs(const Circuit& circuit) {
  std::vector<SpreadSpec> specs;
  const CheckResult nominal = run_check(circuit);
  if (nominal.unsolved() > 0) throw nominal.unsolved_error();
  for (const SpecResult& r : nominal.specs)
    specs.push_back({r.spec.name, r.spec.kind, r.spec.unit, r.spec.min, r.spec.max, r.value, r.pass});
  return specs;
}

/// Runs draws first .. first + count on `threads` workers; each claims a few
/// draws at a time and writes them into their own slots, so the samples do
/// not depend on which worker ran which draw.
void run_draws(const Circuit& circuit, const SpreadOptions& options, SpreadSamples& samples) {
  const std::int64_t count = samples.count;
  const std::size_t n_specs = samples.specs.size();
  std::vector<double> values(static_cast<std::size_t>(count) * n_specs);
  std::vector<std::uint8_t> pass(values.size());
  const int threads = static_cast<int>(std::min<std::int64_t>(resolve_threads(options.threads), count));
  const std::int64_t claim = spread_claim_size(count, threads);
  std::atomic<std::int64_t> next{0}, done{0};
  std::atomic<bool> stop{false};
  std::exception_ptr failure;
  std::mutex failure_lock;
  auto work = [&] {
    try {
      SpreadEvaluator evaluator(circuit, samples.plan);
      for (;;) {
        const std::int64_t begin = next.fetch_add(claim);
        if (begin >= count || stop) return;
        const std::int64_t end = std::min(count, begin + claim);
        for (std::int64_t i = begin; i < end; ++i) {
          const auto slot = static_cast<std::size_t>(i) * n_specs;
          evaluator.evaluate(samples.seed, static_cast<std::uint64_t>(samples.first + i),
                             values.data() + slot, pass.data() + slot);
        }
        done += end - begin;
      }
    } catch (...) {
      std::lock_guard<std::mutex> lock(failure_lock);
      if (!failure) failure = std::current_exception();
      stop = true;
    }
  };
  std::vector<std::thread> workers;
  for (int t = 0; t < threads; ++t) workers.emplace_back(work);
  if (options.progress) {
    // Short naps, so a short run ends without waiting; a report every tenth of a second.
    for (int nap = 1; done < count && !stop; ++nap) {
      std::this_thread::sleep_for(std::chrono::milliseconds(10));
      if (nap % 10 == 0) options.progress(done, count);
    }
  }
  for (auto& w : workers) w.join();
  if (failure) std::rethrow_exception(failure);
  samples.values.assign(n_specs, std::vector<double>(static_cast<std::size_t>(count)));
  samples.pass.assign(n_specs, std::vector<std::uint8_t>(static_cast<std::size_t>(count)));
  for (std::size_t i = 0; i < static_cast<std::size_t>(count); ++i)
    for (std::size_t s = 0; s < n_specs; ++s) {
      samples.values[s][i] = values[i * n_specs + s];
      samples.pass[s][i] = pass[i * n_specs + s];
    }
}

}  // namespace

std::int64_t spread_claim_size(std::int64_t count, int threads) {
  constexpr std::int64_t kLargestClaim = 8, kClaimsPerWorker = 8;
  return std::clamp<std::int64_t>(count / (kClaimsPerWorker * std::max(1, threads)), 1, kLargestClaim);
}

SpreadSamples sample_spread(const Circuit& circuit, const SpreadOptions& options) {
  if (auto problem = options.validate(); !problem.empty()) throw InputError::usage(problem);
  SpreadSamples samples;
  samples.netlist_hash = circuit_fingerprint(circuit);
  samples.seed = options.seed;
  samples.runs = options.runs;
  samples.shard = options.shard;
  samples.shards = options.shards;
  samples.first = options.first();
  samples.count = options.count();
  samples.plan = plan_spread(circuit);
  samples.specs = nominal_specs(circuit);
  const auto held = static_cast<double>(samples.count) * static_cast<double>(samples.specs.size());
  if (held > static_cast<double>(kMostSpreadValues))
    throw InputError::usage(
        fmt::format("{} draws of {} specs are more values than one run holds ({} million)", samples.count,
                    samples.specs.size(), kMostSpreadValues / 1000000),
        "cut the run into shards with --shard I/N and merge them (docs/analyses/spread.md)");
  run_draws(circuit, options, samples);
  return samples;
}

SpreadResult run_spread(const Circuit& circuit, const SpreadOptions& options) {
  SpreadOptions whole = options;
  whole.shard = whole.shards = 1;
  return summarise_spread(sample_spread(circuit, whole));
}

SpreadSamples merge_spread_samples(std::vector<SpreadSamples> shards,
                                   const std::vector<std::string>& names) {
  if (shards.empty()) throw InputError::usage("tacet merge needs the shard files to merge");
  auto name = [&](std::size_t k) { return k < names.size() ? names[k] : fmt::format("shard {}", k + 1); };
  const SpreadSamples& a = shards.front();
  for (std::size_t k = 1; k < shards.size(); ++k) {
    const SpreadSamples& b = shards[k];
    auto differ = [&](const char* what, const std::string& x, const std::string& y) {
      throw InputError::usage(
          fmt::format("'{}' and '{}' are shards of different runs: {} {} and {}", name(0), name(k), what, x, y),
          "merge the shards of one run: the same netlist, --set, --seed, --runs and shard count");
    };
    if (a.netlist_hash != b.netlist_hash) differ("netlist hash", a.netlist_hash, b.netlist_hash);
    if (a.seed != b.seed) differ("seed", std::to_string(a.seed), std::to_string(b.seed));
    if (a.runs != b.runs) differ("runs", std::to_string(a.runs), std::to_string(b.runs));
    if (a.shards != b.shards) differ("shard count", std::to_string(a.shards), std::to_string(b.shards));
    if (!(a.plan == b.plan) || !(a.specs == b.specs))
      throw InputError::usage(
          fmt::format("'{}' and '{}' are shards of different runs: their specs or toleranced parts differ",
                      name(0), name(k)),
          "merge the shards of one run: the same netlist, --set, --seed, --runs and shard count");
  }
  std::vector<int> given(static_cast<std::size_t>(a.shards) + 1, -1);
  for (std::size_t k = 0; k < shards.size(); ++k) {
    auto& where = given[static_cast<std::size_t>(shards[k].shard)];
    if (where >= 0)
      throw InputError::usage(fmt::format("shard {}/{} is given twice: '{}' and '{}'", shards[k].shard,
                                          a.shards, name(static_cast<std::size_t>(where)), name(k)));
    where = static_cast<int>(k);
  }
  for (int s = 1; s <= a.shards; ++s)
    if (given[static_cast<std::size_t>(s)] < 0)
      throw InputError::usage(fmt::format("shard {}/{} is missing", s, a.shards),
                              fmt::format("merge all {} shards of the run", a.shards));
  SpreadSamples whole = a;
  whole.shard = whole.shards = 1;
  whole.first = 0;
  whole.count = a.runs;
  for (auto& v : whole.values) v.clear();
  for (auto& p : whole.pass) p.clear();
  // Each shard must hold exactly the block `tacet spread --shard s/N` runs.
  for (int s = 1; s <= a.shards; ++s) {
    const SpreadSamples& part = shards[static_cast<std::size_t>(given[static_cast<std::size_t>(s)])];
    SpreadOptions block;
    block.runs = a.runs, block.shard = s, block.shards = a.shards;
    if (part.first != block.first() || part.count != block.count())
      throw InputError::usage(fmt::format("shard {}/{} holds draws {} to {}, not {} to {} of the {}", s,
                                          a.shards, part.first, part.first + part.count - 1, block.first(),
                                          block.first() + block.count() - 1, a.runs));
    for (std::size_t spec = 0; spec < whole.values.size(); ++spec) {
      whole.values[spec].insert(whole.values[spec].end(), part.values[spec].begin(), part.values[spec].end());
      whole.pass[spec].insert(whole.pass[spec].end(), part.pass[spec].begin(), part.pass[spec].end());
    }
  }
  return whole;
}

}  // namespace tacet
