// Writers for the step response: table, csv and json (svg in write_settle_svg.cpp).

#include "tacet/report/write_settle.hpp"

#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/csv.hpp"
#include "tacet/report/json_output.hpp"
#include "tacet/report/text_table.hpp"

namespace tacet {
namespace {

using json = json_output::Json;
using json_output::number;

std::string percent(double fraction) { return fmt::format("{:.4g} %", 100 * fraction); }

std::string settling_cell(const SettleTrace& t, bool settled) {
  if (t.settling_time) return format_si(*t.settling_time, 7) + "s";
  if (!settled) return "not settled";
  return "-";
}

std::string metrics(const SettleResult& r) {
  Table table({"probe", "final", "peak", "overshoot", "settling"},
              std::vector<Table::Align>{Table::Align::left});
  for (const auto& t : r.traces)
    table.add({t.probe, format_si(t.final, 7) + t.unit, format_si(t.peak, 7) + t.unit,
               t.overshoot ? percent(*t.overshoot) : std::string("-"),
               settling_cell(t, r.settled)});
  return table.render();
}

std::string notes(const SettleResult& r) {
  std::string out;
  for (const auto& t : r.traces)
    if (!t.overshoot)
      out += fmt::format("{}: the final value is 0 (no DC gain), so overshoot and settling, "
                         "relative to it, are not defined\n",
                         t.probe);
  if (!r.settled)
    out += "the response was still moving when the integration stopped: no settling time\n";
  return out;
}

std::string points_table(const SettleResult& r) {
  std::vector<std::string> header{"t [s]"};
  for (const auto& t : r.traces) header.push_back(fmt::format("{} [{}]", t.probe, t.unit));
  Table table(header);
  for (std::size_t i = 0; i < r.times.size(); ++i) {
    std::vector<std::string> row{format_si(r.times[i], 6)};
    for (const auto& t : r.traces) row.push_back(format_si_fixed(t.values[i], 9));
    table.add(std::move(row));
  }
  return table.render();
}


}  // namespace

const Writers<SettleResult>& settle_writers() {
  static const Writers<SettleResult> writers{
      {OutputFormat::table, settle_table},
      {OutputFormat::csv, settle_csv},
      {OutputFormat::json, settle_json},
      {OutputFormat::svg, settle_svg},
  };
  return writers;
}

std::string settle_table(const SettleResult& r, const ReportContext& context) {
  std::string out = report_header(context);
  out += fmt::format("Step response to a 1 {} step of {}, settling to +-{} of final\n\n",
                     r.input_unit, r.input, percent(r.traces.empty() ? 0 : r.traces[0].band));
  out += metrics(r);
  out += notes(r);
  out += fmt::format("\n{} points from 0 to {}s ({} steps of Radau IIA)\n\n", r.times.size(),
                     format_si(r.to, 6), r.steps);
  return out + points_table(r);
}

std::string settle_csv(const SettleResult& r) {
  std::string out = "t_s";
  for (const auto& t : r.traces) out += "," + csv_field(fmt::format("{}_{}", t.probe, t.unit));
  out += "\n";
  for (std::size_t i = 0; i < r.times.size(); ++i) {
    out += csv_number(r.times[i]);
    for (const auto& t : r.traces) out += "," + csv_number(t.values[i]);
    out += "\n";
  }
  return out;
}

std::string settle_json(const SettleResult& r, const ReportContext& context) {
  json d = json_output::header("settle", context);
  json traces = json::array();
  for (const auto& t : r.traces) {
    json points = json::array();
    for (std::size_t i = 0; i < r.times.size(); ++i)
      points.push_back({{"t", number(r.times[i])}, {"v", number(t.values[i])}});
    traces.push_back({{"probe", t.probe},
                      {"points", std::move(points)},
                      {"final", number(t.final)},
                      {"peak", number(t.peak)},
                      {"overshoot", number(t.overshoot)},
                      {"settling_time", number(t.settling_time)},
                      {"band", number(t.band)}});
  }
  d["traces"] = std::move(traces);
  return json_output::text(d);
}

}  // namespace tacet
