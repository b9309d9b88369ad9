#include "tacet/report/write_diff.hpp"

#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/json_output.hpp"
#include "tacet/report/write_check.hpp"

namespace tacet {

namespace {

std::string side_line(const char* label, const ReportContext& side) {
  return fmt::format("{} {}{}\n", label, side.file, side.title.empty() ? "" : "  (" + side.title + ")");
}

std::string verdict(const std::optional<SpecResult>& r) {
  if (!r) return "-";
  return fmt::format("{} {}", r->value ? format_spec_value(*r->value, r->spec.unit) : "-", r->pass ? "PASS" : "FAIL");
}

}  // namespace

const Writers<DiffResult, DiffContext>& diff_writers() {
  static const Writers<DiffResult, DiffContext> writers{
      {OutputFormat::table, diff_table},
      {OutputFormat::json, diff_json},
  };
  return writers;
}

std::string diff_table(const DiffResult& result, const DiffContext& context) {
  std::string out = side_line("old:", context.old_side) + side_line("new:", context.new_side);
  out += "\ncircuit:\n";
  if (result.circuit.empty()) out += "  no change\n";
  for (const auto& c : result.circuit) {
    switch (c.kind) {
      case ChangeKind::added: out += fmt::format("  + {} {}: {}\n", c.what, c.name, c.after); break;
      case ChangeKind::removed: out += fmt::format("  - {} {}: {}\n", c.what, c.name, c.before); break;
      case ChangeKind::changed:
        out += fmt::format("  ~ {} {}: {}\n  {}  -> {}\n", c.what, c.name, c.before,
                           std::string(c.what.size() + c.name.size() + 1, ' '), c.after);
        break;
    }
  }
  if (!result.probes.empty()) {
    const auto& f = result.new_response.frequencies;
    out += fmt::format("\nresponse, {} points from {}Hz to {}Hz (largest change, new minus old):\n", f.size(),
                       format_si(f.front()), format_si(f.back()));
    for (const auto& p : result.probes)
      if (p.max_db_change == 0 && p.max_deg_change == 0)
        out += fmt::format("  {}: no change\n", p.probe);
      else
        out += fmt::format("  {}: {:+.4f} dB at {}Hz, {:+.2f} deg at {}Hz\n", p.probe, p.max_db_change,
                         format_si(p.db_at), p.max_deg_change, format_si(p.deg_at));
  }
  for (const auto& n : result.noise) {
    if (std::abs(n.new_rms - n.old_rms) <= 1e-12 * n.old_rms) {
      out += fmt::format("\nnoise at {}: {}V rms, no change\n", n.probe, format_si(n.new_rms));
      continue;
    }
    out += fmt::format("\nnoise at {}: {}V rms -> {}V rms ({:+.2f} dB)\n", n.probe, format_si(n.old_rms),
                       format_si(n.new_rms), 20 * std::log10(n.new_rms / n.old_rms));
    for (const auto& c : n.top)
      out += fmt::format("  {} {}: {}V -> {}V\n", c.source, to_string(c.mechanism), format_si(c.old_rms),
                         format_si(c.new_rms));
  }
  if (!result.dc_note.empty()) {
    out += "\nDC: not compared (" + result.dc_note + ")\n";
  } else if (!result.dc.empty()) {
    constexpr std::size_t kShown = 10;
    out += "\nDC nodes that moved (nominal, worst-case band):\n";
    for (std::size_t i = 0; i < result.dc.size() && i < kShown; ++i) {
      const auto& d = result.dc[i];
      out += fmt::format("  {}: {}V +-{}V -> {}V +-{}V\n", d.node, format_si(d.old_nominal), format_si(d.old_worst),
                         format_si(d.new_nominal), format_si(d.new_worst));
    }
    if (result.dc.size() > kShown) out += fmt::format("  and {} more\n", result.dc.size() - kShown);
  }
  if (!result.specs.empty()) {
    out += "\nspecs that moved:\n";
    for (const auto& s : result.specs) out += fmt::format("  {}: {}  ->  {}\n", s.name, verdict(s.before), verdict(s.after));
  }
  return out;
}

std::string diff_json(const DiffResult& result, const DiffContext& context) {
  using json = json_output::Json;
  using json_output::number;
  auto side = [](const ReportContext& c) { return json{{"file", c.file}, {"title", c.title}}; };
  auto spec = [&](const std::optional<SpecResult>& r) -> json {
    if (!r) return nullptr;
    return {{"pass", r->pass}, {"value", number(r->value)},
            {"margin", r->value ? number(r->margin) : json(nullptr)}, {"unit", to_string(r->spec.unit)}};
  };
  json circuit = json::array(), probes = json::array(), specs = json::array();
  for (const auto& c : result.circuit)
    circuit.push_back({{"change", to_string(c.kind)}, {"what", c.what}, {"name", c.name},
                       {"before", c.before}, {"after", c.after}});
  for (const auto& p : result.probes)
    probes.push_back({{"probe", p.probe}, {"max_db_change", number(p.max_db_change)}, {"db_at", number(p.db_at)},
                      {"max_deg_change", number(p.max_deg_change)}, {"deg_at", number(p.deg_at)}});
  for (const auto& s : result.specs) specs.push_back({{"name", s.name}, {"before", spec(s.before)}, {"after", spec(s.after)}});
  json noise = json::array(), dc = json::array();
  for (const auto& n : result.noise) {
    json top = json::array();
    for (const auto& c : n.top)
      top.push_back({{"source", c.source}, {"mechanism", to_string(c.mechanism)}, {"old_rms", number(c.old_rms)},
                     {"new_rms", number(c.new_rms)}});
    noise.push_back({{"probe", n.probe}, {"old_rms", number(n.old_rms)}, {"new_rms", number(n.new_rms)},
                     {"contributors", top}});
  }
  for (const auto& d : result.dc)
    dc.push_back({{"node", d.node}, {"old_nominal", number(d.old_nominal)}, {"new_nominal", number(d.new_nominal)},
                  {"old_worst", number(d.old_worst)}, {"new_worst", number(d.new_worst)}});
  json document = {{"analysis", "diff"}, {"old", side(context.old_side)}, {"new", side(context.new_side)},
                   {"circuit", circuit}, {"probes", probes}, {"noise", noise}, {"dc", dc},
                   {"dc_note", result.dc_note}, {"specs", specs}};
  return json_output::text(document);
}

}  // namespace tacet
