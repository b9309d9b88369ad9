// tacet check: parse, elaborate, run what the specs need, write the verdict,
// and exit 1 when any spec fails, 3 when some spec could not be measured.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_check.hpp"

namespace tacet::cli {

void setup_check(CLI::App& app) {
  auto options = std::make_shared<CommonOptions>();
  CLI::App* check = app.add_subcommand(
      "check", "Measure every spec line of the netlist: PASS/FAIL with the margin; exit 1 if any fails");
  add_common_options(*check, *options, check_writers().formats());
  add_ambient_range_option(*check, *options);
  check->callback([options] {
    const CheckResult result =
        analyse_and_write(*options, check_writers(), [&](const Circuit& circuit) {
          if (circuit.specs.empty())
            throw InputError::usage(
                options->file + " has no spec lines to check",
                "write for example: spec gain_1k gain (out) at=1kHz min=19.9dB max=20.1dB");
          return run_check(circuit);
        });
    // A spec that could not be measured is worse news than one that failed.
    if (result.unsolved() > 0) throw result.unsolved_error();
    if (result.failed() > 0) throw SpecFailed();
  });
}

}  // namespace tacet::cli
