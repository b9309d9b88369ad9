#pragma once
// The aligned plain-text table every table writer uses: columns sized to their
// widest cell (counted in UTF-8 code points), two spaces apart.

#include <algorithm>
#include <string>
#include <vector>

#include "tacet/language/source.hpp"

namespace tacet {

/// Columns sized to their widest cell, two spaces apart; right-aligned unless
/// told otherwise, for the whole table or column by column.
class Table {
 public:
  enum class Align { right, left };
  explicit Table(std::vector<std::string> header, Align align = Align::right)
      : rows_{std::move(header)}, align_(rows_.front().size(), align) {}
  Table(std::vector<std::string> header, std::vector<Align> columns)
      : rows_{std::move(header)}, align_(std::move(columns)) {
    align_.resize(rows_.front().size(), Align::right);
  }
  void add(std::vector<std::string> row) { rows_.push_back(std::move(row)); }
  std::string render() const {
    std::vector<std::size_t> width(rows_.front().size(), 0);
    for (const auto& row : rows_)
      for (std::size_t c = 0; c < row.size(); ++c) width[c] = std::max(width[c], display_width(row[c]));
    std::string out;
    for (const auto& row : rows_) {
      std::string line;
      for (std::size_t c = 0; c < row.size(); ++c) {
        std::string pad(width[c] - display_width(row[c]), ' ');
        if (c) line += "  ";
        line += align_[c] == Align::right ? pad + row[c] : row[c] + (c + 1 < row.size() ? pad : "");
      }
      while (!line.empty() && line.back() == ' ') line.pop_back();
      out += line + "\n";
    }
    return out;
  }

 private:
  static std::size_t display_width(const std::string& s) { return code_points(s); }
  std::vector<std::vector<std::string>> rows_;
  std::vector<Align> align_;
};

}  // namespace tacet
