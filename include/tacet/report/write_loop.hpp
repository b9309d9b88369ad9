#pragma once
// The loop-gain analysis written for people (table) and programs (csv, json).
//
// Table: one block per op amp: its crossovers with their phase margins, its
// phase crossovers with their gain margins, the smallest of each and a verdict
// word, then |T| in dB and the unwrapped phase at every sweep point.
// CSV: one row per op amp and frequency, at full precision.

#include <string>

#include "tacet/analysis/loop.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, csv, json.
const Writers<LoopResult>& loop_writers();

/// The verdict for people, by the common-practice margins (45 deg, 6 dB):
/// "ample" (phase margin >= 60 deg and gain margin >= 10 dB or none),
/// "adequate" (>= 45 deg and >= 6 dB or none), "marginal" (both positive),
/// "unstable" (a negative margin), "no crossover" (|T| never reaches 1),
/// "positive feedback" (T negative with |T| > 1 at the lowest frequency: the
/// Nyquist curve starts left of -1, a latch, whatever the margins read).
const char* loop_verdict(const LoopTrace& trace);

std::string loop_table(const LoopResult& result, const ReportContext& context);

/// Columns: opamp, f_Hz, re, im, db, deg.
std::string loop_csv(const LoopResult& result);

/// {"analysis":"loop","file","title","loops":[{"opamp","points":[{"f","re","im","db","deg"}],
///  "crossovers":[{"f","phase_margin"}],"phase_crossovers":[{"f","gain_margin"}],
///  "phase_margin","gain_margin"}]}; null for a margin with no crossover.
std::string loop_json(const LoopResult& result, const ReportContext& context);

}  // namespace tacet
