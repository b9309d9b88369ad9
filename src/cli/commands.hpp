#pragma once
// One file per subcommand: each setup_X registers its flags into an options
// struct of its own and a callback that runs the pipeline as far as it needs.

#include <CLI/CLI.hpp>

namespace tacet::cli {

void setup_ac(CLI::App& app);
void setup_noise(CLI::App& app);
void setup_bias(CLI::App& app);
void setup_show(CLI::App& app);
void setup_check(CLI::App& app);
void setup_diff(CLI::App& app);
void setup_report(CLI::App& app);
void setup_loop(CLI::App& app);
void setup_poles(CLI::App& app);
void setup_settle(CLI::App& app);
void setup_spread(CLI::App& app);
void setup_merge(CLI::App& app);
void setup_rank(CLI::App& app);
void setup_sensitivity(CLI::App& app);

}  // namespace tacet::cli
