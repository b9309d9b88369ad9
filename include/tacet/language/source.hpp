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
  /// Whether a diagnostic may quote this file's lines. Off for a file that does
  /// not look like a netlist (its name does not end in .tacet, or its bytes are
  /// not text): a mistyped include must not print another file's contents.
  bool quotable = true;
};

/// The largest file `include` reads: far beyond any netlist, small enough that
/// a wrong path (a disk image, a log) fails at once.
inline constexpr std::size_t kLargestSourceFile = 64U << 20;

/// What is wrong with the bytes of a netlist, or nullopt when it is valid
/// UTF-8 without NUL or control characters (tab, line feed and carriage return
/// are fine). `offset` is the first offending byte.
struct EncodingProblem {
  std::uint32_t offset = 0;
  std::uint32_t length = 1;
  std::string message;
};
std::optional<EncodingProblem> check_encoding(std::string_view text);

/// `text` with every byte check_encoding would refuse replaced by '?', so a
/// quoted line cannot carry a NUL or an escape sequence to the terminal.
std::string printable(std::string_view text);

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
  /// Marks a file whose lines diagnostics must not quote.
  void set_quotable(int id, bool quotable) { files_.at(static_cast<std::size_t>(id)).quotable = quotable; }
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
  /// Why the last read of `path` failed, in words for the error message
  /// ("it is a folder"); empty when there is nothing more to say.
  virtual std::string why_unreadable(const std::string& /*path*/) { return {}; }
  /// What identifies the file whatever the path spelling: its real path on a
  /// disk, so a library reached through a symlinked folder is read once.
  virtual std::string identity(const std::string& path) { return path; }
};

/// Reads regular files only (a folder, a device or a pipe is refused before
/// it is opened, so `include "/dev/zero"` cannot read forever), up to
/// kLargestSourceFile. With a confinement folder, every file must lie inside
/// it after symlinks are resolved (`--confine-includes`, for netlists from
/// untrusted pull requests).
class DiskFileReader final : public FileReader {
 public:
  DiskFileReader() = default;
  explicit DiskFileReader(std::string confine_to);
  std::optional<std::string> read(const std::string& path) override;
  std::string why_unreadable(const std::string& path) override;
  std::string identity(const std::string& path) override;

 private:
  std::string confine_to_;  ///< real path of the folder; empty: anywhere
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
  explicit RevisionFileReader(std::string revision, std::string confine_to = {})
      : revision_(std::move(revision)), disk_(std::move(confine_to)) {}
  std::optional<std::string> read(const std::string& path) override;
  std::string why_unreadable(const std::string& path) override;
  std::string identity(const std::string& path) override;

 private:
  std::string revision_;
  DiskFileReader disk_;
};

/// Splits "REV:path" into its revision and path; nullopt for a plain path
/// (no ':', or a path that exists on disk). A revision that starts with '-'
/// is never one: it would reach git as an option.
std::optional<std::pair<std::string, std::string>> split_revision(const std::string& spec);

/// `relative` as seen from the folder of `including_file` (absolute paths stay).
std::string resolve_relative(const std::string& including_file, const std::string& relative);

}  // namespace tacet
