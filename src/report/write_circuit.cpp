#include "tacet/report/write_circuit.hpp"

#include <fmt/format.h>

#include "tacet/circuit/circuit_text.hpp"
#include "tacet/common/format.hpp"
#include "tacet/report/text_table.hpp"

namespace tacet {

std::string circuit_listing(const Circuit& c, const ReportContext& context) {
  std::string out = report_header(context);
  out += fmt::format("{} nodes besides gnd, {} elements, ambient {}C", c.node_count() - 1,
                     c.elements.size(), format_si(c.ambient_celsius, 6));
  if (c.ambient_range)
    out += fmt::format(" (offsets over {}C..{}C)", format_si(c.ambient_range->low, 6),
                       format_si(c.ambient_range->high, 6));
  if (c.supply) out += fmt::format(", supply {}V {}V", format_si(c.supply->high, 6), format_si(c.supply->low, 6));
  if (c.supply && c.supply_ripple > 0)
    out += fmt::format(" ripple {}V at {}Hz", format_si(c.supply_ripple, 6),
                       format_si(c.supply_ripple_hz, 6));
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
