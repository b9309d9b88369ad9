#include "tacet/report/output.hpp"

#include <csignal>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <random>

#include <fmt/format.h>
#include <unistd.h>

#include "tacet/common/errors.hpp"
#include "tacet/common/input_files.hpp"

namespace tacet {

const char* to_string(OutputFormat format) {
  switch (format) {
    case OutputFormat::table: return "table";
    case OutputFormat::csv: return "csv";
    case OutputFormat::json: return "json";
    case OutputFormat::svg: return "svg";
    case OutputFormat::html: return "html";
  }
  return "table";
}

std::optional<OutputFormat> parse_output_format(const std::string& text) {
  for (auto f : {OutputFormat::table, OutputFormat::csv, OutputFormat::json, OutputFormat::svg,
                 OutputFormat::html})
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

namespace {

namespace fs = std::filesystem;

// The temporary file of the write in progress, for the signal handler: a
// fixed buffer, because a handler may only call async-signal-safe functions.
char g_temporary[4096];

extern "C" void remove_temporary_and_reraise(int signal_number) {
  if (g_temporary[0] != '\0') ::unlink(g_temporary);
  std::signal(signal_number, SIG_DFL);
  std::raise(signal_number);
}

/// While alive, SIGINT and SIGTERM remove the temporary file before the
/// process ends the way it would have.
class TemporaryGuard {
 public:
  explicit TemporaryGuard(const fs::path& temporary) {
    const std::string text = temporary.string();
    if (text.size() < sizeof g_temporary) std::memcpy(g_temporary, text.c_str(), text.size() + 1);
    previous_int_ = std::signal(SIGINT, remove_temporary_and_reraise);
    previous_term_ = std::signal(SIGTERM, remove_temporary_and_reraise);
  }
  ~TemporaryGuard() {
    std::signal(SIGINT, previous_int_);
    std::signal(SIGTERM, previous_term_);
    g_temporary[0] = '\0';
  }
  TemporaryGuard(const TemporaryGuard&) = delete;
  TemporaryGuard& operator=(const TemporaryGuard&) = delete;

 private:
  void (*previous_int_)(int) = SIG_DFL;
  void (*previous_term_)(int) = SIG_DFL;
};

/// A device, a pipe or a socket is written in place: renaming a file over
/// it would replace the device itself (`--output /dev/null` as root).
void write_in_place(const std::string& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
  out.close();
  if (!out) throw InputError::cannot_write(path);
}

/// A regular file (or a new one) is replaced atomically: a temporary file in
/// the same folder, then a rename, so a reader never sees half a file.
void replace_atomically(const std::string& path, const fs::path& target, const std::string& text) {
  const fs::path folder = target.has_parent_path() ? target.parent_path() : fs::path(".");
  if (std::error_code ec; !fs::is_directory(folder, ec))
    throw InputError::cannot_write(path, fmt::format("the folder '{}' does not exist", folder.string()));
  std::random_device entropy;
  const fs::path temporary =
      folder / fmt::format(".{}.tmp{:08x}", target.filename().string(), entropy());
  TemporaryGuard guard(temporary);
  auto fail = [&](const std::string& why) {
    std::error_code ignored;
    fs::remove(temporary, ignored);
    throw InputError::cannot_write(path, why);
  };
  {
    std::ofstream out(temporary, std::ios::binary);
    out << text;
    out.close();
    if (!out) fail({});
  }
  std::error_code ec;
  fs::rename(temporary, target, ec);
  if (ec) fail(ec.message());
}

}  // namespace

void write_output(const std::string& path, const std::string& text) {
  if (path.empty()) {
    std::cout << text << std::flush;
    return;
  }
  if (is_input_file(path))
    throw InputError::usage(fmt::format("--output '{}' is an input of this run", path),
                            "write the results to another file: this one would be replaced");
  std::error_code ec;
  // A symlink is written through to its target, which keeps the link.
  fs::path target = fs::symlink_status(path, ec).type() == fs::file_type::symlink
                        ? fs::weakly_canonical(path, ec)
                        : fs::path(path);
  const auto status = fs::status(target, ec);
  if (fs::exists(status) && !fs::is_regular_file(status)) {
    if (fs::is_directory(status))
      throw InputError::cannot_write(path, "it is a folder");
    write_in_place(path, text);
    return;
  }
  // Read-only is the owner's word that the file stays as it is, even for root,
  // whom access() would let through.
  const bool read_only = (status.permissions() & fs::perms::owner_write) == fs::perms::none;
  if (fs::exists(status) && (read_only || ::access(target.c_str(), W_OK) != 0))
    throw InputError::cannot_write(path, "the file is read-only");
  replace_atomically(path, target, text);
}

}  // namespace tacet
