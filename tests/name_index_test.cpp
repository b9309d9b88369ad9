// NameIndex (common/name_index.hpp): names to indices in an open-addressing
// table over the caller's names; checked against std::unordered_map on the
// same inserts, through growth, with names that share every character but one.

#include "tacet/common/name_index.hpp"

#include <catch2/catch.hpp>
#include <random>
#include <string>
#include <unordered_map>
#include <vector>

using namespace tacet;

TEST_CASE("a name index finds every name it was given, through growth, and no other", "[name_index]") {
  NameIndex index;
  std::vector<std::string> names;
  std::unordered_map<std::string, int> reference;
  auto key_at = [&](int i) -> const std::string& { return names[static_cast<std::size_t>(i)]; };
  std::mt19937 random(5);
  for (int k = 0; k < 50000; ++k) {
    // Node-like names, many repeated: n0 .. n29999 and a few long ones.
    std::string name = "n" + std::to_string(random() % 30000);
    if (k % 1000 == 0) name = std::string(40, 'x') + std::to_string(k);
    const auto [i, added] = index.insert(name, static_cast<int>(names.size()), key_at);
    const auto [it, fresh] = reference.try_emplace(name, static_cast<int>(names.size()));
    REQUIRE(added == fresh);
    REQUIRE(i == it->second);
    if (added) names.push_back(name);
  }
  CHECK(index.size() == names.size());
  for (const auto& [name, i] : reference) CHECK(index.find(name, key_at) == i);
  CHECK(index.find("n30000", key_at) == -1);
  CHECK(index.find("", key_at) == -1);
  CHECK(index.find(std::string(40, 'x'), key_at) == -1);
}

TEST_CASE("a reserved name index keeps what it holds", "[name_index]") {
  NameIndex index;
  std::vector<std::string> names{"gnd", "in"};
  auto key_at = [&](int i) -> const std::string& { return names[static_cast<std::size_t>(i)]; };
  index.insert("gnd", 0, key_at);
  index.insert("in", 1, key_at);
  index.reserve(100000);
  CHECK(index.find("gnd", key_at) == 0);
  CHECK(index.find("in", key_at) == 1);
  CHECK(index.insert("in", 2, key_at) == std::pair<int, bool>{1, false});
}
