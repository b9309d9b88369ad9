// Writers for the sensitivity analysis: table, csv and json.

#include "tacet/report/write_sensitivity.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/csv.hpp"
#include "tacet/report/json_output.hpp"
#include "tacet/report/write_check.hpp"
#include "tacet/report/text_table.hpp"

namespace tacet {
namespace {

using json = json_output::Json;
using json_output::number;

std::string fixed(double v, int digits) {
  return std::isfinite(v) ? fmt::format("{:.{}f}", v, digits) : std::string("-");
}

// Four decimals, or two significant digits in e-notation for a value that
// would print as 0.0000 but is not zero (a 30 MHz pole at 10 kHz).
std::string small_or_fixed(double v) {
  if (v != 0 && std::abs(v) < 5e-5 && std::isfinite(v)) return fmt::format("{:.1e}", v);
  return fixed(v, 4);
}

std::string percent(double relative) {
  return relative > 0 ? fmt::format("{:.3g}%", 100 * relative) : std::string("-");
}

std::string drive_text(const SensitivityResult& r) {
  if (r.probe.kind == ProbeKind::impedance) return "its own unit test current";
  return r.input.empty() ? std::string("every source's ac=") : "a unit phasor in " + r.input;
}

// Largest |per_percent| first; equal ones (to 12 digits) in parameter order.
std::vector<SpecDerivative> by_effect(const SpecSensitivity& spec) {
  std::vector<SpecDerivative> parts = spec.derivatives;
  auto key = [](const SpecDerivative& d) { return std::round(std::abs(d.per_percent) * 1e12); };
  std::stable_sort(parts.begin(), parts.end(), [&](const SpecDerivative& a, const SpecDerivative& b) {
    return key(a) > key(b);
  });
  return parts;
}

std::string signed_value(double v, SpecUnit unit) {
  return (v > 0 ? "+" : "") + format_spec_value(v, unit);
}

std::string spec_block(const SpecSensitivity& spec, const SpecSensitivities& all, std::size_t top) {
  std::string out = fmt::format("\n{} ({}, {}): ", spec.spec, to_string(spec.kind),
                                spec.value ? format_spec_value(*spec.value, spec.unit) : "-");
  if (spec.method == SpecMethod::none) return out + "no sensitivity: " + spec.note + "\n";
  out += std::string(to_string(spec.method)) + (spec.note.empty() ? "" : "; " + spec.note) + "\n";
  Table table({"  name", "param", "value", "per +1 %", "tol", "+-tol"},
              std::vector<Table::Align>{Table::Align::left, Table::Align::left});
  const auto parts = by_effect(spec);
  for (std::size_t k = 0; k < parts.size() && k < top; ++k) {
    const SpecDerivative& d = parts[k];
    const Parameter& p = all.parameters[d.parameter];
    const double tol = all.tolerances[d.parameter];
    table.add({"  " + all.names[d.parameter], to_string(p.key), format_si(p.value),
               signed_value(d.per_percent, spec.unit), percent(tol),
               tol > 0 ? "+-" + format_spec_value(std::abs(d.per_percent) * tol * 100, spec.unit)
                       : "-"});
  }
  return out + table.render();
}

}  // namespace

const Writers<CheckSensitivityReport>& check_sensitivity_writers() {
  static const Writers<CheckSensitivityReport> writers{
      {OutputFormat::table, check_sensitivity_table},
      {OutputFormat::json, check_sensitivity_json},
  };
  return writers;
}

std::string check_sensitivity_table(const CheckSensitivityReport& report,
                                    const ReportContext& context) {
  std::string out = check_table(report.check, context);
  out += fmt::format(
      "\nWhat moves each spec most: its change per +1 % of a part (top {}), and what the part's\n"
      "tol= moves it by, first order. Buy the top ones tighter.\n",
      report.top);
  for (const auto& spec : report.sensitivities.specs)
    out += spec_block(spec, report.sensitivities, report.top);
  return out;
}

std::string check_sensitivity_json(const CheckSensitivityReport& report,
                                   const ReportContext& context) {
  json d = json::parse(check_json(report.check, context));
  const SpecSensitivities& all = report.sensitivities;
  json specs = json::array();
  for (const auto& spec : all.specs) {
    json parts = json::array();
    for (const auto& part : by_effect(spec)) {
      const Parameter& p = all.parameters[part.parameter];
      parts.push_back({{"name", all.names[part.parameter]}, {"param", to_string(p.key)},
                       {"value", number(p.value)}, {"tol", number(all.tolerances[part.parameter])},
                       {"derivative", number(part.derivative)},
                       {"per_percent", number(part.per_percent)}});
    }
    specs.push_back({{"spec", spec.spec}, {"kind", to_string(spec.kind)},
                     {"unit", to_string(spec.unit)}, {"method", to_string(spec.method)},
                     {"note", spec.note}, {"parts", parts}});
  }
  d["sensitivity"] = specs;
  return json_output::text(d);
}

double db_change(double mag, double relative) { return 20 / std::numbers::ln10 * mag * relative; }

const Writers<SensitivityResult>& sensitivity_writers() {
  static const Writers<SensitivityResult> writers{
      {OutputFormat::table, sensitivity_table},
      {OutputFormat::csv, sensitivity_csv},
      {OutputFormat::json, sensitivity_json},
  };
  return writers;
}

std::string sensitivity_table(const SensitivityResult& r, const ReportContext& context) {
  std::string out = report_header(context);
  out += fmt::format("Sensitivity of {} at {}Hz, driven by {}: {}{} = {} dB, {} deg\n",
                     r.probe.text, format_si(r.f), drive_text(r), format_si(std::abs(r.value)),
                     probe_unit(r.probe), fixed(to_db(r.value), 4), fixed(to_degrees(r.value), 2));
  out += "Largest first: a part +1 % moves |H| by about mag % and its phase by deg/100 deg;\n"
         "the last two columns are what its tol= moves, first order. Buy the top ones tighter.\n\n";
  Table table({"name", "param", "value", "mag", "deg", "tol", "+-tol [dB]", "+-tol [deg]"},
              std::vector<Table::Align>{Table::Align::left, Table::Align::left});
  for (const auto& e : r.elements) {
    const bool tol = e.tolerance > 0;
    table.add({e.name, to_string(e.key), format_si(e.value), small_or_fixed(e.mag),
               small_or_fixed(e.deg),
               percent(e.tolerance), tol ? fixed(std::abs(db_change(e.mag, e.tolerance)), 4) : "-",
               tol ? fixed(std::abs(e.deg * e.tolerance), 4) : "-"});
  }
  return out + table.render();
}

std::string sensitivity_csv(const SensitivityResult& r) {
  std::string out = "name,param,value,tol,mag,deg\n";
  for (const auto& e : r.elements)
    out += e.name + "," + to_string(e.key) + "," + csv_number(e.value) + "," + csv_number(e.tolerance) + "," +
           csv_number(e.mag) + "," + csv_number(e.deg) + "\n";
  return out;
}

std::string sensitivity_json(const SensitivityResult& r, const ReportContext& context) {
  json d = json_output::header("sensitivity", context);
  d["probe"] = r.probe.text;
  d["f"] = number(r.f);
  d["value"] = {{"re", number(r.value.real())},
                {"im", number(r.value.imag())},
                {"db", number(to_db(r.value))},
                {"deg", number(to_degrees(r.value))}};
  json elements = json::array();
  for (const auto& e : r.elements)
    elements.push_back({{"name", e.name}, {"param", to_string(e.key)}, {"mag", number(e.mag)},
                        {"deg", number(e.deg)}});
  d["elements"] = elements;
  return json_output::text(d);
}

}  // namespace tacet
