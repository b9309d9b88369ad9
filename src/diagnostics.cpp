// The one renderer of complaints about the input, and the "did you mean" helpers.
#include "tacet/diagnostics.hpp"

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

std::string lower(std::string_view text) {
  std::string out(text);
  std::transform(out.begin(), out.end(), out.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
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

namespace {

// Rows i-2, i-1 and i of the edit table: row[j] is the distance between the
// first i characters of a and the first j of b. With `swaps`, exchanging two
// neighbouring characters is one edit (the optimal-string-alignment form of
// the Damerau-Levenshtein distance).
int edit_table(std::string_view a, std::string_view b, bool swaps) {
  std::vector<int> before(b.size() + 1);
  std::vector<int> previous(b.size() + 1);
  std::vector<int> row(b.size() + 1);
  std::iota(row.begin(), row.end(), 0);
  for (std::size_t i = 1; i <= a.size(); ++i) {
    before.swap(previous);
    previous.swap(row);
    row[0] = static_cast<int>(i);
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const int substitution = previous[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1);
      row[j] = std::min({previous[j] + 1, row[j - 1] + 1, substitution});
      if (swaps && i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1]) {
        row[j] = std::min(row[j], before[j - 2] + 1);
      }
    }
  }
  return row[b.size()];
}

}  // namespace

int edit_distance(std::string_view a, std::string_view b) { return edit_table(a, b, false); }

std::string nearest_word(std::string_view word, const std::vector<std::string>& candidates) {
  const std::string folded = lower(word);
  for (const auto& candidate : candidates) {
    if (lower(candidate) == folded) return candidate;  // only the case differs
  }
  const int limit = std::max(1, static_cast<int>(word.size() / 3));
  std::string best;
  int best_distance = limit + 1;
  for (const auto& candidate : candidates) {
    // A swap of neighbouring letters ('rse' for 'res') is one slip, not two.
    const int distance = edit_table(word, candidate, true);
    if (distance < best_distance) {
      best = candidate;
      best_distance = distance;
    }
  }
  if (!best.empty()) return best;
  // A long spelling of a short keyword ('resistor' for 'res', 'capacitor' for 'cap').
  for (const auto& candidate : candidates)
    if (candidate.size() >= 3 && folded.size() > candidate.size() &&
        folded.compare(0, candidate.size(), lower(candidate)) == 0)
      return candidate;
  return best;
}

std::string choice_hint(std::string_view word, const std::vector<std::string>& choices,
                        std::string_view label) {
  if (std::string near = nearest_word(word, choices); !near.empty()) return "did you mean '" + near + "'?";
  if (choices.empty()) return {};
  std::string out(label);
  out += ':';
  for (const auto& choice : choices) out += ' ' + choice;
  return out;
}

}  // namespace tacet
