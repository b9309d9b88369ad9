#pragma once
// Aligned tables for people: units in the headers, SI prefixes on values,
// magnitudes in dB and phases in degrees.

#include <string>

#include "tacet/ac.hpp"
#include "tacet/circuit.hpp"
#include "tacet/output.hpp"

namespace tacet {

std::string ac_table(const AcResult& result, const ReportContext& context);

/// An element's connections as written: "(+in, -fb, out)", "(a, b)".
std::string connection_list(const Circuit& circuit, const Element& element);
/// An element's value and options as `tacet show` prints them ("10kohm tol=1%").
std::string element_value(const Circuit& circuit, const Element& element);
/// A model in the language's own syntax, on one line.
std::string model_line(const OpAmpModel& model);

/// The flat circuit after elaboration, one element a line in the language's
/// own spelling, then the models in use.
std::string circuit_listing(const Circuit& circuit, const ReportContext& context);

}  // namespace tacet
