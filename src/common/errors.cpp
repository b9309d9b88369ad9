#include "tacet/common/errors.hpp"

#include <utility>

#include <fmt/format.h>

#include "tacet/common/format.hpp"

namespace tacet {

namespace {

std::string rendered(const std::string& sentence, const std::string& hint) {
  return "error: " + sentence + "\n" + (hint.empty() ? "" : "hint: " + hint + "\n");
}

}  // namespace

Error::Error(ExitStatus status, std::string sentence, std::string hint)
    : std::runtime_error(rendered(sentence, hint)),
      status_(status),
      sentence_(std::move(sentence)),
      hint_(std::move(hint)) {}

Error::Error(ExitStatus status, std::string text, Rendered)
    : std::runtime_error(text), status_(status), sentence_(std::move(text)), prerendered_(true) {}

InputError InputError::usage(std::string sentence, std::string hint) {
  return {ExitStatus::bad_input, std::move(sentence), std::move(hint)};
}

InputError InputError::bad_value(std::string_view flag, std::string_view text,
                                 std::string_view expected, std::string hint) {
  return usage(fmt::format("{} '{}' is not {}", flag, text, expected), std::move(hint));
}

InputError InputError::unknown(std::string_view what, std::string_view name,
                               std::string_view where, std::string_view near) {
  return usage(fmt::format("unknown {} '{}' in {}", what, name, where),
               near.empty() ? std::string{} : fmt::format("did you mean '{}'?", near));
}

InputError InputError::no_format(std::string_view command, std::string_view format,
                                 std::string_view formats) {
  return usage(fmt::format("{} has no --format '{}'", command, format),
               fmt::format("--format {}", formats));
}

InputError InputError::cannot_write(std::string_view path, std::string_view reason) {
  return usage(reason.empty() ? fmt::format("cannot write '{}'", path)
                              : fmt::format("cannot write '{}': {}", path, reason));
}

InputError InputError::diagnostics(std::string rendered) {
  return {ExitStatus::bad_input, std::move(rendered), Rendered{}};
}

InputError InputError::on_side(std::string_view side) const {
  if (prerendered()) return diagnostics(fmt::format("{}:\n{}", side, sentence()));
  return usage(fmt::format("{}: {}", side, sentence()), hint());
}

SolveError SolveError::unsolvable(std::string_view reason, std::string hint) {
  return {ExitStatus::unsolvable, fmt::format("circuit cannot be solved: {}", reason),
          std::move(hint)};
}

SolveError SolveError::unsolvable_at(double f, std::string_view reason, std::string hint) {
  const std::string at = f == 0 ? std::string("DC") : format_si(f) + "Hz";
  return {ExitStatus::unsolvable, fmt::format("circuit cannot be solved at {}: {}", at, reason),
          std::move(hint)};
}

}  // namespace tacet
