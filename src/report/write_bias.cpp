#include "tacet/report/write_bias.hpp"

#include <algorithm>
#include <cmath>
#include <optional>

#include <fmt/format.h>
#include "tacet/report/json_output.hpp"

#include "tacet/common/format.hpp"
#include "tacet/report/text_table.hpp"

namespace tacet {

namespace {

using json = json_output::Json;
using json_output::number;

// --- table --------------------------------------------------------------------

std::string cell(double v) { return std::isfinite(v) ? format_si_fixed(v) : std::string("-"); }

std::string ok_cell(bool checked, bool ok) { return !checked ? "-" : ok ? "yes" : "NO"; }

// "U1 vos x10: 4mV", "U2 ib through Rf2: 900uV" (or "x9kohm" when no resistor carries it).
std::string contribution(const OffsetContribution& c) {
  const std::string how = !c.through.empty() ? "through " + c.through
                          : c.kind == DcErrorKind::vos ? "x" + format_si(c.gain, 3)
                                                       : "x" + format_si(c.gain, 3) + "ohm";
  return fmt::format("{} {} {}: {}V", c.opamp, to_string(c.kind), how, format_si(c.volts, 3));
}

std::string largest_cell(const std::vector<OffsetContribution>& largest) {
  std::string out;
  for (const auto& c : largest) out += (out.empty() ? "" : ", ") + contribution(c);
  return out.empty() ? "-" : out;
}

std::string lines(const std::vector<std::string>& messages, const char* prefix) {
  std::string out;
  for (const auto& m : messages) out += prefix + m + "\n";
  return out;
}

// Empty cells of the pin rows would leave blanks at the ends of lines.
std::string without_trailing_spaces(const std::string& text) {
  std::string out;
  std::size_t start = 0;
  while (start < text.size()) {
    std::size_t end = text.find('\n', start);
    if (end == std::string::npos) end = text.size();
    std::size_t last = text.find_last_not_of(' ', end == start ? start : end - 1);
    out += text.substr(start, last == std::string::npos || last < start ? 0 : last + 1 - start) + "\n";
    start = end + 1;
  }
  return out;
}

std::string opamp_table(const BiasResult& bias) {
  Table table({"op amp", "output", "nominal [V]", "low [V]", "high [V]", "limit low [V]",
               "limit high [V]", "ok", "largest offsets (worst case)"});
  for (const auto& a : bias.opamps)
    table.add({a.name, a.out, cell(a.nominal), cell(a.low), cell(a.high), cell(a.limit_low),
               cell(a.limit_high), ok_cell(a.ok.has_value(), a.ok.value_or(false)), largest_cell(a.largest)});
  return table.render();
}

std::string node_table(const BiasResult& bias) {
  Table table({"node", "nominal [V]", "worst [V]", "rss [V]"});
  for (const auto& n : bias.nodes)
    table.add({n.name, cell(n.nominal), fmt::format("+-{}", cell(n.worst)), cell(n.rss)});
  return table.render();
}

std::string level_text(const LevelSource& s) {
  return fmt::format("{} at {}V peak ({}V rms)", s.name, format_si(s.peak), format_si(s.rms));
}

std::string headroom_table(const HeadroomResult& h) {
  Table table({"op amp", "pin", "node", "peak [V]", "low [V]", "high [V]", "limit low [V]",
               "limit high [V]", "margin [V]", "at [Hz]", "ok", "slew need [V/us]",
               "at [Hz]", "slew [V/us]"});
  auto row = [&](const OpAmpHeadroom& a, const char* pin, const PinHeadroom& p, bool output) {
    std::string need = output ? cell(a.slew.needed * 1e-6) : "";
    std::string need_at = output ? cell(a.slew.frequency) : "";
    std::string slew = !output ? "" : a.slew.available > 0 ? cell(a.slew.available * 1e-6) : "-";
    table.add({output ? a.name : "", pin, p.node, cell(p.signal_peak), cell(p.low), cell(p.high),
               cell(p.limit_low), cell(p.limit_high), cell(p.margin), cell(p.frequency),
               ok_cell(a.has_rails, p.ok()), need, need_at, slew});
  };
  for (const auto& a : h.opamps) {
    row(a, "out", a.out, true);
    row(a, "+in", a.plus, false);
    row(a, "-in", a.minus, false);
  }
  return without_trailing_spaces(table.render());
}

// Output current at the level: only where some model gives iout_max (a
// current without its limit is in the JSON).
std::string current_table(const HeadroomResult& h) {
  const bool any = std::any_of(h.opamps.begin(), h.opamps.end(),
                               [](const OpAmpHeadroom& a) { return a.current.available > 0; });
  if (!any) return {};
  Table table({"op amp", "output current peak [A]", "at [Hz]", "iout_max [A]", "ok"});
  for (const auto& a : h.opamps)
    table.add({a.name, cell(a.current.needed), cell(a.current.frequency),
               a.current.available > 0 ? cell(a.current.available) : "-",
               ok_cell(a.current.available > 0, a.current.ok())});
  return "\n" + table.render();
}

std::string ripple_section(const HeadroomResult& h) {
  if (h.ripple_at.empty()) return {};
  Table table({"op amp", "output", "ripple peak [V]"});
  for (const auto& r : h.ripple_at) table.add({r.opamp, r.node, cell(r.peak)});
  return fmt::format("Supply ripple {}V peak at {}Hz, through each model's psrr, at the outputs\n\n",
                     format_si(h.ripple), format_si(h.ripple_hz)) +
         table.render() + "\n";
}

std::string headroom_section(const HeadroomResult& h) {
  if (h.sources.empty())
    return "Headroom: no source declares level= (e.g. vsrc Vin (in, gnd) level=2Vrms "
           "band_low=20Hz band_high=20kHz)\n";
  std::string levels;
  for (const auto& s : h.sources) levels += (levels.empty() ? "" : ", ") + level_text(s);
  return fmt::format(
             "Headroom at {}, {}Hz to {}Hz: signal peak plus the DC band against the limits; "
             "margin and slew at the worst frequency\n\n",
             levels, format_si(h.band_low), format_si(h.band_high)) +
         headroom_table(h) + current_table(h) +
         (h.warnings.empty() ? "" : "\n" + lines(h.warnings, "warning: "));
}

// The temperatures the band covers, when they are a range.
std::string range_line(const BiasResult& bias) {
  if (bias.range.low == bias.range.high) return {};
  return fmt::format("Ambient range {}C..{}C: vos with its drift, ib_max and ios scaled to the "
                     "range's worst\n",
                     format_si(bias.range.low), format_si(bias.range.high));
}

// --- json ---------------------------------------------------------------------

json ok_json(std::optional<bool> ok) { return ok ? json(*ok) : json(nullptr); }

json opamp_json(const OpAmpBias& a) {
  json largest = json::array();
  for (const auto& c : a.largest)
    largest.push_back({{"opamp", c.opamp}, {"kind", to_string(c.kind)}, {"gain", number(c.gain)},
                       {"volts", number(c.volts)},
                       {"through", c.through.empty() ? json(nullptr) : json(c.through)}});
  return {{"name", a.name},           {"out", a.out},
          {"nominal", number(a.nominal)}, {"low", number(a.low)},
          {"high", number(a.high)},       {"limit_low", number(a.limit_low)},
          {"limit_high", number(a.limit_high)}, {"ok", ok_json(a.ok)},
          {"largest", largest}};
}

json pin_json(const PinHeadroom& p, bool checked) {
  return {{"node", p.node},
          {"peak", number(p.signal_peak)},
          {"low", number(p.low)},
          {"high", number(p.high)},
          {"limit_low", number(p.limit_low)},
          {"limit_high", number(p.limit_high)},
          {"margin", number(p.margin)},
          {"f", number(p.frequency)},
          {"ok", checked ? json(p.ok()) : json(nullptr)}};
}

json headroom_json(const HeadroomResult& h) {
  json sources = json::array();
  for (const auto& s : h.sources)
    sources.push_back({{"name", s.name}, {"peak", number(s.peak)}, {"rms", number(s.rms)},
                       {"hazardous", s.hazardous}});
  json opamps = json::array();
  for (const auto& a : h.opamps) {
    const json slew = {{"needed", number(a.slew.needed)},
                       {"available", a.slew.available > 0 ? number(a.slew.available) : json(nullptr)},
                       {"f", number(a.slew.frequency)},
                       {"ok", a.slew.available > 0 ? json(a.slew.ok()) : json(nullptr)}};
    const json current = {
        {"needed", number(a.current.needed)},
        {"available", a.current.available > 0 ? number(a.current.available) : json(nullptr)},
        {"f", number(a.current.frequency)},
        {"ok", a.current.available > 0 ? json(a.current.ok()) : json(nullptr)}};
    opamps.push_back({{"name", a.name},
                      {"out", pin_json(a.out, a.has_rails)},
                      {"plus", pin_json(a.plus, a.has_rails)},
                      {"minus", pin_json(a.minus, a.has_rails)},
                      {"slew", slew},
                      {"iout", current}});
  }
  json band = h.sources.empty() ? json(nullptr)
                                : json{{"from", number(h.band_low)}, {"to", number(h.band_high)}};
  json out = {{"sources", sources}, {"band", band},          {"opamps", opamps},
              {"warnings", h.warnings}, {"cautions", h.cautions}};
  if (!h.ripple_at.empty()) {
    json at = json::array();
    for (const auto& r : h.ripple_at)
      at.push_back({{"opamp", r.opamp}, {"node", r.node}, {"peak", number(r.peak)}});
    out["ripple"] = {{"peak", number(h.ripple)}, {"f", number(h.ripple_hz)}, {"outputs", at}};
  }
  return out;
}

}  // namespace

const Writers<BiasReport>& bias_writers() {
  static const Writers<BiasReport> writers{
      {OutputFormat::table, bias_table},
      {OutputFormat::csv, bias_csv},
      {OutputFormat::json, bias_json},
  };
  return writers;
}

std::string bias_table(const BiasReport& report, const ReportContext& context) {
  const BiasResult& bias = report.bias;
  const HeadroomResult& headroom = report.headroom;
  std::string out = report_header(context);
  out += lines(headroom.cautions, "");
  out += "DC operating point (capacitors open, inductors shorted); low and high bound each "
         "output over every sign of vos, ios and ib_max\n\n";
  out += opamp_table(bias);
  out += bias.warnings.empty() ? "" : "\n" + lines(bias.warnings, "warning: ");
  out += "\n" + ripple_section(headroom) + headroom_section(headroom);
  out += "\nNodes: nominal with each model's ib flowing (typical, not a limit), worst-case band "
         "over every sign of vos, ios and ib_max at their limits, root-sum-square\n";
  out += range_line(bias) + "\n";
  return out + node_table(bias);
}

std::string bias_csv(const BiasReport& report) {
  std::string out = "node,nominal,worst,rss\n";
  for (const auto& n : report.bias.nodes)
    out += fmt::format("{},{},{},{}\n", n.name, format_exact(n.nominal), format_exact(n.worst),
                       format_exact(n.rss));
  return out;
}

std::string bias_json(const BiasReport& report, const ReportContext& context) {
  const BiasResult& bias = report.bias;
  json document = json_output::header("bias", context);
  json nodes = json::object(), offset = json::object(), opamps = json::array();
  for (const auto& n : bias.nodes) {
    nodes[n.name] = number(n.nominal);
    offset[n.name] = {{"worst", number(n.worst)}, {"rss", number(n.rss)}};
  }
  for (const auto& a : bias.opamps) opamps.push_back(opamp_json(a));
  if (bias.range.low != bias.range.high)
    document["ambient_range"] = {{"low", number(bias.range.low)}, {"high", number(bias.range.high)}};
  document["nodes"] = nodes;
  document["offset"] = offset;
  document["opamps"] = opamps;
  document["warnings"] = bias.warnings;
  document["headroom"] = headroom_json(report.headroom);
  return json_output::text(document);
}

}  // namespace tacet
