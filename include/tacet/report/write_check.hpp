#pragma once
// The budget's verdict: a table for people (name, measured, limit, margin,
// PASS/FAIL, a summary line) and JSON for programs.

#include <string>

#include "tacet/analysis/check.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, json.
const Writers<CheckResult>& check_writers();

std::string check_table(const CheckResult& result, const ReportContext& context);
/// {"analysis":"check","file","title","specs":[{"name","kind","pass","value","limit","margin","unit"}],"failed"}
std::string check_json(const CheckResult& result, const ReportContext& context);
/// One value in the spec's unit, as the table shows it ("26.0021 dB", "11.25kHz").
std::string format_spec_value(double value, SpecUnit unit);
/// The limit as the table shows it ("25.9 .. 26.1 dB", "<= 0.1 dB").
std::string format_spec_limit(const Spec& spec);

}  // namespace tacet
