#include "tacet/report/write_ac.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/text_table.hpp"

namespace tacet {

namespace {

std::string db_cell(std::complex<double> z) {
  double db = to_db(z);
  return std::isfinite(db) ? fmt::format("{:.4f}", db) : std::string("-inf");
}


std::string sweep_line(const AcResult& result) {
  const auto& f = result.frequencies;
  if (f.empty()) return "no frequencies\n";
  auto any = [&](ProbeKind kind) {
    return std::any_of(result.traces.begin(), result.traces.end(),
                       [&](const AcTrace& t) { return t.probe.kind == kind; });
  };
  if (!result.input.empty())
    return fmt::format("AC transfer from {} alone (a unit at it, every other source's ac zeroed), {} "
                       "point{} from {}Hz to {}Hz; dB re 1 V/{}{}\n",
                       result.input, f.size(), f.size() == 1 ? "" : "s", format_si(f.front()),
                       format_si(f.back()), result.input_unit,
                       any(ProbeKind::current) ? " or 1 A/" + result.input_unit : "");
  return fmt::format("AC response, {} point{} from {}Hz to {}Hz; dB re 1 V{}{} (a gain when the source has ac=1)\n",
                     f.size(), f.size() == 1 ? "" : "s", format_si(f.front()), format_si(f.back()),
                     any(ProbeKind::current) ? " or 1 A" : "",
                     any(ProbeKind::impedance) ? " or 1 ohm" : "");
}

}  // namespace

std::string ac_table(const AcResult& result, const ReportContext& context) {
  std::vector<std::string> header{"f [Hz]"};
  for (const auto& trace : result.traces) {
    header.push_back(fmt::format("{} [dB]", trace.probe.text));
    header.push_back(fmt::format("{} [deg]", trace.probe.text));
  }
  Table table(header);
  for (std::size_t i = 0; i < result.frequencies.size(); ++i) {
    std::vector<std::string> row{format_si_fixed(result.frequencies[i])};
    for (const auto& trace : result.traces) {
      row.push_back(db_cell(trace.values[i]));
      row.push_back(fmt::format("{:.2f}", to_degrees(trace.values[i])));
    }
    table.add(std::move(row));
  }
  return report_header(context) + sweep_line(result) + "\n" + table.render();
}

}  // namespace tacet
