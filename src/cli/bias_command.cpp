// tacet bias: parse, elaborate, assemble at DC, solve the operating point and
// the offset sensitivities, then the headroom at the declared level; write.

#include <iostream>
#include <memory>
#include <utility>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/analysis/headroom.hpp"
#include "tacet/report/write_bias.hpp"

namespace tacet::cli {

namespace {

struct BiasCommandOptions {
  CommonOptions common;
  std::string band;  ///< "20..20k"; empty: the sources' band_low= / band_high=
  int per_decade = 50;
  int threads = 0;
};

HeadroomOptions headroom_options(const BiasCommandOptions& o) {
  HeadroomOptions options;
  options.per_decade = o.per_decade;
  if (!o.band.empty()) {
    const Band band = parse_band("--band", o.band);
    options.band_low = band.from;
    options.band_high = band.to;
  }
  if (std::string problem = options.validate(); !problem.empty())
    throw InputError::usage(problem);
  return options;
}

void run(const BiasCommandOptions& o) {
  HeadroomOptions headroom_opts = headroom_options(o);
  BiasOptions bias_options;
  bias_options.threads = checked_threads(o.threads);
  headroom_opts.threads = bias_options.threads;
  const BiasReport report =
      analyse_and_write(o.common, bias_writers(), [&](const Circuit& circuit) {
        BiasResult bias = run_bias(circuit, bias_options);
        HeadroomResult headroom = run_headroom(circuit, bias, headroom_opts);
        return BiasReport{std::move(bias), std::move(headroom)};
      });
  // The table opens with the cautions; csv and json readers may not look, so
  // a person at the terminal still sees them.
  if (output_format(o.common) != OutputFormat::table)
    for (const auto& caution : report.headroom.cautions) std::cerr << caution << "\n";
}

}  // namespace

void setup_bias(CLI::App& app) {
  auto options = std::make_shared<BiasCommandOptions>();
  CLI::App* bias = app.add_subcommand(
      "bias", "DC operating point, worst-case offsets against the rails, headroom at the level");
  add_common_options(*bias, options->common, bias_writers().formats());
  add_ambient_range_option(*bias, options->common);
  bias->add_option("--band", options->band,
                   "Headroom band FROM..TO (20..20k); default: band_low=/band_high= on the source");
  bias->add_option("--per-decade", options->per_decade, "Headroom grid: points per decade")
      ->capture_default_str();
  add_threads_option(*bias, options->threads);
  bias->callback([options] { run(*options); });
}

}  // namespace tacet::cli
