#pragma once
// The files this process has read as input (netlists and their includes), by
// real path. Results must never replace an input: `--output` naming the
// netlist, a library it includes, or a symlink to either is refused.

#include <string>

namespace tacet {

/// Records a file the elaboration read; `path` is resolved to its real path.
void note_input_file(const std::string& path);

/// Whether `path` (resolved through symlinks) is a file this process read.
bool is_input_file(const std::string& path);

}  // namespace tacet
