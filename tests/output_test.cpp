#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <sstream>

#include "tacet/common/errors.hpp"
#include "tacet/report/output.hpp"

using namespace tacet;
namespace fs = std::filesystem;

namespace {

std::string slurp(const fs::path& p) {
  std::ifstream in(p);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

}  // namespace

TEST_CASE("output replaces the file whole and leaves no temporary behind", "[output]") {
  const fs::path folder = fs::temp_directory_path() / "tacet_output_test";
  fs::remove_all(folder);
  fs::create_directories(folder);
  const fs::path target = folder / "result.json";
  write_output(target.string(), "first\n");
  write_output(target.string(), "second\n");
  CHECK(slurp(target) == "second\n");
  int entries = 0;
  for ([[maybe_unused]] const auto& e : fs::directory_iterator(folder)) ++entries;
  CHECK(entries == 1);
  fs::remove_all(folder);
}

TEST_CASE("output into a missing folder is an input error", "[output]") {
  CHECK_THROWS_AS(write_output("/nonexistent-tacet-folder/out.csv", "x"), InputError);
}

TEST_CASE("output formats round-trip through their names", "[output]") {
  for (auto f : {OutputFormat::table, OutputFormat::csv, OutputFormat::json, OutputFormat::svg})
    CHECK(parse_output_format(to_string(f)) == f);
  CHECK_FALSE(parse_output_format("xml"));
}

TEST_CASE("format names read as a list with 'or' before the last", "[output]") {
  CHECK(format_names({OutputFormat::table}) == "table");
  CHECK(format_names({OutputFormat::table, OutputFormat::json}) == "table or json");
  CHECK(format_names({OutputFormat::table, OutputFormat::csv, OutputFormat::json}) ==
        "table, csv or json");
}
