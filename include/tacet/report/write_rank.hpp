#pragma once
// rank's report: "these models pass here, best first", a table for people and
// JSON for programs.

#include <string>

#include "tacet/analysis/rank.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, json.
const Writers<RankResult>& rank_writers();
std::string rank_table(const RankResult& result, const ReportContext& context);
/// {"analysis":"rank","file","title","rows":[{"slots":{NAME:MODEL},"pass","failed","worst_spec","worst_margin"}]}
std::string rank_json(const RankResult& result, const ReportContext& context);

}  // namespace tacet
