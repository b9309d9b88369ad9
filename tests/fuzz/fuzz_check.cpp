// libFuzzer target: one input is one netlist, taken through the pipeline in one
// process (parse, elaborate, every spec measured, the verdict rendered as a table
// and as JSON). The in-process counterpart of fuzz_netlists.py: coverage-guided,
// thousands of inputs a second, for a developer to run for hours.
//
// A clear refusal (the diagnostics, an InputError, a SolveError) is a normal end.
// Anything else that escapes (std::bad_alloc, std::out_of_range, a stray
// exception: what the tool maps to exit 70) aborts, so libFuzzer keeps the input;
// the sanitizers it is built with catch the rest. Build and run: DEVELOPERS.md.

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <exception>
#include <fstream>
#include <iostream>
#include <sstream>
#include <string>

#include "tacet/analysis/check.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "tacet/language/diagnostics.hpp"
#include "tacet/language/source.hpp"
#include "tacet/report/write_check.hpp"

namespace {

// The shipped op-amp library, so `include "parts/opamps.tacet"` in an input
// reaches real models; read once, from TACET_FUZZ_PARTS or the source tree.
std::string& parts_library() {
  static std::string text;
  return text;
}

std::string read_whole(const char* path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream all;
  all << in.rdbuf();
  return all.str();
}

void run_one(const std::string& netlist) {
  tacet::MemoryFileReader reader;
  reader.add("fuzz.tacet", netlist);
  // Both spellings the bundled netlists use (the root ones and examples/).
  reader.add("parts/opamps.tacet", parts_library());
  reader.add("../parts/opamps.tacet", parts_library());
  tacet::SourceManager sources;
  tacet::Diagnostics diagnostics(sources);
  auto circuit = tacet::elaborate_file("fuzz.tacet", reader, sources, diagnostics);
  const std::string rendered = diagnostics.render_all();  // exercises the caret lines too
  if (!circuit || circuit->specs.empty()) return;
  const tacet::CheckResult result = tacet::run_check(*circuit);
  const tacet::ReportContext context{"fuzz.tacet", circuit->title};
  (void)tacet::check_table(result, context);
  (void)tacet::check_json(result, context);
}

}  // namespace

extern "C" int LLVMFuzzerInitialize(int* /*argc*/, char*** /*argv*/) {
  const char* path = std::getenv("TACET_FUZZ_PARTS");
  parts_library() = read_whole(path ? path : TACET_SOURCE_DIR "/netlists/parts/opamps.tacet");
  return 0;
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    run_one(std::string(reinterpret_cast<const char*>(data), size));
  } catch (const tacet::Error&) {
    // a refusal with a message and an exit status of 1..3: what the tool promises
  } catch (const std::exception& e) {
    std::cerr << "fuzz_check: escaped exception (the tool would exit 70): " << e.what() << "\n";
    std::abort();
  }
  return 0;
}
