#pragma once
// Test helper: elaborates netlist text held in memory (no disk), returning the
// circuit or, on errors, nothing and the rendered diagnostics.

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "tacet/elaborate/elaborate.hpp"

namespace tacet::testing {

struct Elaborated {
  std::optional<Circuit> circuit;
  std::string diagnostics;
};

/// Elaborates `text` as main.tacet with `files` beside it, all in memory.
inline Elaborated elaborate_text(const std::string& text,
                                 const std::vector<std::pair<std::string, std::string>>& files = {},
                                 const ElaborateOptions& options = {}) {
  MemoryFileReader reader;
  reader.add("main.tacet", text);
  for (const auto& [path, body] : files) reader.add(path, body);
  SourceManager sources;
  Diagnostics diagnostics(sources);
  auto circuit = elaborate_file("main.tacet", reader, sources, diagnostics, options);
  return {std::move(circuit), diagnostics.render_all()};
}

}  // namespace tacet::testing
