// The one renderer of complaints about the input.
#include "tacet/language/diagnostics.hpp"

#include <algorithm>
#include <cctype>
#include <string>
#include <vector>

namespace tacet {

namespace {


const char* severity_word(Severity severity) {
  switch (severity) {
    case Severity::error: return "error";
    case Severity::warning: return "warning";
    case Severity::note: return "note";
  }
  return "error";
}

// Spaces up to the caret, except that tabs stay tabs so the caret lines up
// under the same character whatever the reader's tab width.
std::string caret_line(std::string_view line, std::size_t column_byte, std::uint32_t length) {
  std::string out;
  const std::size_t before = std::min(column_byte, line.size());
  for (std::size_t i = 0; i < before; ++i) {
    if (is_utf8_continuation(line[i])) continue;
    out += line[i] == '\t' ? '\t' : ' ';
  }
  // `length` is in bytes of source text (what the syntax tree records);
  // the underline shows the code points those bytes hold, up to the line end.
  const std::size_t span_end = std::min(line.size(), before + std::max<std::uint32_t>(length, 1));
  const std::size_t underlined = code_points(line.substr(before, span_end - before));
  out += '^';
  if (underlined > 1) out.append(underlined - 1, '~');
  out += '\n';
  return out;
}

}  // namespace

void Diagnostics::error(SourceLocation where, std::string message, std::string hint,
                        std::uint32_t length) {
  add(Diagnostic{Severity::error, where, length, std::move(message), std::move(hint)});
}

void Diagnostics::warning(SourceLocation where, std::string message, std::string hint,
                          std::uint32_t length) {
  add(Diagnostic{Severity::warning, where, length, std::move(message), std::move(hint)});
}

bool Diagnostics::has_errors() const { return error_count() > 0; }

int Diagnostics::error_count() const { return errors_; }

void Diagnostics::add(Diagnostic d) {
  const bool is_error = d.severity == Severity::error;
  if (is_error) ++errors_;
  if (list_.size() < kMostKept) {
    list_.push_back(std::move(d));
  } else {
    ++(is_error ? dropped_errors_ : dropped_others_);
  }
}

namespace {

/// Lines longer than this are shown as a window around the column, so a
/// megabyte-long line costs a screenful, not a megabyte per diagnostic.
constexpr std::size_t kShownLineBytes = 160;

struct ShownLine {
  std::string text;
  std::size_t column_byte = 0;
};

/// A message quotes names from the input ('R1'); one of 200k characters is
/// shown by its ends, so a message stays a line.
std::string shorten_quoted(const std::string& message) {
  constexpr std::size_t kLongestQuoted = 64;
  std::string out;
  std::size_t at = 0;
  while (at < message.size()) {
    const auto open = message.find('\'', at);
    const auto close = open == std::string::npos ? open : message.find('\'', open + 1);
    if (close == std::string::npos) break;
    out.append(message, at, open + 1 - at);
    std::string_view quoted(message.data() + open + 1, close - open - 1);
    if (quoted.size() > kLongestQuoted) {
      std::size_t head = kLongestQuoted / 2, tail = quoted.size() - kLongestQuoted / 4;
      while (head > 0 && is_utf8_continuation(quoted[head])) --head;
      while (tail < quoted.size() && is_utf8_continuation(quoted[tail])) ++tail;
      out.append(quoted.substr(0, head));
      out += "...";
      out.append(quoted.substr(tail));
    } else {
      out.append(quoted);
    }
    out += '\'';
    at = close + 1;
  }
  out.append(message, std::min(at, message.size()), std::string::npos);
  return out;
}

ShownLine window_around(std::string_view line, std::size_t column_byte) {
  if (line.size() <= kShownLineBytes) return {std::string(line), column_byte};
  std::size_t begin = column_byte > kShownLineBytes / 2 ? column_byte - kShownLineBytes / 2 : 0;
  while (begin > 0 && is_utf8_continuation(line[begin])) --begin;
  std::size_t end = std::min(line.size(), begin + kShownLineBytes);
  while (end < line.size() && is_utf8_continuation(line[end])) ++end;
  const std::string before = begin > 0 ? "..." : "";
  const std::string after = end < line.size() ? "..." : "";
  return {before + std::string(line.substr(begin, end - begin)) + after,
          column_byte - begin + before.size()};
}

}  // namespace

std::string Diagnostics::render(const Diagnostic& d) const {
  std::string out;
  if (d.where.file < 0) {
    out = printable(std::string(severity_word(d.severity)) + ": " + shorten_quoted(d.message)) + '\n';
  } else {
    const SourceFile& file = sources_->file(d.where.file);
    const LineColumn at = sources_->line_column(d.where);
    const std::string_view line = sources_->line_text(d.where);
    const std::size_t line_begin = static_cast<std::size_t>(line.data() - file.text.data());
    const std::size_t column_byte = std::min<std::size_t>(d.where.offset, file.text.size()) - line_begin;
    out = printable(file.path + ':' + std::to_string(at.line) + ':' + std::to_string(at.column) +
                    ": " + severity_word(d.severity) + ": " + shorten_quoted(d.message)) +
          '\n';
    if (file.quotable) {
      const ShownLine shown = window_around(line, column_byte);
      const std::string text = printable(shown.text);
      const std::size_t room = text.size() - std::min(text.size(), shown.column_byte);
      out += text;
      out += '\n';
      out += caret_line(text, shown.column_byte,
                        static_cast<std::uint32_t>(std::min<std::size_t>(d.length, std::max<std::size_t>(room, 1))));
    }
  }
  if (!d.hint.empty()) out += printable("hint: " + d.hint) + '\n';
  return out;
}

std::string Diagnostics::render_all() const {
  std::string all;
  for (const auto& d : list_) all += render(d);
  if (dropped_errors_ > 0 || dropped_others_ > 0)
    all += "note: " + std::to_string(dropped_errors_) + " more error" +
           (dropped_errors_ == 1 ? "" : "s") + " and " + std::to_string(dropped_others_) +
           " other message" + (dropped_others_ == 1 ? "" : "s") +
           " not shown; mend the first ones and run again\n";
  return all;
}

}  // namespace tacet
