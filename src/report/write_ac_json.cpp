#include "tacet/report/write_ac.hpp"

#include <cmath>


#include "tacet/common/format.hpp"
#include "tacet/report/json_output.hpp"

namespace tacet {

using json_output::header;
using json_output::number;
using json = json_output::Json;

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
    // From one source the values are a transfer: V/A from a current source.
    const std::string unit = std::string(probe_unit(trace.probe)) +
                             (result.input.empty() ? "" : "/" + result.input_unit);
    traces.push_back({{"probe", trace.probe.text}, {"unit", unit}, {"points", points}});
  }
  if (!result.input.empty()) document["input"] = result.input;
  document["traces"] = traces;
  return json_output::text(document);
}

}  // namespace tacet
