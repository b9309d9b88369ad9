#pragma once
// Output formats and the one place results reach a file or stdout.

#include <optional>
#include <string>
#include <vector>

namespace tacet {

/// Every format some analysis may write; which ones a given analysis has is
/// its Writers table (writers.hpp).
enum class OutputFormat { table, csv, json, svg, html };
const char* to_string(OutputFormat format);
/// nullopt for an unknown name.
std::optional<OutputFormat> parse_output_format(const std::string& text);
/// "table", "table or json", "table, csv or json": for help texts and messages.
std::string format_names(const std::vector<OutputFormat>& formats);

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
