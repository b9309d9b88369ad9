#pragma once
// Nearest-name hints for unknown keywords, names and options, shared by the
// parser, elaboration and the analyses that resolve names.

#include <string>
#include <string_view>
#include <vector>

namespace tacet {

/// Levenshtein distance, for "did you mean" hints.
int edit_distance(std::string_view a, std::string_view b);
/// The candidate nearest to `word`, or empty when none is close enough to help.
std::string nearest_word(std::string_view word, const std::vector<std::string>& candidates);
/// The hint for a word that is none of `choices`: "did you mean 'x'?" for the
/// nearest one, else "<label>: a b c" listing them all, or "" without choices.
std::string choice_hint(std::string_view word, const std::vector<std::string>& choices,
                        std::string_view label);

}  // namespace tacet
