// Writers for the loop-gain analysis: table, csv, json and svg (write_loop_svg.cpp).

#include "tacet/report/write_loop.hpp"

#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/csv.hpp"
#include "tacet/report/json_output.hpp"
#include "tacet/report/text_table.hpp"
#include "tacet/report/write_svg.hpp"

namespace tacet {
namespace {

using json = json_output::Json;
using json_output::number;

double db_of(std::complex<double> t) { return 20 * std::log10(std::abs(t)); }

std::string fixed(double v, int digits) {
  return std::isfinite(v) ? fmt::format("{:.{}f}", v, digits) : std::string("-");
}

std::string margin_text(const std::optional<double>& margin, const char* unit) {
  return margin ? fixed(*margin, 2) + " " + unit : std::string("none in range");
}

std::string crossover_rows(const LoopTrace& trace) {
  if (trace.crossovers.empty() && trace.phase_crossovers.empty())
    return "  |T| never reaches 1 and arg T never reaches -180 deg in the sweep\n";
  Table table({"  where", "f [Hz]", "margin"},
              std::vector<Table::Align>{Table::Align::left, Table::Align::right, Table::Align::right});
  for (const auto& c : trace.crossovers)
    table.add({"  crossover |T| = 1", format_si(c.f, 6), fixed(c.phase_margin, 2) + " deg"});
  for (const auto& c : trace.phase_crossovers)
    table.add({"  phase crossover", format_si(c.f, 6), fixed(c.gain_margin, 2) + " dB"});
  return table.render();
}

std::string point_rows(const LoopResult& r, const LoopTrace& trace) {
  Table table({"f [Hz]", "|T| [dB]", "arg T [deg]"});
  for (std::size_t k = 0; k < r.frequencies.size(); ++k)
    table.add({format_si_fixed(r.frequencies[k]), fixed(db_of(trace.t[k]), 3),
               fixed(trace.deg[k], 3)});
  return table.render();
}

}  // namespace

const Writers<LoopResult>& loop_writers() {
  static const Writers<LoopResult> writers{
      {OutputFormat::table, loop_table},
      {OutputFormat::csv, loop_csv},
      {OutputFormat::json, loop_json},
      {OutputFormat::svg, loop_svg},
  };
  return writers;
}

const char* loop_verdict(const LoopTrace& t) {
  // Left of -1 at the lowest frequency: a latch, whatever the crossovers say.
  if (!t.t.empty() && regenerative(t.t.front())) return "positive feedback";
  if (!t.phase_margin) return "no crossover";
  const double pm = *t.phase_margin;
  const double gm = t.gain_margin ? *t.gain_margin : INFINITY;
  if (pm < 0 || gm < 0) return "unstable";
  if (pm >= 60 && gm >= 10) return "ample";
  if (pm >= 45 && gm >= 6) return "adequate";
  return "marginal";
}

std::string loop_table(const LoopResult& r, const ReportContext& context) {
  std::string out = report_header(context);
  out += fmt::format("Loop gain (return ratio of each op amp's gain source) from {}Hz to {}Hz\n",
                     format_si(r.frequencies.front()), format_si(r.frequencies.back()));
  for (const auto& trace : r.loops) {
    out += fmt::format("\n{}: phase margin {}, gain margin {}: {}\n", trace.opamp,
                       margin_text(trace.phase_margin, "deg"), margin_text(trace.gain_margin, "dB"),
                       loop_verdict(trace));
    out += crossover_rows(trace) + "\n" + point_rows(r, trace);
  }
  return out;
}

std::string loop_csv(const LoopResult& r) {
  std::string out = "opamp,f_Hz,re,im,db,deg\n";
  for (const auto& trace : r.loops)
    for (std::size_t k = 0; k < r.frequencies.size(); ++k)
      out += trace.opamp + "," + csv_number(r.frequencies[k]) + "," + csv_number(trace.t[k].real()) + "," +
             csv_number(trace.t[k].imag()) + "," + csv_number(db_of(trace.t[k])) + "," + csv_number(trace.deg[k]) +
             "\n";
  return out;
}

std::string loop_json(const LoopResult& r, const ReportContext& context) {
  json d = json_output::header("loop", context);
  json loops = json::array();
  for (const auto& trace : r.loops) {
    json points = json::array();
    for (std::size_t k = 0; k < r.frequencies.size(); ++k)
      points.push_back({{"f", number(r.frequencies[k])}, {"re", number(trace.t[k].real())},
                        {"im", number(trace.t[k].imag())}, {"db", number(db_of(trace.t[k]))},
                        {"deg", number(trace.deg[k])}});
    json crossovers = json::array(), phase_crossovers = json::array();
    for (const auto& c : trace.crossovers)
      crossovers.push_back({{"f", number(c.f)}, {"phase_margin", number(c.phase_margin)}});
    for (const auto& c : trace.phase_crossovers)
      phase_crossovers.push_back({{"f", number(c.f)}, {"gain_margin", number(c.gain_margin)}});
    loops.push_back({{"opamp", trace.opamp}, {"points", points}, {"crossovers", crossovers},
                     {"phase_crossovers", phase_crossovers},
                     {"phase_margin", number(trace.phase_margin)},
                     {"gain_margin", number(trace.gain_margin)}});
  }
  d["loops"] = loops;
  return json_output::text(d);
}

}  // namespace tacet
