// tacet settle: parse, elaborate, assemble the sparse pencil, integrate the
// step response until it is quiet, measure it, write.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/settle.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_settle.hpp"

namespace tacet::cli {

namespace {

struct SettleCommandOptions {
  CommonOptions common;
  std::vector<std::string> probes;
  std::string input;
  std::string to;
  std::string band = "0.01%";
  int points = 201;
};

SettleOptions parse(const SettleCommandOptions& o) {
  SettleOptions options;
  options.probes = o.probes;
  options.input = o.input;
  if (!o.to.empty()) options.to = parse_quantity("--to", o.to, Dimension::time);
  options.band = parse_quantity("--band", o.band, Dimension::ratio);
  options.points = o.points;
  if (const std::string problem = options.validate(); !problem.empty())
    throw InputError::usage(problem);
  return options;
}

void run(const SettleCommandOptions& o) {
  const SettleOptions options = parse(o);  // flag errors before the netlist is read
  analyse_and_write(o.common, settle_writers(),
                    [&](const Circuit& circuit) { return run_settle(circuit, options); });
}

}  // namespace

void setup_settle(CLI::App& app) {
  auto options = std::make_shared<SettleCommandOptions>();
  CLI::App* settle = app.add_subcommand(
      "settle", "Step response from rest: final value, overshoot, settling time to a band");
  add_common_options(*settle, options->common, settle_writers().formats());
  settle->add_option("--probe", options->probes, "A node, a pair or a current; repeatable")
      ->required();
  settle->add_option("--input", options->input,
                     "The source that steps, by 1 V or 1 A (default: the only source with an "
                     "ac value)");
  settle->add_option("--to", options->to,
                     "End of the printed response (10us); default: twice the settling time");
  settle->add_option("--band", options->band, "Settling band, a fraction of final (0.01%, 1e-4)")
      ->capture_default_str();
  settle->add_option("--points", options->points, "Printed points from 0 to --to")
      ->capture_default_str();
  settle->callback([options] { run(*options); });
}

}  // namespace tacet::cli
