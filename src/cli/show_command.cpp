// tacet show: parse and elaborate, then list the flat circuit.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/report/write_circuit.hpp"

namespace tacet::cli {

void setup_show(CLI::App& app) {
  auto options = std::make_shared<CommonOptions>();
  CLI::App* show = app.add_subcommand(
      "show", "List the elaborated flat circuit: every element with its nodes and value");
  show->add_option("file", options->file, "The netlist (.tacet)")->required();
  show->add_option("--set", options->set, "Override a param, element value or model parameter");
  show->add_option("--ambient", options->ambient, "Ambient temperature (25C, 300K)");
  show->add_option("--output", options->output, "Write to this file instead of stdout");
  show->callback([options] {
    ReportContext context;
    const Circuit circuit = load(*options, context);
    write_output(options->output, circuit_listing(circuit, context));
  });
}

}  // namespace tacet::cli
