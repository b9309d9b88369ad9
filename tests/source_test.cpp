// SourceManager positions, include path resolution and the file readers.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include "tacet/language/source.hpp"

using tacet::SourceLocation;
using tacet::SourceManager;

TEST_CASE("line and column are 1-based and found from the byte offset", "[source]") {
  SourceManager sources;
  const int id = sources.add("a.tacet", "ab\ncd\n");
  CHECK(sources.line_column({id, 0}).line == 1);
  CHECK(sources.line_column({id, 0}).column == 1);
  CHECK(sources.line_column({id, 1}).column == 2);
  CHECK(sources.line_column({id, 3}).line == 2);
  CHECK(sources.line_column({id, 3}).column == 1);
  CHECK(sources.line_column({id, 4}).column == 2);
}

TEST_CASE("the column counts UTF-8 code points, not bytes", "[source]") {
  // U+00B5 MICRO SIGN is the two bytes C2 B5 and U+03A9 OHM the two bytes
  // CE A9 (RFC 3629 encoding of the Unicode code points).
  SourceManager sources;
  const int id = sources.add("a.tacet", "cap C1 (a, b) 1\xC2\xB5" "F x\n");
  // 'x' is byte 19: "cap C1 (a, b) 1" is 15 bytes, µ 2, "F " 2.
  CHECK(sources.line_column({id, 19}).column == 19);
  const int ohms = sources.add("b.tacet", "\xCE\xA9\xCE\xA9y");
  CHECK(sources.line_column({ohms, 4}).column == 3);
}

TEST_CASE("line text is the whole line without its line end, CR included", "[source]") {
  SourceManager sources;
  const int id = sources.add("a.tacet", "first\r\nsecond line\r\nlast");
  CHECK(sources.line_text({id, 2}) == "first");
  CHECK(sources.line_text({id, 7}) == "second line");
  CHECK(sources.line_text({id, 12}) == "second line");
  CHECK(sources.line_text({id, 21}) == "last");
}

TEST_CASE("an offset at the end of the text is on the last line", "[source]") {
  SourceManager sources;
  const int id = sources.add("a.tacet", "ab\ncd");
  CHECK(sources.line_column({id, 5}).line == 2);
  CHECK(sources.line_column({id, 5}).column == 3);
  CHECK(sources.line_column({id, 99}).column == 3);
  CHECK(sources.line_text({id, 99}) == "cd");
}

TEST_CASE("file ids count up from zero in the order files are added", "[source]") {
  SourceManager sources;
  CHECK(sources.add("a.tacet", "x") == 0);
  CHECK(sources.add("b.tacet", "y") == 1);
  CHECK(sources.size() == 2);
  CHECK(sources.file(1).path == "b.tacet");
  CHECK(sources.file(1).text == "y");
}

TEST_CASE("an include path is taken from the folder of the including file", "[source]") {
  // Expected values follow the lexical normalisation of std::filesystem::path
  // (ISO C++ [fs.path.generic], normal form: "." removed, "name/.." removed).
  using tacet::resolve_relative;
  CHECK(resolve_relative("netlists/demo.tacet", "parts/opamps.tacet") ==
        "netlists/parts/opamps.tacet");
  CHECK(resolve_relative("a/b/main.tacet", "../lib/x.tacet") == "a/lib/x.tacet");
  CHECK(resolve_relative("a/main.tacet", "./x/./y.tacet") == "a/x/y.tacet");
  CHECK(resolve_relative("main.tacet", "x.tacet") == "x.tacet");
}

TEST_CASE("an absolute include path stays as written", "[source]") {
  CHECK(tacet::resolve_relative("a/main.tacet", "/lib/x.tacet") == "/lib/x.tacet");
  CHECK(tacet::resolve_relative("/home/u/main.tacet", "/lib/../x.tacet") == "/x.tacet");
}

TEST_CASE("the memory reader returns what was added and nothing else", "[source]") {
  tacet::MemoryFileReader reader;
  reader.add("parts/opamps.tacet", "model m opamp { gbw 1M }\n");
  CHECK(reader.read("parts/opamps.tacet") == std::optional<std::string>("model m opamp { gbw 1M }\n"));
  CHECK_FALSE(reader.read("parts/other.tacet").has_value());
}

TEST_CASE("the disk reader reads a file byte for byte and reports a missing one", "[source]") {
  const auto folder = std::filesystem::temp_directory_path() / "tacet_source_test";
  std::filesystem::create_directories(folder);
  const auto path = (folder / "crlf.tacet").string();
  {
    std::ofstream out(path, std::ios::binary);
    out << "title \"x\"\r\n\xC2\xB5\n";
  }
  tacet::DiskFileReader reader;
  CHECK(reader.read(path) == std::optional<std::string>("title \"x\"\r\n\xC2\xB5\n"));
  CHECK_FALSE(reader.read((folder / "absent.tacet").string()).has_value());
  std::filesystem::remove_all(folder);
}

TEST_CASE("a byte order mark is not part of the first line", "[source]") {
  // EF BB BF is U+FEFF, the byte order mark, in UTF-8 (RFC 3629, section 6);
  // editors do not show it, so columns start after it.
  SourceManager sources;
  const int id = sources.add("a.tacet", "\xEF\xBB\xBFres R1\nx\n");
  CHECK(sources.line_column({id, 3}).column == 1);
  CHECK(sources.line_column({id, 7}).column == 5);
  CHECK(sources.line_text({id, 7}) == "res R1");
  CHECK(sources.line_column({id, 10}).line == 2);
}
