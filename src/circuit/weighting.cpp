#include "tacet/circuit/weighting.hpp"

namespace tacet {

const char* to_string(Weighting weighting) {
  switch (weighting) {
    case Weighting::none: return "none";
    case Weighting::a: return "a";
    case Weighting::itu468: return "itu468";
  }
  return "?";
}

std::optional<Weighting> parse_weighting(std::string_view text) {
  for (auto w : {Weighting::a, Weighting::itu468})
    if (text == to_string(w)) return w;
  return std::nullopt;
}

const std::vector<std::string>& weighting_names() {
  static const std::vector<std::string> names{to_string(Weighting::a),
                                              to_string(Weighting::itu468)};
  return names;
}

}  // namespace tacet
