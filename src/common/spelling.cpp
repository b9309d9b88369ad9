// "Did you mean" for every unknown name, wherever it is reported.
#include "tacet/common/spelling.hpp"

#include <algorithm>
#include <cctype>
#include <numeric>
#include <string>
#include <vector>

namespace tacet {

namespace {

std::string lower(std::string_view text) {
  std::string out(text);
  std::transform(out.begin(), out.end(), out.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return out;
}

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
  // No name is this long by intent; a hint would cost its length squared per candidate.
  constexpr std::size_t kLongestHinted = 64;
  if (word.size() > kLongestHinted) return {};
  const int limit = std::max(1, static_cast<int>(word.size() / 3));
  std::string best;
  int best_distance = limit + 1;
  for (const auto& candidate : candidates) {
    // The distance is at least the difference in length: skip the table.
    const auto gap = candidate.size() > word.size() ? candidate.size() - word.size()
                                                    : word.size() - candidate.size();
    if (gap > static_cast<std::size_t>(limit) || candidate.size() > kLongestHinted) continue;
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
