// tacet check: parse, elaborate, run what the specs need, write the verdict,
// and exit 1 when any spec fails, 3 when some spec could not be measured.
// With --sensitivity the verdict is followed by what moves each spec most.

#include <memory>
#include <optional>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/sensitivity.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_check.hpp"
#include "tacet/report/write_sensitivity.hpp"

namespace tacet::cli {

namespace {

struct CheckCommandOptions {
  CommonOptions common;
  bool sensitivity = false;
  std::optional<int> top;  ///< given: parts per spec; needs --sensitivity
  int threads = 0;
};

CheckResult check_specs(const CommonOptions& options, const Circuit& circuit, int threads) {
  if (circuit.specs.empty())
    throw InputError::usage(
        options.file + " has no spec lines to check",
        "write for example: spec gain_1k gain (out) at=1kHz min=19.9dB max=20.1dB");
  CheckOptions check;
  check.threads = threads;
  return run_check(circuit, check);
}

void finish(const CheckResult& result) {
  // A spec that could not be measured is worse news than one that failed.
  if (result.unsolved() > 0) throw result.unsolved_error();
  if (result.failed() > 0) throw SpecFailed();
}

void run(const CheckCommandOptions& o) {
  const int threads = checked_threads(o.threads);
  if (o.top && !o.sensitivity)
    throw InputError::usage("--top is the number of parts --sensitivity shows per spec",
                            "tacet check FILE --sensitivity --top 3");
  if (!o.sensitivity) {
    finish(analyse_and_write(o.common, check_writers(), [&](const Circuit& circuit) {
      return check_specs(o.common, circuit, threads);
    }));
    return;
  }
  const int top = o.top.value_or(5);
  if (top < 1) throw InputError::usage("--top " + std::to_string(top) + " must be at least 1");
  const CheckSensitivityReport report =
      analyse_and_write(o.common, check_sensitivity_writers(), [&](const Circuit& circuit) {
        CheckSensitivityReport r;
        r.check = check_specs(o.common, circuit, threads);
        r.sensitivities = run_spec_sensitivities(circuit, r.check);
        r.top = static_cast<std::size_t>(top);
        return r;
      });
  finish(report.check);
}

}  // namespace

void setup_check(CLI::App& app) {
  auto options = std::make_shared<CheckCommandOptions>();
  CLI::App* check = app.add_subcommand(
      "check", "Measure every spec line of the netlist: PASS/FAIL with the margin; exit 1 if any fails");
  add_common_options(*check, options->common, check_writers().formats());
  add_ambient_range_option(*check, options->common);
  check->add_flag("--sensitivity", options->sensitivity,
                  "Also show, per spec, the parts that move its value most (per +1 %, and their tol=)");
  check->add_option("--top", options->top, "With --sensitivity: parts shown per spec (default 5)");
  add_threads_option(*check, options->threads);
  check->callback([options] { run(*options); });
}

}  // namespace tacet::cli
