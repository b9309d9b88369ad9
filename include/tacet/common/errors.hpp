#pragma once
// The failures that end a command, each with the exit status it maps to, and
// the one place their messages are shaped.
//
// Every message reads the same way:
//
//     error: SENTENCE
//     hint: WHAT TO DO          (when there is one)
//
// each line ending in a newline, so main() prints what() as it is. Netlist
// errors are the exception that proves the rule: the diagnostics renderer has
// already written them as `file:line:col: error: ...`, the source line, a caret
// and the hint, and InputError::diagnostics carries that text unchanged.
//
// Errors are made only through the named constructors below, so a throw site
// states what went wrong and never spells "error: " or a newline itself.

#include <stdexcept>
#include <string>
#include <string_view>

namespace tacet {

enum class ExitStatus : int {
  success = 0,
  spec_failed = 1,   ///< a `spec` did not pass (tacet check)
  bad_input = 2,     ///< the netlist or the command line is wrong
  unsolvable = 3,    ///< the circuit has no unique solution (floating or singular)
};

class Error : public std::runtime_error {
 public:
  ExitStatus status() const { return status_; }
  /// The sentence alone, without "error: " or the hint: for a note inside a
  /// report ("DC: not compared (circuit cannot be solved at DC: ...)").
  const std::string& sentence() const { return sentence_; }
  const std::string& hint() const { return hint_; }
  /// True for text rendered elsewhere (the diagnostics): no sentence of its own.
  bool prerendered() const { return prerendered_; }

 protected:
  /// "error: SENTENCE\n" and "hint: HINT\n" when the hint is not empty.
  Error(ExitStatus status, std::string sentence, std::string hint);
  /// Text already rendered elsewhere (the diagnostics), kept as it is.
  struct Rendered {};
  Error(ExitStatus status, std::string text, Rendered);

 private:
  ExitStatus status_;
  std::string sentence_;
  std::string hint_;
  bool prerendered_ = false;
};

/// Bad netlist or bad command line: exit 2.
class InputError : public Error {
 public:
  /// A problem with the command line or what it asks for, in one sentence:
  /// "--per-decade 0 must be at least 1".
  static InputError usage(std::string sentence, std::string hint = {});
  /// "FLAG 'TEXT' is not EXPECTED": "--from 'x1' is not a frequency".
  static InputError bad_value(std::string_view flag, std::string_view text,
                              std::string_view expected, std::string hint = {});
  /// "unknown WHAT 'NAME' in WHERE", with "did you mean 'NEAR'?" when NEAR is
  /// not empty: "unknown node 'otu' in probe 'otu'".
  static InputError unknown(std::string_view what, std::string_view name, std::string_view where,
                            std::string_view near);
  /// "COMMAND has no --format 'FORMAT'", the hint naming the formats it has.
  static InputError no_format(std::string_view command, std::string_view format,
                              std::string_view formats);
  /// "cannot write 'PATH'[: REASON]".
  static InputError cannot_write(std::string_view path, std::string_view reason = {});
  /// Netlist diagnostics, already rendered with file, line, column and caret.
  static InputError diagnostics(std::string rendered);
  /// The same error said of one side of a comparison: "new revision: ...".
  InputError on_side(std::string_view side) const;

 private:
  using Error::Error;
};

/// The circuit cannot be solved: exit 3. The sentence names the nodes or
/// elements at fault.
class SolveError : public Error {
 public:
  /// "circuit cannot be solved: REASON" (every frequency alike).
  static SolveError unsolvable(std::string_view reason, std::string hint = {});
  /// "circuit cannot be solved at DC: REASON" (f = 0) or "... at 1kHz: REASON".
  static SolveError unsolvable_at(double f, std::string_view reason, std::string hint = {});

 private:
  using Error::Error;
};

/// At least one spec failed (or a diff went beyond --fail-above); the report
/// has already been written, so there is nothing to print: exit 1.
class SpecFailed : public Error {
 public:
  SpecFailed() : Error(ExitStatus::spec_failed, std::string{}, Rendered{}) {}
};

}  // namespace tacet
