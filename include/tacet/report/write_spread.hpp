#pragma once
// The spread's report: a table for people (per spec the nominal, mean, sd,
// range, quantiles and yield with its 95 % interval; the specs that fail
// most and the parts that drive them), CSV and JSON for programs, an SVG with
// one histogram per spec and its limits; and the shard document that
// `tacet merge` reads back.

#include <string>
#include <vector>

#include "tacet/analysis/spread.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, csv, json, svg.
const Writers<SpreadResult>& spread_writers();
std::string spread_table(const SpreadResult& result, const ReportContext& context);
std::string spread_csv(const SpreadResult& result);
/// {"analysis":"spread","file","title","runs","seed","yield","yield_low","yield_high",
///  "netlist_hash","parameters","specs":[{"name","kind","unit","nominal","mean","sd","min",
///  "max","yield","yield_low","yield_high","limit":{"min","max"},"measured","failed",
///  "quantiles":{"p01","p05","p50","p95","p99"},"drivers":[{"name","param","correlation"}]}]}
std::string spread_json(const SpreadResult& result, const ReportContext& context);
std::string spread_svg(const SpreadResult& result, const ReportContext& context);

/// The shard document: {"analysis":"spread-shard","version":1,"file","title",
/// "netlist_hash","seed","runs","shard","shards","first","count","parameters",
/// "sets","specs","values":[[per draw] per spec],"pass":["0110..." per spec]}.
/// Every number at full precision, so the merge reads back exactly what was measured.
std::string spread_shard_json(const SpreadSamples& samples, const ReportContext& context);

/// Reads a shard document back; `name` (its file) is named in errors.
/// Throws InputError (exit 2) for a file that is no shard of tacet spread.
SpreadSamples read_spread_shard(const std::string& text, const std::string& name,
                                ReportContext& context);

}  // namespace tacet
