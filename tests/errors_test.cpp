// The one shape of every message that ends a command: "error: SENTENCE\n",
// then "hint: HINT\n" when there is one.

#include "tacet/common/errors.hpp"

#include <catch2/catch.hpp>

#include <string>

using namespace tacet;

TEST_CASE("a usage error is one error line, and a hint line only when there is a hint",
          "[errors]") {
  CHECK(std::string(InputError::usage("--points 1 must be at least 2").what()) ==
        "error: --points 1 must be at least 2\n");
  const InputError with_hint =
      InputError::usage("tacet ac needs at least one --probe", "--probe out");
  CHECK(std::string(with_hint.what()) ==
        "error: tacet ac needs at least one --probe\nhint: --probe out\n");
  CHECK(with_hint.sentence() == "tacet ac needs at least one --probe");
  CHECK(with_hint.hint() == "--probe out");
  CHECK(with_hint.status() == ExitStatus::bad_input);
}

TEST_CASE("a bad flag value quotes the text and says what was expected", "[errors]") {
  CHECK(std::string(InputError::bad_value("--from", "x1", "a frequency", "write 1k").what()) ==
        "error: --from 'x1' is not a frequency\nhint: write 1k\n");
}

TEST_CASE("an unknown name offers the nearest one, or nothing when none is near", "[errors]") {
  CHECK(std::string(InputError::unknown("node", "otu", "probe 'otu'", "out").what()) ==
        "error: unknown node 'otu' in probe 'otu'\nhint: did you mean 'out'?\n");
  CHECK(std::string(InputError::unknown("node", "zz", "probe 'zz'", "").what()) ==
        "error: unknown node 'zz' in probe 'zz'\n");
}

TEST_CASE("a format the command lacks names the formats it has", "[errors]") {
  CHECK(std::string(InputError::no_format("tacet check", "csv", "table or json").what()) ==
        "error: tacet check has no --format 'csv'\nhint: --format table or json\n");
}

TEST_CASE("rendered diagnostics pass through unchanged", "[errors]") {
  const std::string text = "a.tacet:3:1: error: unknown statement 'foo'\nfoo\n^~~\n";
  CHECK(std::string(InputError::diagnostics(text).what()) == text);
  CHECK(InputError::diagnostics(text).prerendered());
}

TEST_CASE("an error said of one side of a diff names the side first and keeps the hint",
          "[errors]") {
  const InputError side =
      InputError::unknown("node", "otu", "probe 'otu'", "out").on_side("new revision");
  CHECK(std::string(side.what()) ==
        "error: new revision: unknown node 'otu' in probe 'otu'\nhint: did you mean 'out'?\n");
}

TEST_CASE("an unsolvable circuit says at which frequency, DC or none", "[errors]") {
  CHECK(std::string(SolveError::unsolvable("node 'x' has no connection to gnd").what()) ==
        "error: circuit cannot be solved: node 'x' has no connection to gnd\n");
  CHECK(std::string(SolveError::unsolvable_at(0, "node 'x' is not finite").what()) ==
        "error: circuit cannot be solved at DC: node 'x' is not finite\n");
  const SolveError at_1k = SolveError::unsolvable_at(1e3, "the matrix is singular");
  CHECK(std::string(at_1k.what()) ==
        "error: circuit cannot be solved at 1kHz: the matrix is singular\n");
  CHECK(at_1k.status() == ExitStatus::unsolvable);
}

TEST_CASE("a failed spec prints nothing more: the report said it", "[errors]") {
  CHECK(std::string(SpecFailed().what()).empty());
  CHECK(SpecFailed().status() == ExitStatus::spec_failed);
}
