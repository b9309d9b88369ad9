// The one renderer of complaints about the input.
#include "tacet/language/diagnostics.hpp"

#include <algorithm>
#include <cctype>
#include <numeric>
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

int Diagnostics::error_count() const {
  return static_cast<int>(std::count_if(list_.begin(), list_.end(), [](const Diagnostic& d) {
    return d.severity == Severity::error;
  }));
}

std::string Diagnostics::render(const Diagnostic& d) const {
  std::string out;
  if (d.where.file < 0) {
    out = std::string(severity_word(d.severity)) + ": " + d.message + '\n';
  } else {
    const SourceFile& file = sources_->file(d.where.file);
    const LineColumn at = sources_->line_column(d.where);
    const std::string_view line = sources_->line_text(d.where);
    const std::size_t line_begin = static_cast<std::size_t>(line.data() - file.text.data());
    const std::size_t column_byte = std::min<std::size_t>(d.where.offset, file.text.size()) - line_begin;
    out = file.path + ':' + std::to_string(at.line) + ':' + std::to_string(at.column) + ": " +
          severity_word(d.severity) + ": " + d.message + '\n';
    out.append(line);
    out += '\n';
    out += caret_line(line, column_byte, d.length);
  }
  if (!d.hint.empty()) out += "hint: " + d.hint + '\n';
  return out;
}

std::string Diagnostics::render_all() const {
  return std::accumulate(list_.begin(), list_.end(), std::string{},
                         [this](std::string all, const Diagnostic& d) { return all + render(d); });
}

}  // namespace tacet
