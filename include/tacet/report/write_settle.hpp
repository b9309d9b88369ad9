#pragma once
// The step response written for people (table), programs (csv, json) and
// reviewers (svg).
//
// Table: per probe the final value, the peak, the overshoot and the settling
// time to the band, then the response at every printed point.
// CSV: t_s, then one column per probe (its unit in the name), full precision.
// SVG: the responses against time, the settling band of the first probe
// shaded about its final value and each probe's settling time marked; below,
// |v / final - 1| on a log axis with the band as a line (0.01 % is invisible
// on the response's own scale).

#include <string>

#include "tacet/analysis/settle.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/plot.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, csv, json, svg.
const Writers<SettleResult>& settle_writers();

std::string settle_table(const SettleResult& result, const ReportContext& context);
std::string settle_csv(const SettleResult& result);
/// {"analysis":"settle","file","title","traces":[{"probe","points":[{"t","v"}],"final",
///  "peak","overshoot","settling_time","band"}]}; t in s, v in the probe's unit per unit
/// step; overshoot and band as fractions; null where not defined (final 0, not settled).
std::string settle_json(const SettleResult& result, const ReportContext& context);

plot::Figure settle_figure(const SettleResult& result, const ReportContext& context);
std::string settle_svg(const SettleResult& result, const ReportContext& context);

}  // namespace tacet
