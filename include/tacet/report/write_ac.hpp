#pragma once
// The AC sweep's writers: an aligned table for people (units in the headers,
// SI prefixes, magnitudes in dB, phases in degrees), CSV and JSON for programs
// at full precision. A value that is not finite is an empty CSV cell or a JSON
// null, never a made-up number.

#include <string>

#include "tacet/analysis/ac.hpp"
#include "tacet/report/output.hpp"
#include "tacet/report/writers.hpp"

namespace tacet {

/// table, csv, json.
const Writers<AcResult>& ac_writers();

std::string ac_table(const AcResult& result, const ReportContext& context);

/// Columns: f_Hz, then per probe P: P_re, P_im, P_dB, P_deg.
std::string ac_csv(const AcResult& result);

/// {"analysis":"ac","file","title","traces":[{"probe","unit","points":[{"f","re","im","db","deg"}]}]}
std::string ac_json(const AcResult& result, const ReportContext& context);

}  // namespace tacet
