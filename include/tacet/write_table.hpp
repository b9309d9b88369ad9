#pragma once
// Aligned tables for people: units in the headers, SI prefixes on values,
// magnitudes in dB and phases in degrees.

#include <string>

#include "tacet/ac.hpp"
#include "tacet/circuit.hpp"
#include "tacet/output.hpp"

namespace tacet {

std::string ac_table(const AcResult& result, const ReportContext& context);

/// The flat circuit after elaboration, one element a line in the language's
/// own spelling, then the models in use.
std::string circuit_listing(const Circuit& circuit, const ReportContext& context);

}  // namespace tacet
