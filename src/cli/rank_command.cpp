// tacet rank: every op-amp model tried in the named slots, ranked by the specs.

#include <memory>

#include "commands.hpp"
#include "common.hpp"
#include "tacet/analysis/rank.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_rank.hpp"

namespace tacet::cli {

void setup_rank(CLI::App& app) {
  struct RankFlags {
    CommonOptions common;
    std::vector<std::string> slots;
    std::string models = "all";
  };
  auto flags = std::make_shared<RankFlags>();
  CLI::App* cmd = app.add_subcommand(
      "rank", "Try every op-amp model in the named slots and rank the variants by the specs");
  add_common_options(*cmd, flags->common, rank_writers().formats());
  cmd->add_option("--slot", flags->slots, "An op amp whose model is varied (repeatable)")->required();
  cmd->add_option("--models", flags->models, "Models to try: a,b,c or all")->capture_default_str();
  cmd->callback([flags] {
    RankOptions options;
    options.slots = flags->slots;
    if (flags->models != "all") {
      std::size_t start = 0;
      while (start <= flags->models.size()) {
        std::size_t comma = flags->models.find(',', start);
        if (comma == std::string::npos) comma = flags->models.size();
        if (comma == start) throw InputError::bad_value("--models", flags->models, "a,b,c or all");
        options.models.push_back(flags->models.substr(start, comma - start));
        start = comma + 1;
      }
    }
    analyse_and_write(flags->common, rank_writers(), [&](const Circuit& circuit) {
      if (circuit.specs.empty())
        throw InputError::usage(flags->common.file + " has no spec lines to rank the models by",
                                "write for example: spec gain_1k gain (out) at=1kHz min=19.9dB max=20.1dB");
      return run_rank(circuit, options);
    });
  });
}

}  // namespace tacet::cli
