#pragma once
// Source texts and positions. Every syntax-tree node carries a byte offset into
// the text of the file it came from; the SourceManager turns (file, offset) into
// the line, column and source line a diagnostic prints.

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <unordered_map>
#include <utility>
#include <vector>

namespace tacet {

/// A position in a source file: `file` indexes SourceManager, `offset` is in bytes.
struct SourceLocation {
  int file = -1;             ///< -1: no file (command line or generated)
  std::uint32_t offset = 0;  ///< byte offset into the file's text
};

struct SourceFile {
  std::string path;  ///< as the user or the including file wrote it, resolved
  std::string text;
};

/// Whether a byte continues a UTF-8 sequence (10xxxxxx).
inline bool is_utf8_continuation(char c) { return (static_cast<unsigned char>(c) & 0xC0U) == 0x80U; }

/// The UTF-8 code points in `text`: what a column, an underline or a table
/// cell's width counts, so `µ` and `Ω` take one place each.
std::size_t code_points(std::string_view text);

/// Line and column, both 1-based; the column counts UTF-8 code points, so a
/// caret lands under the right character after `µ` or `Ω`.
struct LineColumn {
  int line = 0;
  int column = 0;
};

class SourceManager {
 public:
  /// Keeps the text; returns the id that SourceLocation::file refers to.
  int add(std::string path, std::string text);
  const SourceFile& file(int id) const { return files_.at(static_cast<std::size_t>(id)); }
  int size() const { return static_cast<int>(files_.size()); }
  LineColumn line_column(SourceLocation where) const;
  /// The whole line that holds `where`, without its newline.
  std::string_view line_text(SourceLocation where) const;

 private:
  std::vector<SourceFile> files_;
};

/// Where `include` reads files from: the disk in the tool, memory in tests.
class FileReader {
 public:
  virtual ~FileReader() = default;
  /// The file's text, or nullopt when it cannot be read.
  virtual std::optional<std::string> read(const std::string& path) = 0;
};

class DiskFileReader final : public FileReader {
 public:
  std::optional<std::string> read(const std::string& path) override;
};

class MemoryFileReader final : public FileReader {
 public:
  void add(std::string path, std::string text) { files_[std::move(path)] = std::move(text); }
  std::optional<std::string> read(const std::string& path) override;

 private:
  std::unordered_map<std::string, std::string> files_;
};

/// Reads `REV:path` through `git show REV:./path` (from the current folder's
/// repository, path relative to the current folder), and plain paths from the
/// disk. `tacet diff` uses it so an old revision's includes come from the same
/// revision: resolve_relative keeps the `REV:` prefix on included paths.
class RevisionFileReader final : public FileReader {
 public:
  explicit RevisionFileReader(std::string revision) : revision_(std::move(revision)) {}
  std::optional<std::string> read(const std::string& path) override;

 private:
  std::string revision_;
  DiskFileReader disk_;
};

/// Splits "REV:path" into its revision and path; nullopt for a plain path
/// (no ':' before the first '/', or a path that exists on disk).
std::optional<std::pair<std::string, std::string>> split_revision(const std::string& spec);

/// `relative` as seen from the folder of `including_file` (absolute paths stay).
std::string resolve_relative(const std::string& including_file, const std::string& relative);

}  // namespace tacet
