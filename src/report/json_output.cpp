#include "tacet/report/json_output.hpp"

#include <cmath>

namespace tacet::json_output {

Json number(double value) { return std::isfinite(value) ? Json(value) : Json(nullptr); }

Json number(std::optional<double> value) { return value ? number(*value) : Json(nullptr); }

Json header(const char* analysis, const ReportContext& context) {
  return Json{{"analysis", analysis}, {"file", context.file}, {"title", context.title}};
}

std::string text(const Json& document) {
  return document.dump(1, ' ', false, Json::error_handler_t::strict) + "\n";
}

}  // namespace tacet::json_output
