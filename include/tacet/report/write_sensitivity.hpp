#pragma once
// The sensitivity analysis written for people (table) and programs (csv, json).
//
// Table: "buy these tighter": every parameter, largest |mag| first, with its
// value, its tol= and what that tolerance moves: |H| by about
// 20 log10(e) mag tol dB and arg H by deg tol degrees, first order.
// CSV: name, param, value, tol, mag, deg at full precision, same order.
// JSON: {"analysis":"sensitivity","file","title","probe","f",
//   "value":{"re","im","db","deg"},"elements":[{"name","param","mag","deg"}]}.

#include <string>

#include "tacet/analysis/check.hpp"
#include "tacet/analysis/sensitivity.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, csv, json.
const Writers<SensitivityResult>& sensitivity_writers();

std::string sensitivity_table(const SensitivityResult& result, const ReportContext& context);
std::string sensitivity_csv(const SensitivityResult& result);
std::string sensitivity_json(const SensitivityResult& result, const ReportContext& context);

/// `tacet check --sensitivity`: the verdict and, per spec, what moves it.
struct CheckSensitivityReport {
  CheckResult check;
  SpecSensitivities sensitivities;
  std::size_t top = 5;  ///< parts the table shows per spec (JSON has all)
};

/// table, json. Table: check's table, then per spec its `top` parts by
/// |effect of +1 %|, each with its tol= and what that tolerance moves (first
/// order, in the spec's unit). JSON: check's document plus
/// "sensitivity":[{"spec","kind","unit","method","note",
///   "parts":[{"name","param","value","tol","derivative","per_percent"}]}],
/// parts largest |per_percent| first; "derivative" per SI unit of the part.
const Writers<CheckSensitivityReport>& check_sensitivity_writers();
std::string check_sensitivity_table(const CheckSensitivityReport& report,
                                    const ReportContext& context);
std::string check_sensitivity_json(const CheckSensitivityReport& report,
                                   const ReportContext& context);

/// First-order change of |H| in dB for a relative change `relative` of a
/// parameter whose mag is `mag`: 20 log10(e) mag relative.
double db_change(double mag, double relative);

}  // namespace tacet
