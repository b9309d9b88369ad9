#include <catch2/catch.hpp>

#include <filesystem>
#include <limits>
#include <string>
#include <fstream>
#include <sstream>

#include "tacet/common/errors.hpp"
#include "tacet/common/input_files.hpp"
#include "tacet/report/csv.hpp"
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
  for (auto f : {OutputFormat::table, OutputFormat::csv, OutputFormat::json, OutputFormat::svg,
                 OutputFormat::html})
    CHECK(parse_output_format(to_string(f)) == f);
  CHECK_FALSE(parse_output_format("xml"));
}

TEST_CASE("format names read as a list with 'or' before the last", "[output]") {
  CHECK(format_names({OutputFormat::table}) == "table");
  CHECK(format_names({OutputFormat::table, OutputFormat::json}) == "table or json");
  CHECK(format_names({OutputFormat::table, OutputFormat::csv, OutputFormat::json}) ==
        "table, csv or json");
}

// ---- nothing lost: what --output may and may not replace --------------------

namespace {

struct Folder {
  fs::path path;
  explicit Folder(const std::string& name) : path(fs::temp_directory_path() / name) {
    fs::remove_all(path);
    fs::create_directories(path);
  }
  ~Folder() {
    std::error_code ignored;
    fs::permissions(path, fs::perms::owner_all, ignored);
    fs::remove_all(path, ignored);
  }
  int entries() const {
    int n = 0;
    for ([[maybe_unused]] const auto& e : fs::directory_iterator(path)) ++n;
    return n;
  }
};

}  // namespace

TEST_CASE("output refuses to replace a file this run read as input", "[output]") {
  Folder folder("tacet_output_input");
  const fs::path netlist = folder.path / "stage.tacet";
  std::ofstream(netlist) << "title \"x\"\n";
  note_input_file(netlist.string());
  CHECK_THROWS_AS(write_output(netlist.string(), "results\n"), InputError);
  // Through a symlink or another spelling of the same path, too.
  fs::create_symlink(netlist, folder.path / "link.tacet");
  CHECK_THROWS_AS(write_output((folder.path / "link.tacet").string(), "x"), InputError);
  CHECK_THROWS_AS(write_output((folder.path / "." / "stage.tacet").string(), "x"), InputError);
  CHECK(slurp(netlist) == "title \"x\"\n");
}

TEST_CASE("output writes through a symlink and keeps the link", "[output]") {
  Folder folder("tacet_output_symlink");
  const fs::path target = folder.path / "real.csv";
  std::ofstream(target) << "old\n";
  fs::create_symlink(target, folder.path / "link.csv");
  write_output((folder.path / "link.csv").string(), "new\n");
  CHECK(fs::is_symlink(folder.path / "link.csv"));
  CHECK(slurp(target) == "new\n");
  CHECK(folder.entries() == 2);
}

TEST_CASE("output to a device writes into it instead of replacing it", "[output]") {
  write_output("/dev/null", "discarded\n");
  CHECK(fs::is_character_file("/dev/null"));
}

TEST_CASE("output refuses a read-only file and a folder, and leaves no temporary", "[output]") {
  Folder folder("tacet_output_readonly");
  const fs::path locked = folder.path / "locked.json";
  std::ofstream(locked) << "keep\n";
  fs::permissions(locked, fs::perms::owner_read | fs::perms::group_read | fs::perms::others_read);
  CHECK_THROWS_AS(write_output(locked.string(), "x"), InputError);
  CHECK(slurp(locked) == "keep\n");
  CHECK_THROWS_AS(write_output(folder.path.string(), "x"), InputError);
  CHECK(folder.entries() == 1);
}

// RFC 4180, section 2 (rules 6 and 7): a field that holds a comma, a quote or a
// line break is enclosed in quotes, and a quote inside it is doubled.
TEST_CASE("a CSV field is quoted only when RFC 4180 needs it, its quotes doubled") {
  CHECK(csv_field("v(out)_V") == "v(out)_V");
  CHECK(csv_field("v(a,b)_V") == "\"v(a,b)_V\"");
  CHECK(csv_field("say \"hi\"") == "\"say \"\"hi\"\"\"");
  CHECK(csv_field("two\nlines") == "\"two\nlines\"");
  CHECK(csv_field("cr\rhere") == "\"cr\rhere\"");
}

TEST_CASE("a CSV number is exact to the last bit and empty when not finite") {
  CHECK(std::stod(csv_number(0.1)) == 0.1);
  CHECK(std::stod(csv_number(1.0 / 3.0)) == 1.0 / 3.0);
  CHECK(csv_number(std::numeric_limits<double>::quiet_NaN()).empty());
  CHECK(csv_number(std::numeric_limits<double>::infinity()).empty());
  CHECK(csv_number(-std::numeric_limits<double>::infinity()).empty());
}
