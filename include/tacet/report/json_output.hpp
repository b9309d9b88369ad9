#pragma once
// The JSON conventions every writer shares: keys in the documented order (not
// alphabetical), full double precision (nlohmann writes max_digits10, so every
// value reads back exactly), and null for a value that is not finite, never a
// made-up number.

#include <optional>
#include <string>

#include <nlohmann/json.hpp>

#include "tacet/report/output.hpp"

namespace tacet::json_output {

using Json = nlohmann::ordered_json;

/// The value, or null when it is not finite.
Json number(double value);
/// The value, or null when it is absent or not finite.
Json number(std::optional<double> value);
/// {"analysis": ANALYSIS, "file": ..., "title": ...}, the head of every document.
Json header(const char* analysis, const ReportContext& context);
/// The document as written to the output, one line per value, ending in a newline.
std::string text(const Json& document);

}  // namespace tacet::json_output
