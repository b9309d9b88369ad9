#pragma once
// The flat circuit written back in the language's own spelling: what
// `tacet show` prints and what `tacet diff` compares element by element.

#include <string>

#include "tacet/circuit/circuit.hpp"

namespace tacet {

/// An element's connections as written: "(+in, -fb, out)", "(a, b)".
std::string connection_list(const Circuit& circuit, const Element& element);
/// An element's value and options as `tacet show` prints them ("10kohm tol=1%").
std::string element_value(const Circuit& circuit, const Element& element);
/// A model in the language's own syntax, on one line.
std::string model_line(const OpAmpModel& model);

}  // namespace tacet
