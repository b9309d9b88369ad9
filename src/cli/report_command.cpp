// tacet report: parse, elaborate, run every analysis a review shows, write one
// self-contained HTML page.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/review.hpp"
#include "tacet/report/write_circuit.hpp"
#include "tacet/report/write_report.hpp"

namespace tacet::cli {

void setup_report(CLI::App& app) {
  auto options = std::make_shared<CommonOptions>();
  CLI::App* report = app.add_subcommand(
      "report", "One self-contained HTML page for a review: the budget, the plots, bias, the circuit");
  add_common_options(*report, *options, report_writers().formats());
  add_ambient_range_option(*report, *options);
  report->callback([options] {
    analyse_and_write(*options, report_writers(), [&](const Circuit& circuit) {
      ReportContext context{options->file, circuit.title};
      return ReviewPage{run_review(circuit), circuit_listing(circuit, context)};
    });
  });
}

}  // namespace tacet::cli
