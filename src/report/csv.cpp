#include "tacet/report/csv.hpp"

#include <cmath>

#include "tacet/common/format.hpp"

namespace tacet {

std::string csv_field(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string out = "\"";
  for (char c : text) {
    if (c == '"') out += '"';  // a quote inside a quoted field is doubled
    out += c;
  }
  return out + "\"";
}

std::string csv_number(double value) {
  return std::isfinite(value) ? format_exact(value) : std::string();
}

}  // namespace tacet
