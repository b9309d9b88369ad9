#pragma once
// elaborate: syntax trees -> flat Circuit. Reads includes, evaluates params,
// decodes and checks units, resolves models, expands blocks into dotted names
// and applies --set overrides. Reports every semantic error at its position.

#include <optional>
#include <string>
#include <vector>

#include "tacet/circuit/circuit.hpp"
#include "tacet/language/diagnostics.hpp"
#include "tacet/language/source.hpp"

namespace tacet {

/// `--set NAME=VALUE`: NAME is a param, an element ("R1", "F1.R1") or a model
/// parameter ("quiet_bipolar.en"); VALUE is an expression of the language.
struct Override {
  std::string name;
  std::string value;
};

struct ElaborateOptions {
  std::vector<Override> overrides;
  std::optional<double> ambient_celsius;  ///< --ambient, wins over the netlist's
  /// --confine-includes: every file read must lie in this folder once symlinks
  /// are resolved; empty: anywhere the user can read.
  std::string confine_includes;
};

/// Parses `path` (through `reader`, so tests can stay in memory) and everything
/// it includes, and elaborates it. Returns nullopt when any error was reported.
std::optional<Circuit> elaborate_file(const std::string& path, FileReader& reader,
                                      SourceManager& sources, Diagnostics& diagnostics,
                                      const ElaborateOptions& options = {});

/// elaborate_file from the disk, throwing InputError with the rendered
/// diagnostics when there are errors; warnings are written to `warnings`.
Circuit load_circuit(const std::string& path, const ElaborateOptions& options,
                     std::string* warnings = nullptr);

}  // namespace tacet
