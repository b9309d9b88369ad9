#include "tacet/common/input_files.hpp"

#include <filesystem>
#include <mutex>
#include <set>

namespace tacet {

namespace {

std::mutex& guard() {
  static std::mutex m;
  return m;
}

std::set<std::string>& files() {
  static std::set<std::string> read;
  return read;
}

std::string real_path(const std::string& path) {
  std::error_code ec;
  auto real = std::filesystem::weakly_canonical(path, ec);
  return ec ? path : real.string();
}

}  // namespace

void note_input_file(const std::string& path) {
  const std::string real = real_path(path);
  std::lock_guard lock(guard());
  files().insert(real);
}

bool is_input_file(const std::string& path) {
  const std::string real = real_path(path);
  std::lock_guard lock(guard());
  return files().count(real) != 0;
}

}  // namespace tacet
