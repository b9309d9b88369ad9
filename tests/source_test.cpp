// SourceManager positions, include path resolution and the file readers.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include <sys/stat.h>

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

// ---- encoding: netlists are UTF-8 text (RFC 3629) ---------------------------

TEST_CASE("valid UTF-8 text passes the encoding check", "[source]") {
  // µ U+00B5 (C2 B5), Ω U+03A9 (CE A9), a 4-byte U+1F600 (F0 9F 98 80): RFC 3629, section 3.
  CHECK_FALSE(tacet::check_encoding("res R1 (a, b) 1k\t# 1 \xC2\xB5 \xCE\xA9 \xF0\x9F\x98\x80\r\n"));
}

TEST_CASE("the encoding check names the first byte that is not UTF-8 text", "[source]") {
  auto at = [](std::string_view text) {
    auto problem = tacet::check_encoding(text);
    REQUIRE(problem);
    return std::make_pair(problem->offset, problem->message);
  };
  CHECK(at(std::string_view("res\0R1", 6)) == std::make_pair(3U, std::string("a NUL byte: a netlist is text")));
  CHECK(at("ab\x07") == std::make_pair(2U, std::string("control character 0x07: a netlist is text")));
  CHECK(at("a\xFF").first == 1U);
  CHECK(at("a\xFF").second == "byte 0xFF is not UTF-8 (netlists are read as UTF-8)");
  CHECK(at("x\xC2").first == 1U);          // a truncated two-byte sequence
  CHECK(at("x\xC0\x80").first == 1U);      // overlong NUL (RFC 3629, section 10)
  CHECK(at("x\xED\xA0\x80").first == 1U);  // a UTF-16 surrogate, not a scalar value
  CHECK(at("x\xF4\x90\x80\x80").first == 1U);  // above U+10FFFF
  CHECK(at("\x80").first == 0U);           // a lone continuation byte
}

TEST_CASE("printable replaces what a terminal must not receive, byte for byte", "[source]") {
  CHECK(tacet::printable(std::string_view("a\0b\x1B[2J\xFF\xC2\xB5", 10)) == "a?b?[2J?\xC2\xB5");
}

// ---- the disk reader: regular files only ------------------------------------

namespace {

struct TempFolder {
  std::filesystem::path path;
  explicit TempFolder(const std::string& name)
      : path(std::filesystem::temp_directory_path() / name) {
    std::filesystem::remove_all(path);
    std::filesystem::create_directories(path);
  }
  ~TempFolder() { std::filesystem::remove_all(path); }
};

}  // namespace

TEST_CASE("the disk reader refuses a folder, a device and a pipe, saying which", "[source]") {
  TempFolder folder("tacet_reader_kinds");
  tacet::DiskFileReader reader;
  CHECK_FALSE(reader.read(folder.path.string()));
  CHECK(reader.why_unreadable(folder.path.string()) == "it is a folder, not a netlist");
  // /dev/zero would read forever; it is refused before it is opened.
  CHECK_FALSE(reader.read("/dev/zero"));
  CHECK(reader.why_unreadable("/dev/zero") == "it is not a regular file (a device, a pipe or a socket)");
  const auto fifo = folder.path / "pipe.tacet";
  REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
  CHECK_FALSE(reader.read(fifo.string()));  // would block forever if it were opened
  CHECK(reader.why_unreadable((folder.path / "absent.tacet").string()) == "no such file");
}

TEST_CASE("the disk reader identifies a file by its real path", "[source]") {
  TempFolder folder("tacet_reader_identity");
  std::filesystem::create_directories(folder.path / "lib");
  std::ofstream(folder.path / "lib" / "a.tacet") << "title \"a\"\n";
  std::filesystem::create_directory_symlink(folder.path / "lib", folder.path / "linked");
  tacet::DiskFileReader reader;
  CHECK(reader.identity((folder.path / "linked" / "a.tacet").string()) ==
        reader.identity((folder.path / "lib" / "a.tacet").string()));
}

TEST_CASE("a confined reader refuses files outside its folder, symlinks resolved", "[source]") {
  TempFolder folder("tacet_reader_confined");
  std::filesystem::create_directories(folder.path / "repo");
  std::ofstream(folder.path / "repo" / "in.tacet") << "title \"in\"\n";
  std::ofstream(folder.path / "out.tacet") << "title \"out\"\n";
  std::filesystem::create_symlink(folder.path / "out.tacet", folder.path / "repo" / "sneaky.tacet");
  tacet::DiskFileReader reader((folder.path / "repo").string());
  CHECK(reader.read((folder.path / "repo" / "in.tacet").string()));
  CHECK_FALSE(reader.read((folder.path / "out.tacet").string()));
  CHECK_FALSE(reader.read((folder.path / "repo" / "sneaky.tacet").string()));
  CHECK_FALSE(reader.read((folder.path / "repo" / ".." / "out.tacet").string()));
  CHECK(reader.why_unreadable((folder.path / "out.tacet").string()).find("outside") != std::string::npos);
}

TEST_CASE("an argument that starts with '-' is never a git revision", "[source]") {
  // `tacet show -- "--output=DIR/x:y"` must not reach git as an option.
  CHECK_FALSE(tacet::split_revision("--output=/tmp/x:y"));
  CHECK_FALSE(tacet::split_revision("-p:file.tacet"));
  CHECK(tacet::split_revision("HEAD~1:netlists/a.tacet"));
}
