// tacet spread: every spec over random draws of the toleranced values; with
// --shard, one shard's samples for tacet merge. tacet merge: shards back into
// the whole run's report.

#include <unistd.h>

#include <charconv>
#include <chrono>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <memory>
#include <optional>
#include <sstream>

#include <fmt/format.h>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/spread.hpp"
#include "tacet/analysis/spread_corners.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/input_files.hpp"
#include "tacet/report/write_spread.hpp"

namespace tacet::cli {

namespace {

struct SpreadFlags {
  CommonOptions common;
  std::int64_t runs = 1000;
  std::uint64_t seed = 1;
  int threads = 0;
  std::string shard;  ///< "I/N"; empty: the whole run
  std::string min_yield;  ///< "99%"; empty: none
  bool corners = false;
};

/// --min-yield as a fraction in [0, 1]; nullopt when not given.
std::optional<double> parse_min_yield(const std::string& text) {
  if (text.empty()) return std::nullopt;
  const double y = parse_quantity("--min-yield", text, Dimension::ratio);
  if (y < 0 || y > 1)
    throw InputError::bad_value("--min-yield", text, "a yield from 0 to 100%", "write --min-yield 99%");
  return y;
}

/// Exit 1 after the report when the overall yield is below the minimum.
void require_yield(const SpreadResult& result, std::optional<double> min_yield) {
  if (min_yield && result.yield < *min_yield) throw SpecFailed();
}

/// "2/8" -> shard 2 of 8; anything else is a usage error.
void parse_shard(const std::string& text, SpreadOptions& options) {
  const auto slash = text.find('/');
  auto whole = [](std::string_view digits, int& out) {
    const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), out);
    return ec == std::errc{} && end == digits.data() + digits.size() && !digits.empty();
  };
  const std::string_view view(text);
  if (slash == std::string::npos || !whole(view.substr(0, slash), options.shard) ||
      !whole(view.substr(slash + 1), options.shards))
    throw InputError::bad_value("--shard", text, "I/N", "write --shard 1/4 for the first of four shards");
}

/// "tacet spread: 1200 of 10000 draws (12 %)" on a terminal, once a run has
/// taken a second; cleared when it ends.
class Progress {
 public:
  Progress() : terminal_(isatty(STDERR_FILENO) == 1), start_(std::chrono::steady_clock::now()) {}
  ~Progress() {
    if (shown_) std::fputs("\r\033[K", stderr);
  }
  void operator()(std::int64_t done, std::int64_t total) {
    if (!terminal_ || std::chrono::steady_clock::now() - start_ < std::chrono::seconds(1)) return;
    shown_ = true;
    std::fprintf(stderr, "\rtacet spread: %lld of %lld draws (%lld %%)", static_cast<long long>(done),
                 static_cast<long long>(total), static_cast<long long>(100 * done / std::max<std::int64_t>(1, total)));
    std::fflush(stderr);
  }

 private:
  bool terminal_, shown_ = false;
  std::chrono::steady_clock::time_point start_;
};

std::string read_whole_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError::usage(fmt::format("cannot read '{}'", path), "give the shard files tacet spread --shard wrote");
  std::ostringstream text;
  text << in.rdbuf();
  note_input_file(path);
  return text.str();
}

}  // namespace

void setup_spread(CLI::App& app) {
  auto flags = std::make_shared<SpreadFlags>();
  CLI::App* cmd = app.add_subcommand(
      "spread", "Monte Carlo: every spec over random draws of the toleranced values; yield per spec");
  add_common_options(*cmd, flags->common, spread_writers().formats());
  cmd->add_option("--runs", flags->runs, "Draws in the whole run")->capture_default_str();
  cmd->add_option("--seed", flags->seed, "Seed of the random streams")->capture_default_str();
  cmd->add_option("--threads", flags->threads, "Worker threads (0: one per core)")->capture_default_str();
  auto* format_option = cmd->get_option("--format");
  cmd->add_option("--shard", flags->shard,
                  "Run shard I of N (I/N) and write its samples as JSON for tacet merge");
  cmd->add_option("--min-yield", flags->min_yield,
                  "Exit 1 after the report when the overall yield is below this (99%)");
  cmd->add_flag("--corners", flags->corners,
                "Also each spec's worst corner from the signs of its sensitivities, confirmed by a full solve");
  cmd->callback([flags, format_option] {
    SpreadOptions options;
    options.runs = flags->runs;
    options.seed = flags->seed;
    options.threads = flags->threads;
    if (!flags->shard.empty()) parse_shard(flags->shard, options);
    const auto min_yield = parse_min_yield(flags->min_yield);
    if (auto problem = options.validate(); !problem.empty()) throw InputError::usage(problem);
    const OutputFormat format = output_format(flags->common);
    const bool sharded = !flags->shard.empty();
    if (sharded && format_option->count() > 0 && format != OutputFormat::json)
      throw InputError::usage("--shard writes the shard's samples as JSON, not --format " + flags->common.format,
                              "leave --format out; tacet merge writes the report in any format");
    if (sharded && flags->corners)
      throw InputError::usage("--corners is not a share of the draws: a shard holds only samples for tacet merge",
                              "run the corners once on the whole netlist, without --shard: "
                              "tacet spread FILE --corners (docs/analyses/spread.md)");
    ReportContext context;
    const Circuit circuit = load(flags->common, context);
    if (circuit.specs.empty())
      throw InputError::usage(flags->common.file + " has no spec lines to measure",
                              "write for example: spec gain_1k gain (out) at=1kHz min=19.9dB max=20.1dB");
    Progress progress;
    options.progress = [&progress](std::int64_t done, std::int64_t total) { progress(done, total); };
    if (sharded) {
      const SpreadSamples samples = sample_spread(circuit, options);
      write_output(flags->common.output, spread_shard_json(samples, context));
      return;
    }
    // The corners first: nothing toleranced is an input error before any draw.
    std::vector<SpecCorner> corners;
    if (flags->corners) corners = run_spread_corners(circuit);
    SpreadResult result = run_spread(circuit, options);
    if (flags->corners) attach_corners(result, std::move(corners));
    write_output(flags->common.output, spread_writers().write(format, result, context));
    require_yield(result, min_yield);
  });
}

void setup_merge(CLI::App& app) {
  struct MergeFlags {
    CommonOptions common;
    std::vector<std::string> files;
    std::string min_yield;
  };
  auto flags = std::make_shared<MergeFlags>();
  CLI::App* cmd = app.add_subcommand(
      "merge", "Merge the shards of one tacet spread run (--shard 1/N .. N/N) into its report");
  cmd->add_option("shards", flags->files, "The shard files, in any order")->required();
  add_format_option(*cmd, flags->common, spread_writers().formats());
  cmd->add_option("--output", flags->common.output, "Write to this file (atomically) instead of stdout");
  cmd->add_option("--min-yield", flags->min_yield,
                  "Exit 1 after the report when the overall yield is below this (99%)");
  cmd->callback([flags] {
    const OutputFormat format = output_format(flags->common);
    const auto min_yield = parse_min_yield(flags->min_yield);
    std::vector<SpreadSamples> shards;
    ReportContext context;
    for (std::size_t k = 0; k < flags->files.size(); ++k) {
      ReportContext shard_context;
      shards.push_back(read_spread_shard(read_whole_file(flags->files[k]), flags->files[k], shard_context));
      if (k == 0) context = shard_context;
    }
    const SpreadResult result = summarise_spread(merge_spread_samples(std::move(shards), flags->files));
    write_output(flags->common.output, spread_writers().write(format, result, context));
    require_yield(result, min_yield);
  });
}

}  // namespace tacet::cli
