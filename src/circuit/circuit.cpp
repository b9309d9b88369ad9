// The small lookups of the flat circuit.

#include "tacet/circuit/circuit.hpp"
#include "tacet/common/constants.hpp"

#include <cmath>

namespace tacet {

std::string ambient_problem(double celsius) {
  if (!(celsius > kColdestCelsius)) return "temperature at or below absolute zero";
  if (!(celsius <= kHottestCelsius))
    return "temperature above 1000 C (1273.15 K), beyond anything tacet models";
  return {};
}

std::complex<double> Element::ac_phasor() const {
  constexpr double kRadiansPerDegree = 1.0 / kDegreesPerRadian;
  // Not std::polar: a negative magnitude (an inverted source) is allowed here.
  const double angle = ac_phase * kRadiansPerDegree;
  return ac_magnitude * std::complex<double>(std::cos(angle), std::sin(angle));
}

NameIndex Circuit::gnd_only() {
  NameIndex index;
  index.insert("gnd", 0, [](int) { return std::string_view(); });
  return index;
}

int Circuit::node(const std::string& name, SourceLocation where) {
  const auto [id, added] = node_ids_.insert(name, static_cast<int>(node_names.size()),
                                            [&](int i) -> const std::string& { return node_names[static_cast<std::size_t>(i)]; });
  if (added) {
    node_names.push_back(name);
    node_where.resize(node_names.size());
    node_where.back() = where;
  }
  return id;
}

void Circuit::reserve_nodes(std::size_t count) {
  node_ids_.reserve(count);
  node_names.reserve(count);
  node_where.reserve(count);
}

std::optional<int> Circuit::find_node(const std::string& name) const {
  const int id = node_ids_.find(name, [&](int i) -> const std::string& { return node_names[static_cast<std::size_t>(i)]; });
  if (id < 0) return std::nullopt;
  return id;
}

std::optional<std::size_t> Circuit::find_element(const std::string& name) const {
  for (std::size_t i = 0; i < elements.size(); ++i)
    if (elements[i].name == name) return i;
  return std::nullopt;
}

const char* to_string(Distribution dist) {
  switch (dist) {
    case Distribution::uniform: return "uniform";
    case Distribution::normal: return "normal";
  }
  return "uniform";
}

namespace {
struct TolerancedField {
  const char* key;
  double OpAmpModel::*field;
};
constexpr TolerancedField kTolerancedFields[] = {
    {"gbw", &OpAmpModel::gbw}, {"aol", &OpAmpModel::aol}, {"fp2", &OpAmpModel::fp2},
    {"rout", &OpAmpModel::rout}, {"rin", &OpAmpModel::rin}, {"en", &OpAmpModel::en},
    {"fce", &OpAmpModel::fce}, {"in", &OpAmpModel::in}, {"fci", &OpAmpModel::fci}};
}  // namespace

const std::vector<std::string>& toleranced_model_keys() {
  static const std::vector<std::string> keys = [] {
    std::vector<std::string> out;
    for (const auto& f : kTolerancedFields) out.emplace_back(f.key);
    return out;
  }();
  return keys;
}

double* model_parameter(OpAmpModel& model, std::string_view key) {
  for (const auto& f : kTolerancedFields)
    if (key == f.key) return &(model.*f.field);
  return nullptr;
}

const OpAmpModel& Circuit::model_of(const Element& e) const {
  return models.at(static_cast<std::size_t>(e.model));
}

}  // namespace tacet
