#pragma once
// JSON for programs, at full double precision. A value that is not finite is
// written as null, never as a made-up number.

#include <string>

#include "tacet/ac.hpp"
#include "tacet/output.hpp"

namespace tacet {

/// {"analysis":"ac","file","title","traces":[{"probe","unit","points":[{"f","re","im","db","deg"}]}]}
std::string ac_json(const AcResult& result, const ReportContext& context);

}  // namespace tacet
