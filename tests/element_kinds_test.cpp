// The table of element kinds (include/tacet/language/element_kinds.hpp).

#include <catch2/catch.hpp>

#include <algorithm>
#include <string>

#include "tacet/language/element_kinds.hpp"
#include "tacet/language/parser.hpp"

using namespace tacet;

TEST_CASE("every kind's keyword leads back to the kind", "[kinds]") {
  for (const ElementTraits& row : kElementKinds) {
    CHECK(element_kind_of(row.keyword) == row.kind);
    CHECK(std::string(to_keyword(row.kind)) == row.keyword);
  }
  CHECK_FALSE(element_kind_of("resistor"));
  CHECK_FALSE(element_kind_of("use"));
}

TEST_CASE("the statement keywords for hints include every element keyword", "[kinds]") {
  const auto& words = statement_keywords();
  for (const ElementTraits& row : kElementKinds)
    CHECK(std::find(words.begin(), words.end(), row.keyword) != words.end());
}

TEST_CASE("a kind whose value is an option says so, with an example", "[kinds]") {
  for (const ElementTraits& row : kElementKinds) {
    INFO(row.keyword);
    if (row.value_option.empty()) continue;
    const KeyRule* rule = find_key(row.options, row.value_option);
    REQUIRE(rule);
    CHECK(rule->need == Need::required);
    CHECK(rule->dimension == row.value_dimension);
    CHECK_FALSE(row.value_example.empty());
  }
}

TEST_CASE("a kind written with a value after its pins names that value", "[kinds]") {
  for (const ElementTraits& row : kElementKinds) {
    INFO(row.keyword);
    if (row.value_syntax != ValueSyntax::expression) continue;
    CHECK_FALSE(row.value_noun.empty());
    CHECK(row.value_dimension != Dimension::none);
  }
}

TEST_CASE("a source's dc= and ac= have the dimension of what it drives", "[kinds]") {
  for (const ElementTraits& row : kElementKinds) {
    INFO(row.keyword);
    if (row.drive == Drive::none) continue;
    const Dimension expected = row.drive == Drive::voltage ? Dimension::voltage : Dimension::current;
    for (const char* key : {"dc", "ac"}) {
      const KeyRule* rule = find_key(row.options, key);
      REQUIRE(rule);
      CHECK(rule->dimension == expected);
    }
  }
}

TEST_CASE("a kind that sets a voltage has a branch current for it", "[kinds]") {
  for (const ElementTraits& row : kElementKinds) {
    INFO(row.keyword);
    if (row.defines_voltage != When::never) CHECK(row.has_branch);
  }
}
