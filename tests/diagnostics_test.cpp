// The one diagnostic shape: location, source line, caret line, hint.
#include <catch2/catch.hpp>

#include "tacet/language/diagnostics.hpp"

using tacet::Diagnostics;
using tacet::SourceManager;

namespace {

/// One error on a one-file SourceManager, rendered.
std::string render_one(const std::string& text, std::uint32_t offset, std::uint32_t length,
                       const std::string& message, const std::string& hint = {}) {
  SourceManager sources;
  const int id = sources.add("netlists/demo.tacet", text);
  Diagnostics diagnostics(sources);
  diagnostics.error({id, offset}, message, hint, length);
  return diagnostics.render_all();
}

}  // namespace

TEST_CASE("a diagnostic shows location, source line, underline and hint", "[diagnostics]") {
  const std::string text = "title \"x\"\ncapp C1 (a, gnd) 1n\n";
  CHECK(render_one(text, 10, 4, "unknown statement 'capp'", "did you mean 'cap'?") ==
        "netlists/demo.tacet:2:1: error: unknown statement 'capp'\n"
        "capp C1 (a, gnd) 1n\n"
        "^~~~\n"
        "hint: did you mean 'cap'?\n");
}

TEST_CASE("without a hint there is no hint line", "[diagnostics]") {
  CHECK(render_one("res R1 (a, b)\n", 13, 1, "expected a value after 'res R1 (a, b)'") ==
        "netlists/demo.tacet:1:14: error: expected a value after 'res R1 (a, b)'\n"
        "res R1 (a, b)\n"
        "             ^\n");
}

TEST_CASE("tabs before the caret stay tabs so the caret lines up", "[diagnostics]") {
  CHECK(render_one("res\tR1\t(a, b) 1x\n", 7, 1, "m") ==
        "netlists/demo.tacet:1:8: error: m\n"
        "res\tR1\t(a, b) 1x\n"
        "   \t  \t^\n");
}

TEST_CASE("columns and underlines count UTF-8 characters", "[diagnostics]") {
  // "10kΩ" is five bytes (Ω is CE A9 in UTF-8, RFC 3629) but four characters.
  const std::string text = "res R1 (a, b) 10k\xCE\xA9 \xC2\xB5x\n";
  CHECK(render_one(text, 14, 5, "m") ==
        "netlists/demo.tacet:1:15: error: m\n" + text.substr(0, text.size() - 1) +
            "\n"
            "              ^~~~\n");
  // After "µ" (two bytes) the column of 'x' is one more, not two.
  CHECK(render_one(text, 22, 1, "m").substr(0, 30) == "netlists/demo.tacet:1:21: erro");
}

TEST_CASE("the underline stops at the end of the line", "[diagnostics]") {
  CHECK(render_one("ab cd\nef\n", 3, 40, "m") ==
        "netlists/demo.tacet:1:4: error: m\n"
        "ab cd\n"
        "   ^~\n");
}

TEST_CASE("a diagnostic without a file is one line and the hint", "[diagnostics]") {
  SourceManager sources;
  Diagnostics diagnostics(sources);
  diagnostics.error({}, "unknown parameter 'rgg' in --set", "did you mean 'rg'?");
  CHECK(diagnostics.render_all() ==
        "error: unknown parameter 'rgg' in --set\n"
        "hint: did you mean 'rg'?\n");
}

TEST_CASE("warnings and notes name their severity and are not errors", "[diagnostics]") {
  SourceManager sources;
  const int id = sources.add("a.tacet", "x\n");
  Diagnostics diagnostics(sources);
  diagnostics.warning({id, 0}, "w");
  diagnostics.add({tacet::Severity::note, {id, 0}, 1, "n", {}});
  CHECK_FALSE(diagnostics.has_errors());
  CHECK(diagnostics.error_count() == 0);
  CHECK(diagnostics.render_all() == "a.tacet:1:1: warning: w\nx\n^\na.tacet:1:1: note: n\nx\n^\n");
}

TEST_CASE("all diagnostics render in the order reported and errors are counted", "[diagnostics]") {
  SourceManager sources;
  const int id = sources.add("a.tacet", "one\ntwo\n");
  Diagnostics diagnostics(sources);
  diagnostics.error({id, 4}, "second line");
  diagnostics.warning({id, 0}, "first line");
  diagnostics.error({id, 0}, "again", {}, 3);
  CHECK(diagnostics.has_errors());
  CHECK(diagnostics.error_count() == 2);
  CHECK(diagnostics.render_all() ==
        "a.tacet:2:1: error: second line\ntwo\n^\n"
        "a.tacet:1:1: warning: first line\none\n^\n"
        "a.tacet:1:1: error: again\none\n^~~\n");
}

