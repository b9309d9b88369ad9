#pragma once
// Flags every analysis shares (--format --output --set --ambient) and the
// first stages of the pipeline that every subcommand runs alike.

#include <optional>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "tacet/analysis/ac.hpp"
#include "tacet/circuit/circuit.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"
#include "tacet/language/units.hpp"

namespace tacet::cli {

struct CommonOptions {
  std::string file;                 ///< the netlist
  std::string format;               ///< as typed; default: the command's first format
  std::string output;               ///< empty: stdout
  std::vector<std::string> set;     ///< NAME=VALUE overrides
  std::string ambient;              ///< temperature, e.g. 40C; empty: the netlist's
  std::string command;              ///< "tacet ac", for messages
  std::vector<OutputFormat> formats;  ///< what the command's writers have
  std::string confine_includes;     ///< folder every file read must lie in; empty: anywhere
  std::string ambient_range;        ///< T1..T2 the DC errors are taken over; empty: the ambient
};

/// --ambient-range T1..T2, for the commands whose analyses take the DC errors (bias, check).
void add_ambient_range_option(CLI::App& command, CommonOptions& options);

/// "0C..70C" as a range in C; throws InputError when it is not one, is
/// outside the temperatures tacet models or runs from hot to cold.
AmbientRange parse_ambient_range(const std::string& option, const std::string& text);

/// The netlist argument, --format (from `formats`, the analysis' Writers),
/// --output, --set and --ambient.
void add_common_options(CLI::App& command, CommonOptions& options,
                        const std::vector<OutputFormat>& formats);

/// --format alone, its help and default from `formats`; for commands whose
/// other flags differ (diff).
void add_format_option(CLI::App& command, CommonOptions& options,
                       const std::vector<OutputFormat>& formats);

/// Parses and elaborates the netlist with the overrides; throws InputError.
/// Warnings go to stderr. Fills `context` for the report header.
Circuit load(const CommonOptions& options, ReportContext& context);

/// The --format asked for; a format the command has no writer for (or no
/// format at all) is an InputError naming the ones it has.
OutputFormat output_format(const CommonOptions& options);

/// The shape of every command that analyses one netlist: --format is checked
/// before any work, then the netlist is loaded, `analyse(circuit)` runs and the
/// report is written. Returns the result for what follows the report (an exit
/// status, cautions on stderr).
template <class Result, class Analyse>
Result analyse_and_write(const CommonOptions& options, const Writers<Result>& writers,
                         Analyse&& analyse) {
  const OutputFormat format = output_format(options);
  ReportContext context;
  const Circuit circuit = load(options, context);
  Result result = analyse(circuit);
  write_output(options.output, writers.write(format, result, context));
  return result;
}

/// The sweep flags of the analyses that sweep frequency, as typed.
struct SweepFlags {
  std::string from = "10";
  std::string to = "100k";
  std::optional<int> per_decade;  ///< given: a log sweep with this density
  std::optional<int> points;      ///< given: a linear sweep
  std::optional<std::string> at;  ///< given: a list (an empty one is an error)
};

/// --from --to --per-decade --points --at, with their exclusions.
void add_sweep_options(CLI::App& command, SweepFlags& flags);

/// --threads N (0, the default: one per core), worded as tacet spread's.
void add_threads_option(CLI::App& command, int& threads);

/// `threads` when it is a valid --threads (0 .. kMostThreads); else InputError (exit 2).
int checked_threads(int threads);

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
