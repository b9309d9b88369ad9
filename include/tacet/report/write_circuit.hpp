#pragma once
// What `tacet show` prints: the flat circuit after elaboration.

#include <string>

#include "tacet/circuit/circuit.hpp"
#include "tacet/report/output.hpp"

namespace tacet {

/// One element a line in the language's own spelling, then the models in use.
std::string circuit_listing(const Circuit& circuit, const ReportContext& context);

}  // namespace tacet
