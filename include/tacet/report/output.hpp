#pragma once
// Output formats and the one place results reach a file or stdout.

#include <optional>
#include <string>

namespace tacet {

enum class OutputFormat { table, csv, json };
const char* to_string(OutputFormat format);
/// nullopt for an unknown name.
std::optional<OutputFormat> parse_output_format(const std::string& text);

/// What every report header names: the netlist and its title.
struct ReportContext {
  std::string file;
  std::string title;
};

/// The first lines of every table: the title (when there is one), then the file.
std::string report_header(const ReportContext& context);

/// Writes `text` to `path` through a temporary file in the same folder and a
/// rename, so a reader never sees half a file and a failure leaves any old file
/// untouched. An empty path means stdout. Throws InputError when it cannot write.
void write_output(const std::string& path, const std::string& text);

}  // namespace tacet
