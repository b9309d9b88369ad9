// tacet poles: parse, elaborate, assemble the MNA pencil, its finite
// eigenvalues (and a transfer's zeros), write.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/poles.hpp"
#include "tacet/report/write_poles.hpp"

namespace tacet::cli {

namespace {

void run(const CommonOptions& common, const PolesOptions& options) {
  analyse_and_write(common, poles_writers(),
                    [&](const Circuit& circuit) { return run_poles(circuit, options); });
}

}  // namespace

void setup_poles(CLI::App& app) {
  auto common = std::make_shared<CommonOptions>();
  auto options = std::make_shared<PolesOptions>();
  CLI::App* poles = app.add_subcommand(
      "poles", "Natural frequencies (poles) with f0 and Q, a transfer's zeros, stability");
  add_common_options(*poles, *common, poles_writers().formats());
  poles->add_option("--probe", options->probe, "With --input: the transfer whose zeros are found");
  poles->add_option("--input", options->input, "The source of that transfer (a vsrc or isrc)");
  poles->callback([common, options] { run(*common, *options); });
}

}  // namespace tacet::cli
