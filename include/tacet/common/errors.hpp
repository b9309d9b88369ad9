#pragma once
// The failures that end a command, each with the exit status it maps to.
// main() catches Error once, prints what() to stderr and exits with status().

#include <stdexcept>
#include <string>

namespace tacet {

enum class ExitStatus : int {
  success = 0,
  spec_failed = 1,   ///< a `spec` did not pass (tacet check)
  bad_input = 2,     ///< the netlist or the command line is wrong
  unsolvable = 3,    ///< the circuit has no unique solution (floating or singular)
};

class Error : public std::runtime_error {
 public:
  Error(const std::string& message, ExitStatus status)
      : std::runtime_error(message), status_(status) {}
  ExitStatus status() const { return status_; }

 private:
  ExitStatus status_;
};

/// Bad netlist or bad command line; the message is already fully rendered.
class InputError : public Error {
 public:
  explicit InputError(const std::string& message) : Error(message, ExitStatus::bad_input) {}
};

/// The circuit cannot be solved; the message names the nodes or elements.
class SolveError : public Error {
 public:
  explicit SolveError(const std::string& message) : Error(message, ExitStatus::unsolvable) {}
};

/// At least one spec failed; the verdict has already been written.
class SpecFailed : public Error {
 public:
  SpecFailed() : Error("", ExitStatus::spec_failed) {}
};

}  // namespace tacet
