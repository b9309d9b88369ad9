#include "tacet/report/write_rank.hpp"

#include <fmt/format.h>

#include "tacet/report/json_output.hpp"
#include "tacet/report/text_table.hpp"

namespace tacet {

const Writers<RankResult>& rank_writers() {
  static const Writers<RankResult> writers{
      {OutputFormat::table, rank_table},
      {OutputFormat::json, rank_json},
  };
  return writers;
}

std::string rank_table(const RankResult& result, const ReportContext& context) {
  using Align = Table::Align;
  std::vector<std::string> header{"rank"};
  std::vector<Align> align{Align::right};
  for (const auto& slot : result.slots) header.push_back(slot), align.push_back(Align::left);
  for (const char* column : {"result", "failing", "worst spec", "worst margin"}) header.push_back(column);
  align.insert(align.end(), {Align::left, Align::right, Align::left, Align::right});
  Table table(header, align);
  std::size_t passing = 0;
  for (std::size_t k = 0; k < result.rows.size(); ++k) {
    const RankRow& row = result.rows[k];
    std::vector<std::string> cells{std::to_string(k + 1)};
    for (const auto& [slot, model] : row.slots) cells.push_back(model);
    cells.push_back(row.pass ? "PASS" : "FAIL");
    cells.push_back(fmt::format("{} of {}", row.failed, result.specs));
    cells.push_back(row.worst_spec);
    cells.push_back(row.worst_margin ? fmt::format("{:+.2f} %", 100 * *row.worst_margin) : "-");
    table.add(std::move(cells));
    passing += row.pass;
  }
  std::string out = report_header(context) + "\n";
  out += passing > 0 ? fmt::format("{} of {} variants pass every spec here, best first:\n\n", passing, result.rows.size())
                     : fmt::format("no variant of the {} tried passes every spec; the nearest first:\n\n",
                                   result.rows.size());
  out += table.render();
  out += "\nworst margin: the smallest margin of any spec, relative to the limit it nears\n";
  return out;
}

std::string rank_json(const RankResult& result, const ReportContext& context) {
  using json = json_output::Json;
  json rows = json::array();
  for (const RankRow& row : result.rows) {
    json slots = json::object();
    for (const auto& [slot, model] : row.slots) slots[slot] = model;
    rows.push_back({{"slots", slots},
                    {"pass", row.pass},
                    {"failed", row.failed},
                    {"worst_spec", row.worst_spec},
                    {"worst_margin", json_output::number(row.worst_margin)}});
  }
  json document = json_output::header("rank", context);
  document["rows"] = rows;
  return json_output::text(document);
}

}  // namespace tacet
