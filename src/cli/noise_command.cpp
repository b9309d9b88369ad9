// tacet noise: parse, elaborate, assemble, sweep with one adjoint solve per
// point, integrate over the band, write.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/spelling.hpp"
#include "tacet/circuit/weighting.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/report/write_noise.hpp"

namespace tacet::cli {

namespace {

struct NoiseCommandOptions {
  CommonOptions common;
  SweepFlags sweep;
  std::string probe;
  std::string input;
  std::string band;   // F1..F2
  std::string level;  // rms at the input source
  std::string ref;    // Hz
  std::string weight;  // a | itu468
  std::string source;  // a resistor: noise figure
  int threads = 0;
};

Weighting parse_weight_flag(const std::string& text) {
  if (auto w = parse_weighting(text)) return *w;
  throw InputError::bad_value("--weight", text, "a weighting",
                              choice_hint(text, weighting_names(), "weightings"));
}

NoiseOptions options_from(const NoiseCommandOptions& o) {
  NoiseOptions options;
  options.sweep = parse_sweep(o.sweep);
  options.probe = o.probe;
  options.input = o.input;
  if (!o.band.empty()) options.band = parse_band("--band", o.band);
  if (!o.level.empty()) options.level = parse_quantity("--level", o.level, Dimension::any);
  if (!o.ref.empty()) options.reference = parse_quantity("--ref", o.ref, Dimension::frequency);
  if (!o.weight.empty()) options.weight = parse_weight_flag(o.weight);
  options.source = o.source;
  options.threads = checked_threads(o.threads);
  return options;
}

void run(const NoiseCommandOptions& o) {
  const NoiseOptions options = options_from(o);
  analyse_and_write(o.common, noise_writers(),
                    [&](const Circuit& circuit) { return run_noise(circuit, options); });
}

}  // namespace

void setup_noise(CLI::App& app) {
  auto options = std::make_shared<NoiseCommandOptions>();
  CLI::App* noise = app.add_subcommand(
      "noise", "Noise at a probe: density, band total, contributors, input-referred");
  add_common_options(*noise, options->common, noise_writers().formats());
  noise->add_option("--probe", options->probe, "A node (out), a node pair (out,ref) or i(R1)")
      ->required();
  noise->add_option("--input", options->input,
                    "The source the signal comes from: gain and input-referred noise");
  noise->add_option("--band", options->band,
                    "Integration band F1..F2 (20..20k); default: the sweep's --from..--to");
  noise->add_option("--level", options->level,
                    "Signal rms at the --input source (1m, 200mV): signal-to-noise ratio");
  noise->add_option("--ref", options->ref,
                    "Where the signal gain is taken (default: sqrt(F1 F2), the band's centre)");
  noise->add_option("--weight", options->weight,
                    "Weight the band figures: a (IEC 61672-1) or itu468 (ITU-R BS.468-4)");
  noise->add_option("--source", options->source,
                    "The source resistor: spot and band noise figure against its thermal noise");
  add_sweep_options(*noise, options->sweep);
  add_threads_option(*noise, options->threads);
  noise->callback([options] { run(*options); });
}

}  // namespace tacet::cli
