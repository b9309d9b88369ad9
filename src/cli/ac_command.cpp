// tacet ac: parse, elaborate, assemble, sweep, write.

#include <memory>

#include <fmt/format.h>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/ac.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_ac.hpp"

namespace tacet::cli {

namespace {

struct AcCommandOptions {
  CommonOptions common;
  std::vector<std::string> probes;
  SweepFlags sweep;
};

void run(const AcCommandOptions& o) {
  const OutputFormat format = output_format(o.common);
  const Sweep sweep = parse_sweep(o.sweep);
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
  add_sweep_options(*ac, options->sweep);
  ac->callback([options] { run(*options); });
}

}  // namespace tacet::cli
