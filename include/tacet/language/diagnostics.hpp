#pragma once
// One shape for every complaint about the input, from the parser or from
// elaboration, rendered like a compiler's:
//
//   demo.tacet:12:1: error: unknown statement 'capp'
//   capp C1 (a, gnd) 1n
//   ^~~~
//   hint: did you mean 'cap'?

#include <string>
#include <vector>

#include "tacet/common/spelling.hpp"
#include "tacet/language/source.hpp"

namespace tacet {

enum class Severity { error, warning, note };

struct Diagnostic {
  Severity severity = Severity::error;
  SourceLocation where;
  std::uint32_t length = 1;  ///< bytes of source text to underline, as AST lengths are (at least the caret)
  std::string message;
  std::string hint;  ///< empty: no hint line
};

class Diagnostics {
 public:
  explicit Diagnostics(const SourceManager& sources) : sources_(&sources) {}

  void error(SourceLocation where, std::string message, std::string hint = {},
             std::uint32_t length = 1);
  void warning(SourceLocation where, std::string message, std::string hint = {},
               std::uint32_t length = 1);
  /// Keeps the first kMostKept diagnostics; later ones are only counted, so
  /// a file with ten thousand mistakes costs what a hundred do to report.
  void add(Diagnostic d);
  static constexpr std::size_t kMostKept = 100;

  bool has_errors() const;
  int error_count() const;
  const std::vector<Diagnostic>& all() const { return list_; }
  const SourceManager& sources() const { return *sources_; }

  /// One diagnostic as printed: location line, source line, caret line, hint.
  std::string render(const Diagnostic& d) const;
  /// Every diagnostic kept, in the order reported, then how many were not.
  std::string render_all() const;

 private:
  const SourceManager* sources_;
  std::vector<Diagnostic> list_;
  int errors_ = 0;          ///< every error reported, kept or not
  int dropped_errors_ = 0;  ///< errors beyond kMostKept
  int dropped_others_ = 0;
};

}  // namespace tacet
