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
    traces.push_back({{"probe", trace.probe.text}, {"unit", probe_unit(trace.probe)}, {"points", points}});
  }
  document["traces"] = traces;
  return json_output::text(document);
}

}  // namespace tacet
