// The shard document of tacet spread --shard, written and read back by tacet merge.

#include <cmath>
#include <limits>

#include <fmt/format.h>

#include "tacet/common/errors.hpp"
#include "tacet/report/json_output.hpp"
#include "tacet/report/write_spread.hpp"

namespace tacet {

namespace {

constexpr int kShardVersion = 1;

/// Numbers at full precision; NaN (a draw that could not be measured) as null.
json_output::Json exact(double value) { return json_output::number(value); }

}  // namespace

std::string spread_shard_json(const SpreadSamples& samples, const ReportContext& context) {
  using json = json_output::Json;
  json parameters = json::array();
  for (const auto& p : samples.plan.parameters)
    parameters.push_back({{"name", p.name}, {"param", p.param}, {"tol", p.tolerance},
                          {"dist", to_string(p.dist)}, {"set", p.set}, {"ratio", p.ratio}});
  json specs = json::array();
  for (const auto& s : samples.specs)
    specs.push_back({{"name", s.name}, {"kind", to_string(s.kind)}, {"unit", to_string(s.unit)},
                     {"min", json_output::number(s.min)}, {"max", json_output::number(s.max)},
                     {"nominal", json_output::number(s.nominal)}, {"nominal_pass", s.nominal_pass}});
  json values = json::array(), pass = json::array();
  for (std::size_t s = 0; s < samples.values.size(); ++s) {
    json column = json::array();
    for (const double v : samples.values[s]) column.push_back(exact(v));
    values.push_back(std::move(column));
    std::string bits;
    for (const std::uint8_t ok : samples.pass[s]) bits += ok ? '1' : '0';
    pass.push_back(std::move(bits));
  }
  json document = json_output::header("spread-shard", context);
  document["version"] = kShardVersion;
  document["netlist_hash"] = samples.netlist_hash;
  document["seed"] = samples.seed;
  document["runs"] = samples.runs;
  document["shard"] = samples.shard;
  document["shards"] = samples.shards;
  document["first"] = samples.first;
  document["count"] = samples.count;
  document["parameters"] = parameters;
  document["sets"] = samples.plan.sets;
  document["specs"] = specs;
  document["values"] = values;
  document["pass"] = pass;
  // Compact: a shard of a long run holds a value per spec per draw.
  return document.dump(-1, ' ', false, json::error_handler_t::strict) + "\n";
}

namespace {

std::optional<double> optional_number(const nlohmann::json& j) {
  if (j.is_null()) return std::nullopt;
  return j.get<double>();
}

SpecUnit unit_named(const std::string& text) {
  for (SpecUnit u : {SpecUnit::db, SpecUnit::ratio, SpecUnit::amps_per_volt, SpecUnit::degrees,
                     SpecUnit::hertz, SpecUnit::volts})
    if (text == to_string(u)) return u;
  throw std::runtime_error("unknown unit '" + text + "'");
}

}  // namespace

SpreadSamples read_spread_shard(const std::string& text, const std::string& name,
                                ReportContext& context) {
  auto refuse = [&](const std::string& why) -> InputError {
    return InputError::usage(fmt::format("'{}' is not a shard of tacet spread: {}", name, why),
                             "make shards with tacet spread FILE --shard I/N --output shard-I.json");
  };
  nlohmann::json j;
  try {
    j = nlohmann::json::parse(text);
  } catch (const nlohmann::json::exception&) {
    throw refuse("it is not JSON");
  }
  if (!j.is_object() || j.value("analysis", "") != "spread-shard")
    throw refuse("it has no \"analysis\": \"spread-shard\"");
  if (j.value("version", 0) != kShardVersion)
    throw refuse(fmt::format("its version is not {}", kShardVersion));
  SpreadSamples s;
  try {
    context.file = j.at("file").get<std::string>();
    context.title = j.at("title").get<std::string>();
    s.netlist_hash = j.at("netlist_hash").get<std::string>();
    s.seed = j.at("seed").get<std::uint64_t>();
    s.runs = j.at("runs").get<std::int64_t>();
    s.shard = j.at("shard").get<int>();
    s.shards = j.at("shards").get<int>();
    s.first = j.at("first").get<std::int64_t>();
    s.count = j.at("count").get<std::int64_t>();
    for (const auto& p : j.at("parameters"))
      s.plan.parameters.push_back({p.at("name").get<std::string>(), p.at("param").get<std::string>(),
                                   p.at("tol").get<double>(),
                                   p.at("dist").get<std::string>() == "normal" ? Distribution::normal
                                                                               : Distribution::uniform,
                                   p.at("set").get<int>(), p.at("ratio").get<double>()});
    s.plan.sets = j.at("sets").get<std::vector<std::string>>();
    for (const auto& spec : j.at("specs")) {
      const auto kind = parse_spec_kind(spec.at("kind").get<std::string>());
      if (!kind) throw std::runtime_error("unknown spec kind");
      s.specs.push_back({spec.at("name").get<std::string>(), *kind, unit_named(spec.at("unit").get<std::string>()),
                         optional_number(spec.at("min")), optional_number(spec.at("max")),
                         optional_number(spec.at("nominal")), spec.at("nominal_pass").get<bool>()});
    }
    for (const auto& column : j.at("values")) {
      std::vector<double> v;
      v.reserve(column.size());
      for (const auto& x : column)
        v.push_back(x.is_null() ? std::numeric_limits<double>::quiet_NaN() : x.get<double>());
      s.values.push_back(std::move(v));
    }
    for (const auto& bits : j.at("pass")) {
      std::vector<std::uint8_t> p;
      for (const char c : bits.get<std::string>()) p.push_back(c == '1' ? 1 : 0);
      s.pass.push_back(std::move(p));
    }
  } catch (const std::exception& e) {
    throw refuse(fmt::format("a field is missing or malformed ({})", e.what()));
  }
  bool shaped = s.shards >= 1 && s.shard >= 1 && s.shard <= s.shards && s.count >= 0 && s.first >= 0 &&
                s.values.size() == s.specs.size() && s.pass.size() == s.specs.size();
  for (std::size_t k = 0; shaped && k < s.values.size(); ++k)
    shaped = static_cast<std::int64_t>(s.values[k].size()) == s.count &&
             static_cast<std::int64_t>(s.pass[k].size()) == s.count;
  for (const auto& p : s.plan.parameters)
    shaped = shaped && p.set < static_cast<int>(s.plan.sets.size());
  if (!shaped) throw refuse("its shard numbers or draw counts do not agree");
  return s;
}

}  // namespace tacet
