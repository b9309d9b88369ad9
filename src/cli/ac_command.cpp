// tacet ac: parse, elaborate, assemble, sweep, write.

#include <memory>

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
  std::string input;
  SweepFlags sweep;
  int threads = 0;
};

void run(const AcCommandOptions& o) {
  AcOptions options;
  options.sweep = parse_sweep(o.sweep);
  options.probes = o.probes;
  options.input = o.input;
  options.threads = checked_threads(o.threads);
  analyse_and_write(o.common, ac_writers(), [&](const Circuit& circuit) {
    if (o.probes.empty())
      throw InputError::usage("tacet ac needs at least one --probe",
                              "--probe out, --probe out,ref or --probe i(R1)");
    return run_ac(circuit, options);
  });
}

}  // namespace

void setup_ac(CLI::App& app) {
  auto options = std::make_shared<AcCommandOptions>();
  CLI::App* ac = app.add_subcommand("ac", "Frequency response: gain and phase at the probes");
  add_common_options(*ac, options->common, ac_writers().formats());
  ac->add_option("--probe", options->probes,
                 "A node (out), a node pair (out,ref) or a current (i(R1)); repeatable");
  ac->add_option("--input", options->input,
                 "A source: the transfer from it alone, every other source's ac zeroed");
  add_sweep_options(*ac, options->sweep);
  add_threads_option(*ac, options->threads);
  ac->callback([options] { run(*options); });
}

}  // namespace tacet::cli
