#include "tacet/write_json.hpp"

#include <cmath>

#include <nlohmann/json.hpp>

#include "tacet/format.hpp"

namespace tacet {

namespace {

// Ordered, so keys appear as documented (f, re, im, db, deg), not alphabetically.
using json = nlohmann::ordered_json;

json number(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }

json header(const char* analysis, const ReportContext& context) {
  return json{{"analysis", analysis}, {"file", context.file}, {"title", context.title}};
}

std::string dump(const json& document) {
  // nlohmann writes doubles with max_digits10, so every value reads back exactly.
  return document.dump(1, ' ', false, json::error_handler_t::strict) + "\n";
}

}  // namespace

std::string ac_json(const AcResult& result, const ReportContext& context) {
  json document = header("ac", context);
  json traces = json::array();
  for (const auto& trace : result.traces) {
    json points = json::array();
    for (std::size_t i = 0; i < result.frequencies.size(); ++i) {
      const auto z = trace.values[i];
      points.push_back({{"f", number(result.frequencies[i])}, {"re", number(z.real())},
                        {"im", number(z.imag())}, {"db", number(to_db(z))}, {"deg", number(to_degrees(z))}});
    }
    traces.push_back({{"probe", trace.probe.text}, {"unit", probe_unit(trace.probe)}, {"points", points}});
  }
  document["traces"] = traces;
  return dump(document);
}

}  // namespace tacet
