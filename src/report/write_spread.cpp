#include "tacet/report/write_spread.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/json_output.hpp"
#include "tacet/report/plot.hpp"
#include "tacet/report/svg.hpp"
#include "tacet/report/text_table.hpp"
#include "tacet/report/write_check.hpp"

namespace tacet {

const Writers<SpreadResult>& spread_writers() {
  static const Writers<SpreadResult> writers{
      {OutputFormat::table, spread_table},
      {OutputFormat::csv, spread_csv},
      {OutputFormat::json, spread_json},
      {OutputFormat::svg, spread_svg},
  };
  return writers;
}

namespace {

/// The spec as check's formatters take it (rails: its margin is its minimum).
Spec as_spec(const SpreadSpec& s) {
  Spec spec;
  spec.name = s.name;
  spec.kind = s.kind;
  spec.unit = s.unit;
  spec.min = s.min;
  spec.max = s.max;
  if (s.kind == SpecKind::rails) spec.margin = s.min.value_or(0);
  return spec;
}

std::string value_text(double value, SpecUnit unit) {
  return std::isfinite(value) ? format_spec_value(value, unit) : "-";
}

std::string percent(double fraction) { return fmt::format("{:.2f} %", 100 * fraction); }

std::string interval(double low, double high) {
  return fmt::format("{:.2f} .. {:.2f} %", 100 * low, 100 * high);
}

double quantile(const SpreadSpecStats& s, double p) {
  for (const auto& q : s.quantiles)
    if (q.p == p) return q.value;
  return std::nan("");
}

std::string driver_text(const SpreadDriver& d) {
  // R1, U1.gbw, R1 ratio (its own draw inside a matched set), set RA (the set's common draw).
  const std::string who = d.param == "value" ? d.name
                          : d.param == "set" ? "set " + d.name
                          : d.param == "ratio" ? d.name + " ratio"
                                               : d.name + "." + d.param;
  return fmt::format("{} (r = {:+.2f})", who, d.correlation);
}

/// The failing specs, most failures first, with the parts that move them.
std::string failing_text(const SpreadResult& result) {
  std::vector<const SpreadSpecStats*> failing;
  for (const auto& s : result.specs)
    if (s.passed < result.runs) failing.push_back(&s);
  if (failing.empty()) return "\nno spec fails in any draw\n";
  std::stable_sort(failing.begin(), failing.end(),
                   [](const auto* a, const auto* b) { return a->passed < b->passed; });
  std::string out = "\nfails most:\n";
  for (const auto* s : failing) {
    out += fmt::format("  {}: fails in {} of {} draws", s->spec.name, result.runs - s->passed, result.runs);
    if (!s->drivers.empty()) {
      out += "; moved most by ";
      for (std::size_t k = 0; k < s->drivers.size(); ++k) out += (k ? ", " : "") + driver_text(s->drivers[k]);
    }
    out += "\n";
  }
  out += "  (r: correlation of a part's draw with the spec's value over the draws)\n";
  return out;
}

/// R1, U1.gbw, R1 ratio, set RA: what a corner pushed, as the drivers are named.
std::string component_name(const std::string& name, const std::string& param) {
  return param == "value" ? name : param == "set" ? "set " + name : param == "ratio" ? name + " ratio"
                                                                                   : name + "." + param;
}

std::string corner_driver_text(const CornerDriver& d) {
  return fmt::format("{} {:+g} %", component_name(d.name, d.param), 100 * d.deviation);
}

std::string linear_verdict(const SpecCorner& c) {
  if (!c.value) return "-";
  if (c.agrees) return "agrees";
  return (*c.value - c.nominal) * (c.predicted - c.nominal) <= 0 ? "differs: moved the other way"
                                                                  : "differs: not near-linear";
}

constexpr std::size_t kCornerDriversInTable = 3;

/// The corners, for people: one row per spec, then what each pushed.
std::string corners_text(const SpreadResult& result) {
  using Align = Table::Align;
  Table table({"spec", "toward", "nominal", "linear", "corner", "margin", "result", "linear vs full solve"},
              {Align::left, Align::left, Align::right, Align::right, Align::right, Align::right, Align::left,
               Align::left});
  std::string pushed, notes;
  bool differs = false;
  for (const auto& s : result.specs) {
    if (!s.corner) continue;
    const SpecCorner& c = *s.corner;
    const SpecUnit u = s.spec.unit;
    if (!c.computed) {
      table.add({c.spec, "-", "-", "-", "-", "-", "-", "-"});
      notes += fmt::format("  {}: no corner: {}\n", c.spec, c.note);
      continue;
    }
    table.add({c.spec, to_string(c.toward), format_spec_value(c.nominal, u), format_spec_value(c.predicted, u),
               c.value ? format_spec_value(*c.value, u) : "-", c.value ? format_spec_value(c.margin, u) : "-",
               c.pass ? "PASS" : "FAIL", linear_verdict(c)});
    differs = differs || (c.value && !c.agrees);
    if (!c.value) notes += fmt::format("  {}: not measured at the corner: {}\n", c.spec, c.note);
    pushed += fmt::format("  {}:", c.spec);
    for (std::size_t k = 0; k < c.drivers.size() && k < kCornerDriversInTable; ++k)
      pushed += (k ? ", " : " ") + corner_driver_text(c.drivers[k]);
    if (c.drivers.size() > kCornerDriversInTable)
      pushed += fmt::format(" and {} more", c.drivers.size() - kCornerDriversInTable);
    if (c.drivers.empty()) pushed += " nothing (no toleranced value moves it)";
    if (c.held > 0) pushed += fmt::format("; {} held at nominal (no first-order effect)", c.held);
    pushed += "\n";
  }
  std::string out =
      "\nworst corners (each toleranced value at the end that moves the spec toward its limit, by the signs "
      "of its sensitivities; measured by a full solve there):\n\n";
  out += table.render();
  out += "\npushed (largest first-order effect first):\n" + pushed + notes;
  if (differs)
    out += "  where the full solve differs from the linear prediction, the response is not near-linear over\n"
           "  the tolerances: the worst case may lie inside the tolerance box; read the Monte Carlo above\n";
  return out;
}

}  // namespace

std::string spread_table(const SpreadResult& result, const ReportContext& context) {
  using Align = Table::Align;
  Table table({"spec", "limit", "nominal", "mean", "sd", "min", "p5", "p95", "max", "yield", "95 % interval"},
              {Align::left, Align::left});
  for (const auto& s : result.specs) {
    const SpecUnit u = s.spec.unit;
    table.add({s.spec.name, format_spec_limit(as_spec(s.spec)),
               s.spec.nominal ? format_spec_value(*s.spec.nominal, u) : "-", value_text(s.mean, u),
               value_text(s.sd, u), value_text(s.min, u), value_text(quantile(s, 0.05), u),
               value_text(quantile(s, 0.95), u), value_text(s.max, u), percent(s.yield),
               interval(s.yield_low, s.yield_high)});
  }
  std::string out = report_header(context);
  out += fmt::format("\n{} draws, seed {}, {} value{} spread\n\n", result.runs, result.seed, result.parameters,
                     result.parameters == 1 ? "" : "s");
  out += table.render();
  out += fmt::format("\nyield (every spec at once): {} of {} draws, {} (95 % interval {})\n", result.passed,
                     result.runs, percent(result.yield), interval(result.yield_low, result.yield_high));
  if (result.parameters == 0)
    out += "no value has a tolerance: give parts tol= and models KEY_tol (docs/language.md)\n";
  out += failing_text(result);
  if (result.corners) out += corners_text(result);
  return out;
}

std::string spread_csv(const SpreadResult& result) {
  std::string out =
      "spec,kind,unit,nominal,mean,sd,min,p01,p05,p50,p95,p99,max,measured,passed,runs,yield,yield_low,"
      "yield_high\n";
  auto n = [](double v) { return std::isfinite(v) ? fmt::format("{}", v) : std::string(); };
  for (const auto& s : result.specs) {
    out += fmt::format("{},{},{},{},{},{},{}", s.spec.name, to_string(s.spec.kind), to_string(s.spec.unit),
                       s.spec.nominal ? n(*s.spec.nominal) : "", n(s.mean), n(s.sd), n(s.min));
    for (const double p : {0.01, 0.05, 0.5, 0.95, 0.99}) out += "," + n(quantile(s, p));
    out += fmt::format(",{},{},{},{},{},{},{}\n", n(s.max), s.measured, s.passed, result.runs, n(s.yield),
                       n(s.yield_low), n(s.yield_high));
  }
  return out;
}

namespace {

json_output::Json corner_json(const SpecCorner& c) {
  using json = json_output::Json;
  using json_output::number;
  if (!c.computed) return {{"value", nullptr}, {"note", c.note}};
  json drivers = json::array();
  for (std::size_t k = 0; k < c.drivers.size() && k < kCornerDriversShown; ++k) {
    const CornerDriver& d = c.drivers[k];
    drivers.push_back({{"name", d.name}, {"param", d.param}, {"sign", d.sign},
                       {"deviation", number(d.deviation)}, {"shift", number(d.shift)}});
  }
  json out = {{"toward", to_string(c.toward)},
              {"value", number(c.value)},
              {"margin", c.value ? number(c.margin) : json(nullptr)},
              {"pass", c.pass},
              {"predicted", number(c.predicted)},
              {"agrees", c.agrees},
              {"moved", c.moved},
              {"held", c.held},
              {"drivers", drivers}};
  if (!c.note.empty()) out["note"] = c.note;
  return out;
}

}  // namespace

std::string spread_json(const SpreadResult& result, const ReportContext& context) {
  using json = json_output::Json;
  using json_output::number;
  json specs = json::array();
  for (const auto& s : result.specs) {
    json quantiles = json::object();
    for (const auto& q : s.quantiles) quantiles[fmt::format("p{:02.0f}", 100 * q.p)] = number(q.value);
    json drivers = json::array();
    for (const auto& d : s.drivers)
      drivers.push_back({{"name", d.name}, {"param", d.param}, {"correlation", number(d.correlation)}});
    specs.push_back({{"name", s.spec.name},
                     {"kind", to_string(s.spec.kind)},
                     {"unit", to_string(s.spec.unit)},
                     {"nominal", number(s.spec.nominal)},
                     {"mean", number(s.mean)},
                     {"sd", number(s.sd)},
                     {"min", number(s.min)},
                     {"max", number(s.max)},
                     {"yield", s.yield},
                     {"yield_low", s.yield_low},
                     {"yield_high", s.yield_high},
                     {"limit", {{"min", number(s.spec.min)}, {"max", number(s.spec.max)}}},
                     {"measured", s.measured},
                     {"failed", result.runs - s.passed},
                     {"quantiles", quantiles},
                     {"drivers", drivers}});
    if (s.corner) specs.back()["corner"] = corner_json(*s.corner);
  }
  json document = json_output::header("spread", context);
  document["runs"] = result.runs;
  document["seed"] = result.seed;
  document["yield"] = result.yield;
  document["yield_low"] = result.yield_low;
  document["yield_high"] = result.yield_high;
  document["netlist_hash"] = result.netlist_hash;
  document["parameters"] = result.parameters;
  document["specs"] = specs;
  if (result.corners) {
    std::size_t failed = 0;
    for (const auto& s : result.specs) failed += s.corner && s.corner->computed && !s.corner->pass ? 1 : 0;
    document["corners_failed"] = failed;
  }
  return json_output::text(document);
}

namespace {

plot::Figure spec_histogram(const SpreadSpecStats& s, std::size_t index, const ReportContext& context,
                            std::int64_t runs) {
  std::vector<plot::VerticalLine> limits;
  if (s.spec.min) limits.push_back({*s.spec.min, "min " + format_spec_value(*s.spec.min, s.spec.unit)});
  if (s.spec.max) limits.push_back({*s.spec.max, "max " + format_spec_value(*s.spec.max, s.spec.unit)});
  plot::Axis x(s.spec.name, to_string(s.spec.unit));
  x.si_labels = s.spec.unit == SpecUnit::hertz || s.spec.unit == SpecUnit::volts;
  plot::Figure figure = plot::histogram(
      fmt::format("{} ({}): yield {:.2f} % of {} draws", s.spec.name, to_string(s.spec.kind), 100 * s.yield, runs),
      std::move(x), s.values, std::move(limits));
  figure.subtitle = fmt::format("{}: 95 % interval {:.2f} .. {:.2f} %", context.file, 100 * s.yield_low,
                                100 * s.yield_high);
  figure.id = fmt::format("spread-{}", index);
  figure.panel_height = 170;
  return figure;
}

/// The height attribute of a rendered <svg> element.
double rendered_height(const std::string& svg_element) {
  const auto at = svg_element.find("height=\"");
  return at == std::string::npos ? 0 : std::stod(svg_element.substr(at + 8));
}

}  // namespace

std::string spread_svg(const SpreadResult& result, const ReportContext& context) {
  // One figure per spec, stacked: each is a nested <svg> placed by its y.
  std::string body;
  double top = 0, width = 720;
  for (std::size_t k = 0; k < result.specs.size(); ++k) {
    const plot::Figure figure = spec_histogram(result.specs[k], k, context, result.runs);
    std::string element = plot::render(figure);
    const double height = rendered_height(element);
    element.insert(4, fmt::format(" x=\"0\" y=\"{}\"", top));  // after "<svg"
    body += element;
    top += height;
    width = figure.width;
  }
  const std::string label = fmt::format("spread of {} specs over {} draws", result.specs.size(), result.runs);
  return std::string(svg::kXmlDeclaration) +
         fmt::format("<svg xmlns=\"{}\" version=\"1.1\" viewBox=\"0 0 {} {}\" width=\"{}\" height=\"{}\" "
                     "role=\"img\" aria-label=\"{}\">\n<title>{}</title>\n",
                     svg::kNamespace, width, top, width, top, svg::escape(label), svg::escape(label)) +
         body + "</svg>\n";
}

}  // namespace tacet
