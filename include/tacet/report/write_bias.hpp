#pragma once
// Writers of the bias analysis and the headroom at the declared level: one
// aligned report for people (op amps first: the designer's question, then the
// headroom, then every node), csv of the nodes, and json for programs.

#include <string>

#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/headroom.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// What `tacet bias` reports: the operating point and the headroom at the level.
struct BiasReport {
  BiasResult bias;
  HeadroomResult headroom;
};

/// table, csv, json.
const Writers<BiasReport>& bias_writers();

/// Op amps (nominal output, worst-case band, limits, ok, largest offsets),
/// warnings, the headroom at the level (or a line saying none is declared),
/// cautions, then every node's nominal, worst and rss.
std::string bias_table(const BiasReport& report, const ReportContext& context);

/// node,nominal,worst,rss (V), one row per node.
std::string bias_csv(const BiasReport& report);

/// {"analysis":"bias","file","title","nodes":{NAME:V},"offset":{NAME:{"worst","rss"}},
///  "opamps":[{"name","out","nominal","low","high","limit_low","limit_high","ok",
///             "largest":[{"opamp","kind","gain","volts","through"}]}],
///  "warnings":[...],
///  "headroom":{"sources":[{"name","peak","rms","hazardous"}],"band":{"from","to"},
///              "opamps":[{"name","out","plus","minus": {"node","peak","low","high",
///                          "limit_low","limit_high","margin","f","ok"},
///                         "slew":{"needed","available","f","ok"}}],
///              "warnings":[...],"cautions":[...]}}
/// Limits without rails, and ok when nothing was checked, are null.
std::string bias_json(const BiasReport& report, const ReportContext& context);

}  // namespace tacet
