#include "tacet/write_table.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "tacet/format.hpp"
#include "tacet/text_table.hpp"

namespace tacet {

namespace {

std::string db_cell(std::complex<double> z) {
  double db = to_db(z);
  return std::isfinite(db) ? fmt::format("{:.4f}", db) : std::string("-inf");
}


std::string sweep_line(const AcResult& result) {
  const auto& f = result.frequencies;
  if (f.empty()) return "no frequencies\n";
  bool currents = std::any_of(result.traces.begin(), result.traces.end(),
                              [](const AcTrace& t) { return t.probe.kind == ProbeKind::current; });
  return fmt::format("AC response, {} point{} from {}Hz to {}Hz; dB re 1 V{} (a gain when the source has ac=1)\n",
                     f.size(), f.size() == 1 ? "" : "s", format_si(f.front()), format_si(f.back()),
                     currents ? " or 1 A" : "");
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


std::string connection_list(const Circuit& c, const Element& e) {
  auto name = [&](int n) { return c.node_names[static_cast<std::size_t>(n)]; };
  switch (e.kind) {
    case ElementKind::opamp:
      return fmt::format("(+{}, -{}, {})", name(e.nodes[0]), name(e.nodes[1]), name(e.nodes[2]));
    case ElementKind::vcvs:
    case ElementKind::vccs:
      return fmt::format("({}, {}; {}, {})", name(e.nodes[0]), name(e.nodes[1]), name(e.nodes[2]),
                         name(e.nodes[3]));
    default: return fmt::format("({}, {})", name(e.nodes[0]), name(e.nodes[1]));
  }
}

std::string element_value(const Circuit& c, const Element& e) {
  std::string out;
  switch (e.kind) {
    case ElementKind::resistor: out = format_si(e.value, 6) + "ohm"; break;
    case ElementKind::capacitor: out = format_si(e.value, 6) + "F"; break;
    case ElementKind::inductor: out = format_si(e.value, 6) + "H"; break;
    case ElementKind::vcvs: out = "gain=" + format_si(e.value, 6); break;
    case ElementKind::vccs: out = "gm=" + format_si(e.value, 6) + "S"; break;
    case ElementKind::opamp: out = c.models[static_cast<std::size_t>(e.model)].name; break;
    case ElementKind::vsource:
    case ElementKind::isource: {
      const char* unit = e.kind == ElementKind::vsource ? "V" : "A";
      out = fmt::format("dc={}{} ac={}{}", format_si(e.dc, 6), unit, format_si(e.ac_magnitude, 6), unit);
      if (e.ac_phase != 0) out += fmt::format(" phase={}deg", format_si(e.ac_phase, 6));
      break;
    }
  }
  if (e.tolerance > 0) out += fmt::format(" tol={:g}%", e.tolerance * 100);
  if (e.rails) out += fmt::format(" rails={:+g}/{:+g}", e.rails->high, e.rails->low);
  if (e.noiseless) out += " noiseless";
  return out;
}

std::string model_line(const OpAmpModel& m) {
  std::string out = fmt::format("model {} opamp {{ gbw {}Hz aol {:.6g}dB", m.name, format_si(m.gbw, 6),
                                20 * std::log10(m.aol));
  auto add = [&](const char* key, double v, const char* unit) {
    if (v != 0) out += fmt::format(" {} {}{}", key, format_si(v, 6), unit);
  };
  add("fp2", m.fp2, "Hz");
  add("rout", m.rout, "ohm");
  add("rin", m.rin, "ohm");
  add("en", m.en, "V/rtHz");
  add("fce", m.fce, "Hz");
  add("in", m.in, "A/rtHz");
  add("fci", m.fci, "Hz");
  add("vos", m.vos, "V");
  add("ib", m.ib, "A");
  add("ios", m.ios, "A");
  add("swing", m.swing, "V");
  if (m.slew != 0) out += fmt::format(" slew {:g}V/us", m.slew * 1e-6);
  if (m.vcm_low) out += fmt::format(" vcm_low {}V", format_si(*m.vcm_low, 6));
  if (m.vcm_high) out += fmt::format(" vcm_high {}V", format_si(*m.vcm_high, 6));
  return out + " }\n";
}


std::string circuit_listing(const Circuit& c, const ReportContext& context) {
  std::string out = report_header(context);
  out += fmt::format("{} nodes besides gnd, {} elements, ambient {}C", c.node_count() - 1,
                     c.elements.size(), format_si(c.ambient_celsius, 6));
  if (c.supply) out += fmt::format(", supply {}V {}V", format_si(c.supply->high, 6), format_si(c.supply->low, 6));
  out += "\n\n";
  Table table({"kind", "name", "connections", "value"}, Table::Align::left);
  for (const auto& e : c.elements) table.add({to_keyword(e.kind), e.name, connection_list(c, e), element_value(c, e)});
  out += table.render();
  std::vector<bool> used(c.models.size(), false);
  for (const auto& e : c.elements)
    if (e.kind == ElementKind::opamp) used[static_cast<std::size_t>(e.model)] = true;
  bool any = std::find(used.begin(), used.end(), true) != used.end();
  if (any) out += "\n";
  for (std::size_t i = 0; i < c.models.size(); ++i)
    if (used[i]) out += model_line(c.models[i]);
  return out;
}

}  // namespace tacet
