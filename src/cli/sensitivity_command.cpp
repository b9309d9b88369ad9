// tacet sensitivity: parse, elaborate, one factorisation, a forward and an
// adjoint solve, every parameter's normalised sensitivity, write.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/sensitivity.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_sensitivity.hpp"

namespace tacet::cli {

namespace {

struct SensitivityCommandOptions {
  CommonOptions common;
  std::string probe;
  std::string at;
  std::string input;
};

void run(const SensitivityCommandOptions& o) {
  // The flags are checked before the netlist is read: a bad flag costs nothing.
  if (o.probe.empty())
    throw InputError::usage("tacet sensitivity needs a --probe",
                            "--probe out, --probe out,ref, --probe i(R1) or --probe z(in)");
  if (o.at.empty())
    throw InputError::usage("tacet sensitivity needs --at, the frequency to take it at",
                            "--at 1kHz");
  SensitivityOptions options;
  options.probe = o.probe;
  options.at = parse_quantity("--at", o.at, Dimension::frequency);
  options.input = o.input;
  if (const auto problem = options.validate(); !problem.empty()) throw InputError::usage(problem);
  analyse_and_write(o.common, sensitivity_writers(),
                    [&](const Circuit& circuit) { return run_sensitivity(circuit, options); });
}

}  // namespace

void setup_sensitivity(CLI::App& app) {
  auto options = std::make_shared<SensitivityCommandOptions>();
  CLI::App* cmd = app.add_subcommand(
      "sensitivity",
      "How much each part and op-amp model entry moves a probe's gain and phase at one frequency");
  add_common_options(*cmd, options->common, sensitivity_writers().formats());
  cmd->add_option("--probe", options->probe,
                  "A node (out), a node pair (out,ref), a current (i(R1)) or an impedance (z(in))");
  cmd->add_option("--at", options->at, "The frequency, e.g. 1kHz (required, above 0)");
  cmd->add_option("--input", options->input,
                  "Take the transfer from this source alone (unit phasor); default: every "
                  "source's ac=");
  cmd->footer(
      "mag = (x/|H|) d|H|/dx, deg = d(arg H in degrees)/d(ln x), by one adjoint solve for all "
      "parameters; largest |mag| first.");
  cmd->callback([options] { run(*options); });
}

}  // namespace tacet::cli
