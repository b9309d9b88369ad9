// Source texts, positions and the readers `include` goes through.
#include "tacet/language/source.hpp"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>

#include <fmt/format.h>

#include "tacet/common/input_files.hpp"

namespace tacet {

namespace {

// Whether `path` is `folder` or lies below it; both are real paths.
bool inside_folder(const std::string& path, const std::string& folder) {
  if (path.compare(0, folder.size(), folder) != 0) return false;
  return path.size() == folder.size() || path[folder.size()] == '/' || folder.back() == '/';
}

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

DiskFileReader::DiskFileReader(std::string confine_to) {
  if (confine_to.empty()) return;
  std::error_code ec;
  const auto real = std::filesystem::weakly_canonical(confine_to, ec);
  confine_to_ = ec ? confine_to : real.string();
}

std::string DiskFileReader::identity(const std::string& path) {
  std::error_code ec;
  const auto real = std::filesystem::weakly_canonical(path, ec);
  return ec ? path : real.string();
}

std::string DiskFileReader::why_unreadable(const std::string& path) {
  namespace fs = std::filesystem;
  std::error_code ec;
  if (!confine_to_.empty() && !inside_folder(identity(path), confine_to_))
    return fmt::format("it lies outside '{}', the folder includes are confined to", confine_to_);
  const auto status = fs::status(path, ec);
  if (ec || !fs::exists(status)) return "no such file";
  if (fs::is_directory(status)) return "it is a folder, not a netlist";
  if (!fs::is_regular_file(status)) return "it is not a regular file (a device, a pipe or a socket)";
  if (fs::file_size(path, ec) > kLargestSourceFile)
    return fmt::format("it is larger than {} MiB, far beyond any netlist", kLargestSourceFile >> 20);
  std::ifstream in(path, std::ios::binary);
  if (!in) return "permission denied";
  return {};
}

std::optional<std::string> DiskFileReader::read(const std::string& path) {
  if (!why_unreadable(path).empty()) return std::nullopt;
  std::ifstream in(path, std::ios::binary);
  if (!in) return std::nullopt;
  std::ostringstream contents;
  contents << in.rdbuf();
  if (in.bad()) return std::nullopt;
  note_input_file(path);
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
  if (spec.front() == '-') return std::nullopt;  // an option's spelling, never a revision
  std::error_code ec;
  if (std::filesystem::exists(spec, ec)) return std::nullopt;  // a file whose name has a ':'
  return std::make_pair(spec.substr(0, colon), spec.substr(colon + 1));
}

std::string RevisionFileReader::why_unreadable(const std::string& path) {
  const std::string prefix = revision_ + ":";
  if (path.compare(0, prefix.size(), prefix) != 0) return disk_.why_unreadable(path);
  return {};
}

std::string RevisionFileReader::identity(const std::string& path) {
  const std::string prefix = revision_ + ":";
  if (path.compare(0, prefix.size(), prefix) != 0) return disk_.identity(path);
  return path;
}

std::optional<std::string> RevisionFileReader::read(const std::string& path) {
  const std::string prefix = revision_ + ":";
  if (path.compare(0, prefix.size(), prefix) != 0) return disk_.read(path);
  if (revision_.empty() || revision_.front() == '-') return std::nullopt;
  const std::string object = revision_ + ":./" + path.substr(prefix.size());
  // `--end-of-options`: whatever the argument says, git takes it as an
  // object name, never as one of its own options. git prints the blob on
  // stdout; a missing revision or path is a non-zero exit.
  FILE* pipe =
      ::popen(("git show --end-of-options " + shell_quote(object) + " 2>/dev/null").c_str(), "r");
  if (!pipe) return std::nullopt;
  std::string text;
  char buffer[4096];
  for (std::size_t n; (n = std::fread(buffer, 1, sizeof buffer, pipe)) > 0;) {
    text.append(buffer, n);
    if (text.size() > kLargestSourceFile) break;
  }
  if (::pclose(pipe) != 0 || text.size() > kLargestSourceFile) return std::nullopt;
  return text;
}

}  // namespace tacet

// ---- encoding -------------------------------------------------------------

namespace tacet {

namespace {

// The length of the well-formed UTF-8 sequence at `at` (RFC 3629, table 3-7
// of the Unicode standard: no overlong forms, no surrogates, nothing above
// U+10FFFF), or 0 when the bytes there are not one.
std::size_t utf8_sequence(std::string_view text, std::size_t at) {
  const auto byte = [&](std::size_t i) { return static_cast<unsigned char>(text[i]); };
  const unsigned char lead = byte(at);
  if (lead < 0x80) return 1;
  std::size_t length = 0;
  unsigned char low = 0x80, high = 0xBF;  // the range of the second byte
  if (lead >= 0xC2 && lead <= 0xDF) length = 2;
  else if (lead == 0xE0) length = 3, low = 0xA0;
  else if (lead >= 0xE1 && lead <= 0xEC) length = 3;
  else if (lead == 0xED) length = 3, high = 0x9F;
  else if (lead >= 0xEE && lead <= 0xEF) length = 3;
  else if (lead == 0xF0) length = 4, low = 0x90;
  else if (lead >= 0xF1 && lead <= 0xF3) length = 4;
  else if (lead == 0xF4) length = 4, high = 0x8F;
  else return 0;
  if (at + length > text.size()) return 0;
  if (byte(at + 1) < low || byte(at + 1) > high) return 0;
  for (std::size_t i = 2; i < length; ++i)
    if (!is_utf8_continuation(text[at + i])) return 0;
  return length;
}

}  // namespace

std::optional<EncodingProblem> check_encoding(std::string_view text) {
  for (std::size_t at = 0; at < text.size();) {
    const auto c = static_cast<unsigned char>(text[at]);
    // Printable ASCII and line ends, nearly every byte of a netlist, need no
    // decoding: a tight scan passes over them to the next byte that may.
    if ((c >= 0x20 && c < 0x7F) || c == '\n' || c == '\t' || c == '\r') {
      const auto plain = [](char b) {
        return static_cast<unsigned char>(b) - 0x20u < 0x5Fu || b == '\n';
      };
      at = static_cast<std::size_t>(
          std::find_if_not(text.begin() + static_cast<std::ptrdiff_t>(at) + 1, text.end(), plain) -
          text.begin());
      continue;
    }
    const auto offset = static_cast<std::uint32_t>(at);
    if (c == 0) return EncodingProblem{offset, 1, "a NUL byte: a netlist is text"};
    if ((c < 0x20 && c != '\t' && c != '\n' && c != '\r') || c == 0x7F)
      return EncodingProblem{offset, 1,
                             fmt::format("control character 0x{:02X}: a netlist is text", c)};
    const std::size_t length = utf8_sequence(text, at);
    if (length == 0)
      return EncodingProblem{offset, 1,
                             fmt::format("byte 0x{:02X} is not UTF-8 (netlists are read as UTF-8)", c)};
    at += length;
  }
  return std::nullopt;
}

std::string printable(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (std::size_t at = 0; at < text.size();) {
    const auto c = static_cast<unsigned char>(text[at]);
    const std::size_t length = utf8_sequence(text, at);
    if (length == 0 || c == 0x7F || (c < 0x20 && c != '\t')) {
      out += '?';
      ++at;
    } else {
      out.append(text.substr(at, length));
      at += length;
    }
  }
  return out;
}

}  // namespace tacet
