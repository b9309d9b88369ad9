// AC analysis: one MNA system and one symbolic analysis for the sweep, then
// per frequency one assemble, one numeric factorisation and one solve, all in
// buffers allocated before the first point. With several threads the points
// are cut into contiguous blocks, one per worker, each worker with a response
// of its own anchored where the first point's was (response.hpp), and every
// point written into its own slot: the result is the one thread's, bit for bit.

#include "tacet/analysis/ac.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <memory>
#include <optional>

#include "tacet/common/errors.hpp"
#include "tacet/common/parallel.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/response.hpp"

namespace tacet {
namespace {

// Below this many points a block costs more in thread start-up than it saves.
constexpr std::size_t kLeastPointsPerWorker = 16;

bool positive_frequency(double f) { return std::isfinite(f) && f > 0; }

std::string validate_range(const Sweep& sweep) {
  if (!positive_frequency(sweep.from))
    return fmt::format("--from {} must be a finite frequency above 0 Hz", format_si(sweep.from));
  if (!positive_frequency(sweep.to))
    return fmt::format("--to {} must be a finite frequency above 0 Hz", format_si(sweep.to));
  if (!(sweep.from < sweep.to))
    return fmt::format("--from {} must be below --to {}", format_si(sweep.from), format_si(sweep.to));
  return {};
}

}  // namespace

const char* to_string(SweepKind kind) {
  switch (kind) {
    case SweepKind::log:
      return "log";
    case SweepKind::linear:
      return "linear";
    case SweepKind::list:
      return "list";
  }
  return "?";
}

std::string Sweep::validate() const {
  if (kind == SweepKind::list) {
    if (at.empty()) return "--at must list at least one frequency";
    for (double f : at)
      if (!positive_frequency(f))
        return fmt::format("--at {}: every frequency must be finite and above 0 Hz", format_si(f));
    return {};
  }
  if (auto range = validate_range(*this); !range.empty()) return range;
  if (kind == SweepKind::log && per_decade < 1)
    return fmt::format("--per-decade {} must be at least 1", per_decade);
  if (kind == SweepKind::linear && points < 2)
    return fmt::format("--points {} must be at least 2", points);
  const double count = kind == SweepKind::linear
                           ? static_cast<double>(points)
                           : std::ceil(std::log10(to / from) * per_decade) + 1;
  if (count > static_cast<double>(kMostSweepPoints))
    return fmt::format("{} {} asks for {:.0f} points; one sweep has at most {}",
                       kind == SweepKind::linear ? "--points" : "--per-decade",
                       kind == SweepKind::linear ? points : per_decade, count, kMostSweepPoints);
  return {};
}

std::vector<double> Sweep::frequencies() const {
  std::vector<double> f;
  if (kind == SweepKind::list) return at;
  if (kind == SweepKind::linear) {
    for (int k = 0; k < points; ++k)
      f.push_back(k == points - 1 ? to : from + (to - from) * k / (points - 1));
    return f;
  }
  // Each point from its own k, so rounding does not accumulate; a grid point
  // within 1e-9 (relative) of `to` is taken to be `to`.
  for (int k = 0;; ++k) {
    const double point = from * std::pow(10.0, static_cast<double>(k) / per_decade);
    if (point >= to * (1 - 1e-9)) break;
    f.push_back(point);
  }
  f.push_back(to);
  return f;
}

AcResult run_ac(const Circuit& circuit, const AcOptions& options) {
  if (auto problem = options.sweep.validate(); !problem.empty())
    throw InputError::usage(problem);
  for (const auto& text : options.probes) resolve_probe(text, circuit);
  if (!options.input.empty()) resolve_source(options.input, circuit, "--input");
  FrequencyResponse response(circuit, options.solver);
  return run_ac(circuit, options, response);
}

AcResult run_ac(const Circuit& circuit, const AcOptions& options, FrequencyResponse& response) {
  if (auto problem = options.sweep.validate(); !problem.empty())
    throw InputError::usage(problem);
  AcResult result;
  for (const auto& text : options.probes)
    result.traces.push_back({resolve_probe(text, circuit), {}});
  result.frequencies = options.sweep.frequencies();
  for (auto& trace : result.traces) trace.values.resize(result.frequencies.size());

  result.input = options.input;
  std::optional<std::size_t> source;
  if (!options.input.empty()) {
    source = resolve_source(options.input, circuit, "--input");
    result.input_unit = traits(circuit.elements[*source].kind).drive == Drive::current ? "A" : "V";
  }
  auto solve_points = [&](FrequencyResponse& on, std::size_t begin, std::size_t end) {
    for (std::size_t point = begin; point < end; ++point) {
      const double f = result.frequencies[point];
      if (source) {
        for (auto& trace : result.traces) trace.values[point] = on.transfer_at(trace.probe, *source, f);
        continue;
      }
      on.solve_at(f);
      for (auto& trace : result.traces) trace.values[point] = on.value(trace.probe);
    }
  };
  const std::size_t points = result.frequencies.size();
  const int blocks = block_count(points, resolve_threads(options.threads), kLeastPointsPerWorker);
  if (blocks == 1) {
    solve_points(response, 0, points);
    return result;
  }
  response.anchor_at(result.frequencies.front());  // where one thread takes its pivots
  std::vector<std::unique_ptr<FrequencyResponse>> workers;
  for (int w = 1; w < blocks; ++w) workers.push_back(response.worker());
  for_blocks(points, blocks, [&](int block, std::size_t begin, std::size_t end) {
    solve_points(block == 0 ? response : *workers[static_cast<std::size_t>(block - 1)], begin, end);
  });
  return result;
}

}  // namespace tacet
