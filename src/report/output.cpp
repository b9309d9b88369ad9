#include "tacet/report/output.hpp"

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <random>

#include <fmt/format.h>

#include "tacet/common/errors.hpp"

namespace tacet {

const char* to_string(OutputFormat format) {
  switch (format) {
    case OutputFormat::table: return "table";
    case OutputFormat::csv: return "csv";
    case OutputFormat::json: return "json";
    case OutputFormat::svg: return "svg";
  }
  return "table";
}

std::optional<OutputFormat> parse_output_format(const std::string& text) {
  for (auto f : {OutputFormat::table, OutputFormat::csv, OutputFormat::json, OutputFormat::svg})
    if (text == to_string(f)) return f;
  return std::nullopt;
}

std::string format_names(const std::vector<OutputFormat>& formats) {
  std::string out;
  for (std::size_t k = 0; k < formats.size(); ++k) {
    if (k > 0) out += k + 1 == formats.size() ? " or " : ", ";
    out += to_string(formats[k]);
  }
  return out;
}

std::string report_header(const ReportContext& context) {
  return (context.title.empty() ? "" : context.title + "\n") + context.file + "\n";
}

void write_output(const std::string& path, const std::string& text) {
  if (path.empty()) {
    std::cout << text << std::flush;
    return;
  }
  namespace fs = std::filesystem;
  const fs::path target(path);
  const fs::path folder = target.has_parent_path() ? target.parent_path() : fs::path(".");
  std::random_device entropy;
  const fs::path temporary =
      folder / fmt::format(".{}.tmp{:08x}", target.filename().string(), entropy());
  {
    std::ofstream out(temporary, std::ios::binary);
    out << text;
    out.close();
    if (!out) {
      std::error_code ignored;
      fs::remove(temporary, ignored);
      throw InputError::cannot_write(path);
    }
  }
  std::error_code ec;
  fs::rename(temporary, target, ec);
  if (ec) {
    std::error_code ignored;
    fs::remove(temporary, ignored);
    throw InputError::cannot_write(path, ec.message());
  }
}

}  // namespace tacet