TEST_CASE("edit distance is the Levenshtein distance", "[diagnostics]") {
  // kitten -> sitting = 3: the classic worked example (V. I. Levenshtein, 1965,
  // as given in most algorithm texts; from memory).
  CHECK(tacet::edit_distance("kitten", "sitting") == 3);
  CHECK(tacet::edit_distance("", "abc") == 3);
  CHECK(tacet::edit_distance("cap", "cap") == 0);
  CHECK(tacet::edit_distance("capp", "cap") == 1);
  CHECK(tacet::edit_distance("flaw", "lawn") == 2);
}

TEST_CASE("the nearest word is offered only when it is close enough", "[diagnostics]") {
  const std::vector<std::string> words{"title", "ambient", "res", "cap", "ind", "opamp"};
  CHECK(tacet::nearest_word("capp", words) == "cap");
  CHECK(tacet::nearest_word("ambeint", words) == "ambient");  // distance 2, limit 7/3 = 2
  CHECK(tacet::nearest_word("ambxxnt", words) == "ambient");  // two substitutions
  CHECK(tacet::nearest_word("xxxxxxx", words).empty());
  CHECK(tacet::nearest_word("zap", {"res", "cap"}) == "cap");
  CHECK(tacet::nearest_word("zzp", {"res", "cap"}).empty());   // distance 2 > limit 1
  CHECK(tacet::nearest_word("anything", {}).empty());
}

TEST_CASE("a difference of case only is the nearest of all", "[diagnostics]") {
  // "RES" is three edits from "res" but only its case differs; "REX" would
  // otherwise be as near.
  CHECK(tacet::nearest_word("RES", {"rex", "res"}) == "res");
  CHECK(tacet::nearest_word("Opamp", {"opamp", "opam"}) == "opamp");
}

TEST_CASE("a hint counts a swap of neighbouring letters as one edit", "[diagnostics]") {
  // Transposition of two adjacent letters is one of the four commonest single
  // typing errors (F. J. Damerau, 1964, CACM 7(3); from memory), so 'rse'
  // finds 'res' although their Levenshtein distance is 2.
  CHECK(tacet::edit_distance("rse", "res") == 2);
  CHECK(tacet::nearest_word("rse", {"res", "cap"}) == "res");
  CHECK(tacet::nearest_word("rgian", {"rgain", "rf"}) == "rgain");
  CHECK(tacet::nearest_word("sre", {"res"}).empty());  // two swaps away
}

TEST_CASE("a long spelling of a short keyword suggests the keyword", "[diagnostics]") {
  const std::vector<std::string> keywords{"res", "cap", "ind", "vsrc"};
  CHECK(tacet::nearest_word("resistor", keywords) == "res");
  CHECK(tacet::nearest_word("capacitor", keywords) == "cap");
  CHECK(tacet::nearest_word("inductor", keywords) == "ind");
  CHECK(tacet::nearest_word("zzzz", keywords).empty());
}

TEST_CASE("a hint names the nearest choice, else lists them all", "[diagnostics]") {
  const std::vector<std::string> options{"tol", "noiseless"};
  CHECK(tacet::choice_hint("tole", options, "options") == "did you mean 'tol'?");
  CHECK(tacet::choice_hint("zzzzzz", options, "options") == "options: tol noiseless");
  CHECK(tacet::choice_hint("zzzzzz", {}, "options").empty());
}

TEST_CASE("after a hundred diagnostics the rest are counted, not kept", "[diagnostics]") {
  SourceManager sources;
  const int id = sources.add("a.tacet", "res R1 (a, b) 1k\n");
  Diagnostics diagnostics(sources);
  for (int i = 0; i < 5000; ++i) diagnostics.error({id, 0}, "duplicate", {}, 3);
  CHECK(diagnostics.error_count() == 5000);
  CHECK(diagnostics.all().size() == Diagnostics::kMostKept);
  const std::string text = diagnostics.render_all();
  CHECK(text.find("note: 4900 more errors and 0 other messages not shown") != std::string::npos);
}

TEST_CASE("a very long quoted name is shown by its ends", "[diagnostics]") {
  const std::string name(200000, 'x');
  const std::string text = render_one("res " + name + "\n", 4, 5, "no element named '" + name + "'");
  CHECK(text.size() < 600);
  CHECK(text.find("'xxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx...xxxxxxxxxxxxxxxx'") != std::string::npos);
}

TEST_CASE("the nearest-name hint skips names far longer than any identifier", "[diagnostics]") {
  CHECK(tacet::nearest_word(std::string(200000, 'r'), {"res", "cap"}).empty());
  CHECK(tacet::nearest_word("res", {std::string(200000, 'r')}).empty());
}
