// tacet: registers the subcommands, parses the command line, and maps every
// failure to its exit status in one place.

#include <iostream>
#include <string>

#include <CLI/CLI.hpp>

#include "cli/commands.hpp"
#include "tacet/common/errors.hpp"

int main(int argc, char** argv) {
  CLI::App app{"tacet: small-signal solver for precision op-amp stages"};
  app.set_version_flag("--version", std::string("tacet ") + TACET_VERSION);
  app.require_subcommand(1);
  app.footer("'--' ends the options: a netlist whose name starts with '-' follows it "
             "(tacet show -- -x.tacet).");
  tacet::cli::setup_ac(app);
  tacet::cli::setup_noise(app);
  tacet::cli::setup_bias(app);
  tacet::cli::setup_show(app);
  tacet::cli::setup_check(app);
  tacet::cli::setup_diff(app);
  tacet::cli::setup_report(app);
  tacet::cli::setup_loop(app);
  tacet::cli::setup_poles(app);
  tacet::cli::setup_settle(app);
  tacet::cli::setup_spread(app);
  tacet::cli::setup_merge(app);
  tacet::cli::setup_rank(app);
  tacet::cli::setup_sensitivity(app);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : static_cast<int>(tacet::ExitStatus::bad_input);
  } catch (const tacet::Error& e) {
    std::cerr << e.what();  // every message ends its own lines (common/errors.hpp)
    return static_cast<int>(e.status());
  } catch (const std::exception& e) {
    std::cerr << "internal error: " << e.what() << "\n";
    return 70;
  }
  return 0;
}
