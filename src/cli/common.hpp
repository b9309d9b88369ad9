#pragma once
// Flags every analysis shares (--format --output --set --ambient) and the
// first stages of the pipeline that every subcommand runs alike.

#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "tacet/analysis/ac.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/report/output.hpp"
#include "tacet/language/units.hpp"

namespace tacet::cli {

struct CommonOptions {
  std::string file;                 ///< the netlist
  std::string format = "table";     ///< table | csv | json
  std::string output;               ///< empty: stdout
  std::vector<std::string> set;     ///< NAME=VALUE overrides
  std::string ambient;              ///< temperature, e.g. 40C; empty: the netlist's
};

void add_common_options(CLI::App& command, CommonOptions& options);

/// Parses and elaborates the netlist with the overrides; throws InputError.
/// Warnings go to stderr. Fills `context` for the report header.
Circuit load(const CommonOptions& options, ReportContext& context);

OutputFormat output_format(const CommonOptions& options);

/// The sweep flags of the analyses that sweep frequency, as typed.
struct SweepFlags {
  std::string from = "10";
  std::string to = "100k";
  int per_decade = 0;  ///< 0: the default of Sweep
  int points = 0;      ///< non-zero: a linear sweep
  std::string at;      ///< non-empty: a list
};

/// --from --to --per-decade --points --at, with their exclusions.
void add_sweep_options(CLI::App& command, SweepFlags& flags);

/// The sweep the flags describe; throws InputError naming the flag at fault.
Sweep parse_sweep(const SweepFlags& flags);

/// A number from the command line with an optional SI prefix and unit that
/// must fit `dimension` ("1k", "20kHz"); throws InputError naming `option`.
double parse_quantity(const std::string& option, const std::string& text, Dimension dimension);

/// "20..20k" -> a band, each end through parse_quantity; throws InputError
/// naming `option` when the form is wrong or from >= to.
Band parse_band(const std::string& option, const std::string& text);

/// "100,1k,10k" -> numbers, each through parse_quantity.
std::vector<double> parse_quantity_list(const std::string& option, const std::string& text,
                                        Dimension dimension);

}  // namespace tacet::cli
