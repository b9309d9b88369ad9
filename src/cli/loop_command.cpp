// tacet loop: parse, elaborate, assemble, the return ratio of every op amp
// (or those named) over a sweep with its crossovers located, write.

#include <memory>

#include <fmt/format.h>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/loop.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/format.hpp"
#include "tacet/report/write_loop.hpp"

namespace tacet::cli {

namespace {

struct LoopCommandOptions {
  CommonOptions common;
  SweepFlags sweep{.from = "", .to = "", .per_decade = {}, .points = {}, .at = {}};
  std::vector<std::string> opamps;
};

// The flags given, the default range for the rest: --from and --to each fall
// back to the circuit's default, and with no flag at all the default sweep.
std::optional<Sweep> sweep_from(const SweepFlags& given, const Circuit& circuit) {
  if (given.from.empty() && given.to.empty() && !given.per_decade && !given.points && !given.at)
    return std::nullopt;
  SweepFlags flags = given;
  const Sweep fallback = default_loop_sweep(circuit);
  if (flags.from.empty()) flags.from = format_exact(fallback.from);
  if (flags.to.empty()) flags.to = format_exact(fallback.to);
  if (!flags.per_decade && !flags.points) flags.per_decade = fallback.per_decade;
  return parse_sweep(flags);
}

void run(const LoopCommandOptions& o) {
  analyse_and_write(o.common, loop_writers(), [&](const Circuit& circuit) {
    LoopOptions options;
    options.opamps = o.opamps;
    resolve_opamps(circuit, options.opamps);  // name errors before sweep errors
    options.sweep = sweep_from(o.sweep, circuit);
    return run_loop(circuit, options);
  });
}

}  // namespace

void setup_loop(CLI::App& app) {
  auto options = std::make_shared<LoopCommandOptions>();
  CLI::App* loop = app.add_subcommand(
      "loop", "Loop gain of every op amp (its return ratio): crossovers, phase and gain margins");
  add_common_options(*loop, options->common, loop_writers().formats());
  loop->add_option("--opamp", options->opamps, "Only this op amp (U1, F1.U2); repeatable");
  add_sweep_options(*loop, options->sweep);
  loop->footer(
      "Default sweep: a decade below the lowest dominant pole (gbw/aol) to two decades above "
      "the highest gbw or fp2, 20 points a decade.");
  loop->callback([options] { run(*options); });
}

}  // namespace tacet::cli
