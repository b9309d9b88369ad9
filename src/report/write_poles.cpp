// Writers for the poles analysis: table, csv and json.

#include "tacet/report/write_poles.hpp"

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

std::string q_cell(const Root& r) {
  return std::isfinite(r.q()) ? fmt::format("{:.4g}", r.q()) : std::string("inf");
}

std::string root_rows(const std::vector<Root>& roots) {
  Table table({"re [Hz]", "im [Hz]", "f0 [Hz]", "Q"});
  for (const Root& r : roots)
    table.add({format_si(r.re_hz(), 6), format_si(r.im_hz(), 6), format_si(r.f0(), 6), q_cell(r)});
  return table.render();
}

std::string verdict(const PolesResult& r) {
  if (r.stable) return "stable: every pole is in the left half-plane\n";
  std::string out = "UNSTABLE: a pole has a real part >= 0; the circuit oscillates or latches";
  if (!r.unstable_loops.empty()) {
    out += "\nthe loop of ";
    for (std::size_t k = 0; k < r.unstable_loops.size(); ++k)
      out += (k ? ", " : "") + r.unstable_loops[k];
    out += " has a negative margin or positive feedback at low frequency (see tacet loop)";
  }
  return out + "\n";
}

json roots_json(const std::vector<Root>& roots) {
  json out = json::array();
  for (const Root& r : roots)
    out.push_back({{"re", number(r.re_hz())}, {"im", number(r.im_hz())}, {"f0", number(r.f0())},
                   {"q", number(r.q())}});
  return out;
}

}  // namespace

const Writers<PolesResult>& poles_writers() {
  static const Writers<PolesResult> writers{
      {OutputFormat::table, poles_table},
      {OutputFormat::csv, poles_csv},
      {OutputFormat::json, poles_json},
  };
  return writers;
}

std::string poles_table(const PolesResult& r, const ReportContext& context) {
  std::string out = report_header(context);
  out += fmt::format("Poles (natural frequencies), {} of a {}-unknown pencil\n\n", r.poles.size(),
                     r.unknowns);
  out += r.poles.empty() ? "no finite pole (no storage element)\n" : root_rows(r.poles);
  if (!r.probe.empty()) {
    out += fmt::format("\nZeros of {} from {}\n\n", r.probe, r.input);
    out += r.zeros.empty() ? "no finite zero\n" : root_rows(r.zeros);
  }
  return out + "\n" + verdict(r);
}

std::string poles_csv(const PolesResult& r) {
  std::string out = "kind,re_Hz,im_Hz,f0_Hz,q\n";
  auto rows = [&](const char* kind, const std::vector<Root>& roots) {
    for (const Root& x : roots)
      out += fmt::format("{},{},{},{},{}\n", kind, csv_number(x.re_hz()), csv_number(x.im_hz()), csv_number(x.f0()),
                         csv_number(x.q()));
  };
  rows("pole", r.poles);
  rows("zero", r.zeros);
  return out;
}

std::string poles_json(const PolesResult& r, const ReportContext& context) {
  json d = json_output::header("poles", context);
  d["poles"] = roots_json(r.poles);
  d["zeros"] = roots_json(r.zeros);
  d["stable"] = r.stable;
  return json_output::text(d);
}

}  // namespace tacet
