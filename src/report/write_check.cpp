#include "tacet/report/write_check.hpp"

#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/json_output.hpp"
#include "tacet/report/text_table.hpp"

namespace tacet {

std::string format_spec_value(double value, SpecUnit unit) {
  switch (unit) {
    case SpecUnit::db: return fmt::format("{:.4f} dB", value);
    case SpecUnit::ratio: return fmt::format("{:.6g} V/V", value);
    case SpecUnit::amps_per_volt: return fmt::format("{:.6g} A/V", value);
    case SpecUnit::volts_per_amp: return fmt::format("{:.6g} V/A", value);
    case SpecUnit::amps_per_amp: return fmt::format("{:.6g} A/A", value);
    case SpecUnit::degrees: return fmt::format("{:.2f} deg", value);
    case SpecUnit::hertz: return format_si(value, 5) + "Hz";
    case SpecUnit::volts: return format_si(value, 4) + "V";
    case SpecUnit::amps: return format_si(value, 4) + "A";
    case SpecUnit::seconds: return format_si(value, 6) + "s";
    case SpecUnit::fraction: return fmt::format("{:.4g} %", 100 * value);
    case SpecUnit::ohms: return format_si(value, 5) + "ohm";
  }
  return fmt::format("{}", value);
}

namespace {

/// A limit as it was written: no padding digits ("26.1", not "26.1000").
std::string bare(double value, SpecUnit unit) {
  switch (unit) {
    case SpecUnit::hertz: return format_si(value, 6) + "Hz";
    case SpecUnit::volts: return format_si(value, 6) + "V";
    case SpecUnit::amps: return format_si(value, 6) + "A";
    case SpecUnit::seconds: return format_si(value, 6) + "s";
    case SpecUnit::fraction: return fmt::format("{:g} %", 100 * value);
    case SpecUnit::ohms: return format_si(value, 6) + "ohm";
    default: return fmt::format("{:g}", value);
  }
}

/// The unit written after a bare number; Hz and V are glued to theirs by bare().
std::string unit_suffix(SpecUnit unit) {
  switch (unit) {
    case SpecUnit::db: return " dB";
    case SpecUnit::ratio: return " V/V";
    case SpecUnit::amps_per_volt: return " A/V";
    case SpecUnit::volts_per_amp: return " V/A";
    case SpecUnit::amps_per_amp: return " A/A";
    case SpecUnit::degrees: return " deg";
    case SpecUnit::hertz:
    case SpecUnit::volts:
    case SpecUnit::amps: return "";
    case SpecUnit::seconds:
    case SpecUnit::fraction: return "";
    case SpecUnit::ohms: return "";
  }
  return "";
}

}  // namespace

std::string format_spec_limit(const Spec& spec) {
  if (spec.kind == SpecKind::rails) return fmt::format("{}V inside", format_si(spec.margin));
  if (spec.kind == SpecKind::stable) return "< 0Hz";  // strictly: a pole on the axis fails
  if (spec.min && spec.max)
    return fmt::format("{} .. {}{}", bare(*spec.min, spec.unit), bare(*spec.max, spec.unit), unit_suffix(spec.unit));
  if (spec.min) return ">= " + bare(*spec.min, spec.unit) + unit_suffix(spec.unit);
  if (spec.max) return "<= " + bare(*spec.max, spec.unit) + unit_suffix(spec.unit);
  return "";
}

namespace {

std::string where_measured(const SpecResult& r) {
  if (!r.note.empty()) return r.note;
  switch (r.spec.kind) {
    case SpecKind::flatness: return fmt::format("worst at {}Hz, ref {}Hz", format_si(r.where), format_si(r.spec.ref));
    case SpecKind::deviation:
      return fmt::format("worst at {}Hz, ref {}Hz, target {}", format_si(r.where), format_si(r.spec.ref),
                         r.spec.target.text);
    case SpecKind::gain:
    case SpecKind::phase: return fmt::format("at {}Hz", format_si(r.where));
    case SpecKind::phase_margin: return fmt::format("{} at crossover {}Hz", r.spec.opamp, format_si(r.where));
    case SpecKind::gain_margin:
      return fmt::format("{} at phase crossover {}Hz", r.spec.opamp, format_si(r.where));
    case SpecKind::peaking: return fmt::format("peak at {}Hz, ref {}Hz", format_si(r.where), format_si(r.spec.ref));
    case SpecKind::impedance:
      return fmt::format("{} {}Hz", r.spec.at > 0 ? "at" : "largest at", format_si(r.where));
    default: return "";
  }
}

// A response spec measured from one source says which.
std::string where_text(const SpecResult& r) {
  std::string text = where_measured(r);
  if (r.spec.input.empty() || r.spec.kind == SpecKind::snr) return text;
  return fmt::format("from {}{}{}", r.spec.input, text.empty() ? "" : ": ", text);
}

}  // namespace

const Writers<CheckResult>& check_writers() {
  static const Writers<CheckResult> writers{
      {OutputFormat::table, check_table},
      {OutputFormat::json, check_json},
  };
  return writers;
}

std::string check_table(const CheckResult& result, const ReportContext& context) {
  using Align = Table::Align;
  // Names and words to the left, numbers to the right, the note last.
  Table table({"spec", "kind", "measured", "limit", "margin", "result", ""},
              {Align::left, Align::left, Align::right, Align::left, Align::right, Align::left, Align::left});
  for (const auto& r : result.specs) {
    table.add({r.spec.name, to_string(r.spec.kind), r.value ? format_spec_value(*r.value, r.spec.unit) : "-",
               format_spec_limit(r.spec), r.value ? format_spec_value(r.margin, r.spec.unit) : "-",
               r.pass ? "PASS" : "FAIL", where_text(r)});
  }
  std::string out = report_header(context) + "\n" + table.render();
  const int failed = result.failed();
  const int total = static_cast<int>(result.specs.size());
  out += fmt::format("\n{} spec{}: {} pass, {} fail{}\n", total, total == 1 ? "" : "s", total - failed, failed,
                     failed == 1 ? "s" : "");
  return out;
}

std::string check_json(const CheckResult& result, const ReportContext& context) {
  using json = json_output::Json;
  using json_output::number;
  json specs = json::array();
  for (const auto& r : result.specs) {
    json limit = {{"min", number(r.spec.min)}, {"max", number(r.spec.max)}};
    if (r.spec.kind == SpecKind::rails) limit = {{"margin", r.spec.margin}};
    specs.push_back({{"name", r.spec.name},
                     {"kind", to_string(r.spec.kind)},
                     {"pass", r.pass},
                     {"value", number(r.value)},
                     {"limit", limit},
                     {"margin", r.value ? number(r.margin) : json(nullptr)},
                     {"unit", to_string(r.spec.unit)},
                     {"note", r.note}});
  }
  json document = json_output::header("check", context);
  document["specs"] = specs;
  document["failed"] = result.failed();
  return json_output::text(document);
}

}  // namespace tacet
