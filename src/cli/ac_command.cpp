// tacet ac: parse, elaborate, assemble, sweep, write.

#include <memory>

#include <fmt/format.h>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/ac.hpp"
#include "tacet/errors.hpp"
#include "tacet/write_csv.hpp"
#include "tacet/write_json.hpp"
#include "tacet/write_table.hpp"

namespace tacet::cli {

namespace {

struct AcCommandOptions {
  CommonOptions common;
  std::vector<std::string> probes;
  std::string from = "10";
  std::string to = "100k";
  int per_decade = 0;
  int points = 0;
  std::string at;
};

Sweep sweep_from(const AcCommandOptions& o) {
  Sweep sweep;
  if (!o.at.empty()) {
    sweep.kind = SweepKind::list;
    sweep.at = parse_quantity_list("--at", o.at, Dimension::frequency);
  } else {
    sweep.from = parse_quantity("--from", o.from, Dimension::frequency);
    sweep.to = parse_quantity("--to", o.to, Dimension::frequency);
    if (o.points != 0) {
      sweep.kind = SweepKind::linear;
      sweep.points = o.points;
    } else if (o.per_decade != 0) {
      sweep.per_decade = o.per_decade;
    }
  }
  if (std::string problem = sweep.validate(); !problem.empty())
    throw InputError(fmt::format("error: {}\n", problem));
  return sweep;
}

void run(const AcCommandOptions& o) {
  const OutputFormat format = output_format(o.common);
  const Sweep sweep = sweep_from(o);
  ReportContext context;
  const Circuit circuit = load(o.common, context);
  if (o.probes.empty())
    throw InputError("error: tacet ac needs at least one --probe\nhint: --probe out, --probe out,ref or --probe i(R1)\n");
  AcOptions options;
  options.sweep = sweep;
  options.probes = o.probes;
  const AcResult result = run_ac(circuit, options);
  std::string text;
  switch (format) {
    case OutputFormat::table: text = ac_table(result, context); break;
    case OutputFormat::csv: text = ac_csv(result); break;
    case OutputFormat::json: text = ac_json(result, context); break;
  }
  write_output(o.common.output, text);
}

}  // namespace

void setup_ac(CLI::App& app) {
  auto options = std::make_shared<AcCommandOptions>();
  CLI::App* ac = app.add_subcommand("ac", "Frequency response: gain and phase at the probes");
  add_common_options(*ac, options->common);
  ac->add_option("--probe", options->probes,
                 "A node (out), a node pair (out,ref) or a current (i(R1)); repeatable");
  ac->add_option("--from", options->from, "First frequency (1, 20Hz, 1k)")->capture_default_str();
  ac->add_option("--to", options->to, "Last frequency")->capture_default_str();
  auto* per_decade = ac->add_option("--per-decade", options->per_decade,
                                    "Log sweep: points per decade (default 20)");
  auto* points = ac->add_option("--points", options->points, "Linear sweep: number of points");
  auto* at = ac->add_option("--at", options->at, "Only these frequencies: 100,1k,10k");
  per_decade->excludes(points);
  at->excludes(per_decade)->excludes(points);
  ac->callback([options] { run(*options); });
}

}  // namespace tacet::cli
