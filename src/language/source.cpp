// Source texts, positions and the readers `include` goes through.
#include "tacet/language/source.hpp"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>

namespace tacet {

namespace {


// Offsets past the end (an error at end of file) are reported at the end.
std::size_t clamp_offset(const std::string& text, std::uint32_t offset) {
  return std::min<std::size_t>(offset, text.size());
}

bool starts_with_byte_order_mark(const std::string& text) {
  return text.compare(0, 3, "\xEF\xBB\xBF") == 0;
}

// A byte order mark is invisible in an editor, so the first line starts after it.
std::size_t line_start(const std::string& text, std::size_t offset) {
  const auto newline = offset == 0 ? std::string::npos : text.rfind('\n', offset - 1);
  if (newline != std::string::npos) return newline + 1;
  return starts_with_byte_order_mark(text) && offset >= 3 ? 3 : 0;
}

}  // namespace

int SourceManager::add(std::string path, std::string text) {
  files_.push_back(SourceFile{std::move(path), std::move(text)});
  return size() - 1;
}

std::size_t code_points(std::string_view text) {
  return static_cast<std::size_t>(
      std::count_if(text.begin(), text.end(), [](char c) { return !is_utf8_continuation(c); }));
}

LineColumn SourceManager::line_column(SourceLocation where) const {
  const std::string& text = file(where.file).text;
  const std::size_t offset = clamp_offset(text, where.offset);
  const std::size_t start = line_start(text, offset);
  const auto newlines = std::count(text.begin(), text.begin() + static_cast<std::ptrdiff_t>(start), '\n');
  const std::size_t column = code_points(std::string_view(text).substr(start, offset - start));
  return LineColumn{static_cast<int>(newlines) + 1, static_cast<int>(column) + 1};
}

std::string_view SourceManager::line_text(SourceLocation where) const {
  const std::string& text = file(where.file).text;
  const std::size_t start = line_start(text, clamp_offset(text, where.offset));
  std::size_t end = text.find('\n', start);
  if (end == std::string::npos) end = text.size();
  // A CRLF file shows its lines without the CR, like an LF one.
  if (end > start && text[end - 1] == '\r') --end;
  return std::string_view(text).substr(start, end - start);
}

std::optional<std::string> DiskFileReader::read(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return std::nullopt;
  std::ostringstream contents;
  contents << in.rdbuf();
  if (in.bad()) return std::nullopt;
  return contents.str();
}

std::optional<std::string> MemoryFileReader::read(const std::string& path) {
  const auto found = files_.find(path);
  if (found == files_.end()) return std::nullopt;
  return found->second;
}

std::string resolve_relative(const std::string& including_file, const std::string& relative) {
  const std::filesystem::path target(relative);
  if (target.is_absolute()) return target.lexically_normal().string();
  // A file read from a git revision includes from the same revision.
  if (auto revision = split_revision(including_file))
    return revision->first + ":" + resolve_relative(revision->second, relative);
  const auto folder = std::filesystem::path(including_file).parent_path();
  return (folder / target).lexically_normal().string();
}

}  // namespace tacet

// ---- files from a git revision ------------------------------------------------

namespace tacet {

namespace {

std::string shell_quote(const std::string& word) {
  std::string out = "'";
  for (char c : word) out += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return out + "'";
}

}  // namespace

std::optional<std::pair<std::string, std::string>> split_revision(const std::string& spec) {
  const auto colon = spec.find(':');
  if (colon == std::string::npos || colon == 0 || colon + 1 == spec.size()) return std::nullopt;
  std::error_code ec;
  if (std::filesystem::exists(spec, ec)) return std::nullopt;  // a file whose name has a ':'
  return std::make_pair(spec.substr(0, colon), spec.substr(colon + 1));
}

std::optional<std::string> RevisionFileReader::read(const std::string& path) {
  const std::string prefix = revision_ + ":";
  if (path.compare(0, prefix.size(), prefix) != 0) return disk_.read(path);
  const std::string object = revision_ + ":./" + path.substr(prefix.size());
  // git prints the blob on stdout; a missing revision or path is a non-zero exit.
  FILE* pipe = ::popen(("git show " + shell_quote(object) + " 2>/dev/null").c_str(), "r");
  if (!pipe) return std::nullopt;
  std::string text;
  char buffer[4096];
  for (std::size_t n; (n = std::fread(buffer, 1, sizeof buffer, pipe)) > 0;) text.append(buffer, n);
  if (::pclose(pipe) != 0) return std::nullopt;
  return text;
}

}  // namespace tacet
