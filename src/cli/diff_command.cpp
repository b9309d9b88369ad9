// tacet diff: both revisions through the same pipeline with the same probes
// and sweep, then what changed in the circuit and in the results.

#include <cmath>
#include <memory>

#include <fmt/format.h>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/diff.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_diff.hpp"

namespace tacet::cli {

namespace {

struct DiffCommandOptions {
  CommonOptions common;  ///< common.file is unused; old_file and new_file are the sides
  std::string old_file;
  std::string new_file;
  std::vector<std::string> probes;
  SweepFlags sweep;
  std::vector<std::string> fail_above;
  std::string band;  ///< noise band F1..F2; empty: noise not compared
};

/// --fail-above thresholds: a gain change in dB, a phase change in degrees, a
/// relative change of a noise total.
struct Thresholds {
  std::optional<double> db;
  std::optional<double> degrees;
  std::optional<double> noise;  ///< fraction: 0.05 for 5%
};

Thresholds parse_thresholds(const std::vector<std::string>& texts) {
  Thresholds t;
  for (const auto& text : texts) {
    if (text.size() > 2 && text.substr(text.size() - 2) == "dB")
      t.db = std::abs(parse_quantity("--fail-above", text, Dimension::decibel));
    else if (text.size() > 3 && text.substr(text.size() - 3) == "deg")
      t.degrees = std::abs(parse_quantity("--fail-above", text, Dimension::angle));
    else if (!text.empty() && text.back() == '%')
      t.noise = std::abs(parse_quantity("--fail-above", text, Dimension::ratio));
    else
      throw InputError::usage(fmt::format("--fail-above '{}' needs a unit: dB for gain, deg for "
                                          "phase, % for a noise total", text),
                              "--fail-above 0.1dB --fail-above 1deg");
  }
  return t;
}

bool exceeds(const DiffResult& result, const Thresholds& t) {
  for (const auto& p : result.probes) {
    if (t.db && std::abs(p.max_db_change) > *t.db) return true;
    if (t.degrees && std::abs(p.max_deg_change) > *t.degrees) return true;
  }
  for (const auto& n : result.noise)
    if (t.noise && std::abs(n.new_rms - n.old_rms) > *t.noise * n.old_rms) return true;
  return false;
}

void run(const DiffCommandOptions& o) {
  const OutputFormat format = output_format(o.common);
  const Thresholds thresholds = parse_thresholds(o.fail_above);
  CommonOptions old_side = o.common, new_side = o.common;
  old_side.file = o.old_file;
  new_side.file = o.new_file;
  DiffContext context;
  const Circuit old_circuit = load(old_side, context.old_side);
  const Circuit new_circuit = load(new_side, context.new_side);
  DiffOptions options;
  options.ac.sweep = parse_sweep(o.sweep);
  options.ac.probes = o.probes;
  if (!o.band.empty()) options.band = parse_band("--band", o.band);
  if (thresholds.noise && !options.band)
    throw InputError::usage("--fail-above with % compares noise totals, which need --band",
                            "--band 20..20k --fail-above 5%");
  const DiffResult result = run_diff(old_circuit, new_circuit, options);
  write_output(o.common.output, diff_writers().write(format, result, context));
  // A side that cannot be analysed is a failure for CI whatever the thresholds.
  if (!result.dc_unsolved_side.empty()) {
    constexpr std::string_view said = "circuit cannot be solved at DC: ";
    std::string_view why = result.dc_note;
    if (why.substr(0, said.size()) == said) why.remove_prefix(said.size());
    throw SolveError::unsolvable_at(
        0, fmt::format("the {} revision (the other has a DC point): {}", result.dc_unsolved_side, why));
  }
  if (exceeds(result, thresholds)) throw SpecFailed();
}

}  // namespace

void setup_diff(CLI::App& app) {
  auto options = std::make_shared<DiffCommandOptions>();
  CLI::App* diff = app.add_subcommand(
      "diff", "What changed between two revisions: the circuit, the response, the specs");
  diff->add_option("old", options->old_file, "The old revision: a file, or REV:path from git")->required();
  diff->add_option("new", options->new_file, "The new revision: a file, or REV:path from git")->required();
  diff->add_option("--probe", options->probes,
                   "Compare the response here (default: every probe the specs name); repeatable");
  add_sweep_options(*diff, options->sweep);
  diff->add_option("--fail-above", options->fail_above,
                   "Exit 1 when a probe's gain changes more than this (0.1dB), its phase (1deg) or a "
                   "noise total (5%)");
  diff->add_option("--band", options->band, "Compare the noise totals over this band: 20..20k");
  add_format_option(*diff, options->common, diff_writers().formats());
  diff->add_option("--output", options->common.output, "Write to this file (atomically) instead of stdout");
  diff->add_option("--set", options->common.set, "Override on both sides; repeatable");
  diff->add_option("--ambient", options->common.ambient, "Ambient temperature (25C, 300K)");
  diff->callback([options] { run(*options); });
}

}  // namespace tacet::cli
