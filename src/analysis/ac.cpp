// AC analysis: one MNA system and one symbolic analysis for the sweep, then
// per frequency one assemble, one numeric factorisation and one solve, all in
// buffers allocated before the first point.

#include "tacet/analysis/ac.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <optional>

#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/solve/response.hpp"

namespace tacet {
namespace {

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
  for (std::size_t point = 0; point < result.frequencies.size(); ++point) {
    const double f = result.frequencies[point];
    if (source) {
      for (auto& trace : result.traces) trace.values[point] = response.transfer_at(trace.probe, *source, f);
      continue;
    }
    response.solve_at(f);
    for (auto& trace : result.traces) trace.values[point] = response.value(trace.probe);
  }
  return result;
}

}  // namespace tacet
