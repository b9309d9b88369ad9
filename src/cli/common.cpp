#include "common.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <iostream>

#include <fmt/format.h>

#include "tacet/elaborate/elaborate.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/common/parallel.hpp"

namespace tacet::cli {

void add_format_option(CLI::App& command, CommonOptions& options,
                       const std::vector<OutputFormat>& formats) {
  options.command = "tacet " + command.get_name();
  options.formats = formats;
  options.format = to_string(formats.front());
  command.add_option("--format", options.format, "Output format: " + format_names(formats))
      ->capture_default_str();
}

void add_common_options(CLI::App& command, CommonOptions& options,
                        const std::vector<OutputFormat>& formats) {
  command.add_option("file", options.file, "The netlist (.tacet)")->required();
  add_format_option(command, options, formats);
  command.add_option("--output", options.output,
                     "Write to this file (atomically) instead of stdout");
  command.add_option("--set", options.set,
                     "Override a param, an element value (R1=12k, F1.R1=12k) or a model "
                     "parameter (quiet_bipolar.en=2n); repeatable");
  command.add_option("--ambient", options.ambient, "Ambient temperature (25C, 300K)");
  command.add_option("--confine-includes", options.confine_includes,
                     "Refuse to read any file outside this folder (symlinks resolved); for "
                     "netlists from untrusted sources");
}

double parse_quantity(const std::string& option, const std::string& text, Dimension dimension) {
  auto fail = [&](const std::string& hint) {
    throw InputError::bad_value(option, text, describe(dimension), hint);
  };
  double number = 0;
  const char* begin = text.data();
  const char* end = begin + text.size();
  auto [ptr, ec] = std::from_chars(begin, end, number);
  if (ec != std::errc{} || !std::isfinite(number)) fail("write a number such as 1k or 20kHz");
  std::string suffix(ptr, end);
  auto unit = decode_suffix(suffix);
  if (!unit) fail(suffix_hint(suffix, dimension));
  if (!unit_fits(unit->dimension, dimension)) fail(suffix_hint(suffix, dimension));
  return apply_unit(number, *unit, dimension);
}

std::vector<double> parse_quantity_list(const std::string& option, const std::string& text,
                                        Dimension dimension) {
  std::vector<double> out;
  std::size_t start = 0;
  while (start <= text.size()) {
    std::size_t comma = text.find(',', start);
    if (comma == std::string::npos) comma = text.size();
    out.push_back(parse_quantity(option, text.substr(start, comma - start), dimension));
    start = comma + 1;
  }
  return out;
}

namespace {

// "LOW..HIGH" as its two ends, each read as a quantity of `dimension`;
// `form` ("F1..F2") and `example` ("20..20k") for the message.
std::pair<double, double> parse_span(const std::string& option, const std::string& text,
                                     Dimension dimension, const char* form, const char* example) {
  const auto dots = text.find("..");
  if (dots == std::string::npos || dots == 0 || dots + 2 == text.size())
    throw InputError::bad_value(option, text, form, fmt::format("write {} {}", option, example));
  return {parse_quantity(option, text.substr(0, dots), dimension),
          parse_quantity(option, text.substr(dots + 2), dimension)};
}

}  // namespace

Band parse_band(const std::string& option, const std::string& text) {
  const auto [from, to] = parse_span(option, text, Dimension::frequency, "F1..F2", "20..20k");
  const Band band{from, to};
  if (auto problem = band.validate(); !problem.empty()) throw InputError::usage(problem);
  return band;
}

void add_ambient_range_option(CLI::App& command, CommonOptions& options) {
  command.add_option("--ambient-range", options.ambient_range,
                     "Take the offsets over this ambient range (0C..70C): vos_drift, ib_max, "
                     "ib_double");
}

AmbientRange parse_ambient_range(const std::string& option, const std::string& text) {
  const auto [low, high] = parse_span(option, text, Dimension::temperature, "T1..T2", "0C..70C");
  const AmbientRange range{low, high};
  const auto dots = text.find("..");
  for (const double t : {range.low, range.high})
    if (const std::string problem = ambient_problem(t); !problem.empty())
      throw InputError::usage(fmt::format("{} {}: {}", option, text, problem));
  if (range.low > range.high)
    throw InputError::usage(
        fmt::format("{} {}: the range runs from {} C down to {} C", option, text,
                    format_si(range.low), format_si(range.high)),
        fmt::format("write the cold end first: {} {}..{}", option, text.substr(dots + 2),
                    text.substr(0, dots)));
  return range;
}

OutputFormat output_format(const CommonOptions& options) {
  const auto format = parse_output_format(options.format);
  if (!format || std::find(options.formats.begin(), options.formats.end(), *format) ==
                     options.formats.end())
    throw InputError::no_format(options.command, options.format, format_names(options.formats));
  return *format;
}

void add_threads_option(CLI::App& command, int& threads) {
  command.add_option("--threads", threads, "Worker threads (0: one per core)")->capture_default_str();
}

int checked_threads(int threads) {
  if (auto problem = threads_problem(threads); !problem.empty()) throw InputError::usage(problem);
  return threads;
}

void add_sweep_options(CLI::App& command, SweepFlags& flags) {
  command.add_option("--from", flags.from, "First frequency (1, 20Hz, 1k)")->capture_default_str();
  command.add_option("--to", flags.to, "Last frequency")->capture_default_str();
  auto* per_decade = command.add_option("--per-decade", flags.per_decade,
                                        "Log sweep: points per decade (default 20)");
  auto* points = command.add_option("--points", flags.points, "Linear sweep: number of points");
  auto* at = command.add_option("--at", flags.at, "Only these frequencies: 100,1k,10k");
  per_decade->excludes(points);
  at->excludes(per_decade)->excludes(points);
}

Sweep parse_sweep(const SweepFlags& flags) {
  Sweep sweep;
  if (flags.at) {
    if (flags.at->empty())
      throw InputError::usage("--at must list at least one frequency", "write --at 100,1k,10k");
    sweep.kind = SweepKind::list;
    sweep.at = parse_quantity_list("--at", *flags.at, Dimension::frequency);
  } else {
    sweep.from = parse_quantity("--from", flags.from, Dimension::frequency);
    sweep.to = parse_quantity("--to", flags.to, Dimension::frequency);
    if (flags.points) {
      sweep.kind = SweepKind::linear;
      sweep.points = *flags.points;
    } else if (flags.per_decade) {
      sweep.per_decade = *flags.per_decade;
    }
  }
  if (std::string problem = sweep.validate(); !problem.empty())
    throw InputError::usage(problem);
  return sweep;
}

Circuit load(const CommonOptions& options, ReportContext& context) {
  ElaborateOptions elaborate;
  for (const auto& assignment : options.set) {
    auto eq = assignment.find('=');
    if (eq == std::string::npos || eq == 0 || eq + 1 == assignment.size())
      throw InputError::bad_value("--set", assignment, "NAME=VALUE", "write --set R1=12k");
    const std::string name = assignment.substr(0, eq);
    // The later of two --set for one name wins (docs/language.md, Overrides).
    std::erase_if(elaborate.overrides, [&](const Override& o) { return o.name == name; });
    elaborate.overrides.push_back({name, assignment.substr(eq + 1)});
  }
  if (!options.ambient.empty()) {
    elaborate.ambient_celsius = parse_quantity("--ambient", options.ambient, Dimension::temperature);
    if (const std::string problem = ambient_problem(*elaborate.ambient_celsius); !problem.empty())
      throw InputError::usage(fmt::format("--ambient {}: {}", options.ambient, problem));
  }
  elaborate.confine_includes = options.confine_includes;
  std::optional<AmbientRange> range;
  if (!options.ambient_range.empty())
    range = parse_ambient_range("--ambient-range", options.ambient_range);
  std::string warnings;
  Circuit circuit = load_circuit(options.file, elaborate, &warnings);
  if (range) circuit.ambient_range = range;
  std::cerr << warnings;
  context.file = options.file;
  context.title = circuit.title;
  return circuit;
}

}  // namespace tacet::cli
