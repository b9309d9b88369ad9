// Front-end benchmark on bench/gen_chain.py's op-amp chains: what it costs to
// turn a netlist file into a Circuit, per element, and what a whole small
// process costs against the bare solves it exists for.
//
// For each size it writes the chain (python3 bench/gen_chain.py N FILE) and
// prints, in CPU microseconds per element (the process's user + system time,
// the fairer figure on a shared machine), each the fastest of three repeats
// of at least 0.3 s:
//   read:      the file into memory (DiskFileReader)
//   parse:     parse_netlist on the text (the X3 grammar, the syntax tree)
//   elaborate: the rest of load_circuit: syntax tree -> Circuit
//   front end: load_circuit as a command calls it (read + parse + elaborate)
// and, in milliseconds, the MNA build of the circuit (pattern and checks).
//
// With --tacet PATH it then compares, on the 1k chain (or on the sizes given
// with --sweep-sizes), the whole process `tacet ac FILE --probe OUT --from 1
// --to 100k --points 100` (CPU time of the child, fastest of five) against the
// bare KLU refactor + solve of the same matrix at the same 100 points (the
// loop of bench_ac.cpp: assemble + refactor + solve minus assemble alone).
//
// Usage: tacet_bench_frontend [--tacet PATH] [--sweep-sizes N,N] [ELEMENTS...]
//        (default elements 1000 10000 100000)

#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "tacet/elaborate/elaborate.hpp"
#include "tacet/language/diagnostics.hpp"
#include "tacet/language/parser.hpp"
#include "tacet/language/source.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/solve/sparse_solver.hpp"

#ifndef TACET_SOURCE_DIR
#error "TACET_SOURCE_DIR must name the source tree (for bench/gen_chain.py)"
#endif

namespace {

constexpr double kMinSeconds = 0.3;
constexpr int kRepeats = 3;
constexpr int kPoints = 100;
constexpr int kProcessRuns = 5;

double cpu_seconds() {
  timespec t{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return static_cast<double>(t.tv_sec) + 1e-9 * static_cast<double>(t.tv_nsec);
}

/// CPU seconds per call of `run`, repeated until kMinSeconds have passed; the
/// fastest of kRepeats such measurements.
template <typename Run>
double seconds_per_call(Run run) {
  double best = 1e300;
  for (int repeat = 0; repeat < kRepeats; ++repeat) {
    long calls = 0;
    const double start = cpu_seconds();
    double elapsed = 0;
    while (elapsed < kMinSeconds || calls == 0) {
      run();
      ++calls;
      elapsed = cpu_seconds() - start;
    }
    best = std::min(best, elapsed / static_cast<double>(calls));
  }
  return best;
}

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream out;
  out << in.rdbuf();
  return out.str();
}

std::string write_chain(int elements, const std::string& folder) {
  const std::string path = folder + "/chain_" + std::to_string(elements) + ".tacet";
  const std::string command = "python3 '" TACET_SOURCE_DIR "/bench/gen_chain.py' " +
                              std::to_string(elements) + " '" + path + "'";
  if (std::system(command.c_str()) != 0) {
    std::fprintf(stderr, "could not run: %s\n", command.c_str());
    std::exit(1);
  }
  return path;
}

/// The chain's output node: the one its load resistor RL hangs on.
std::string output_node(const std::string& text) {
  const std::string mark = "res RL (";
  const auto at = text.find(mark);
  if (at == std::string::npos) std::abort();
  const auto begin = at + mark.size();
  return text.substr(begin, text.find(',', begin) - begin);
}

void front_end_row(int elements, const std::string& path) {
  const std::string text = read_text(path);
  const tacet::Circuit circuit = tacet::load_circuit(path, {});
  const double count = static_cast<double>(circuit.elements.size());
  const double read = seconds_per_call([&] {
    tacet::DiskFileReader reader;
    if (reader.read(path)->size() != text.size()) std::abort();
  });
  const double parse = seconds_per_call([&] {
    tacet::SourceManager sources;
    tacet::Diagnostics diagnostics(sources);
    if (!tacet::parse_netlist(text, 0, diagnostics)) std::abort();
  });
  const double whole = seconds_per_call([&] {
    if (tacet::load_circuit(path, {}).elements.size() != circuit.elements.size()) std::abort();
  });
  const double mna = seconds_per_call([&] { const tacet::MnaSystem system(circuit); });
  const double us = 1e6 / count;
  std::printf("%9d %9.0f %9.3f %9.3f %10.3f %10.3f %10.1f %9.2f\n", elements, count, read * us,
              parse * us, (whole - read - parse) * us, whole * us, whole * 1e3, mna * 1e3);
  std::fflush(stdout);
}

std::vector<double> sweep_frequencies() {
  // 1 Hz .. 100 kHz, 100 evenly spaced points: what `--from 1 --to 100k --points 100` sweeps.
  std::vector<double> out;
  for (int k = 0; k < kPoints; ++k) out.push_back(1.0 + (1e5 - 1.0) * k / (kPoints - 1));
  return out;
}

/// Refactor + solve of the chain's matrix at the 100 points, in CPU seconds.
double bare_klu_seconds(const tacet::Circuit& circuit) {
  const tacet::MnaSystem mna(circuit);
  auto lu = tacet::make_unchecked_sparse_lu(tacet::SolverKind::klu);
  lu->analyse(mna.pattern());
  std::vector<std::complex<double>> values(static_cast<std::size_t>(mna.pattern().nonzeros()));
  std::vector<std::complex<double>> b(static_cast<std::size_t>(mna.size())), x(b.size());
  mna.excitation(b.data());
  const auto frequencies = sweep_frequencies();
  auto passes = [&](bool solve) {
    for (double f : frequencies) {
      mna.assemble({0, 2 * 3.14159265358979323846 * f}, values.data());
      if (!solve) continue;
      x = b;
      lu->factor(values.data());
      lu->solve(x.data());
    }
  };
  passes(true);  // the first, pivoting factorisation: not part of the bare figure
  return seconds_per_call([&] { passes(true); }) - seconds_per_call([&] { passes(false); });
}

/// The fastest CPU time (user + system) of kProcessRuns runs of `argv`.
double process_cpu_seconds(const std::vector<std::string>& argv) {
  double best = 1e300;
  std::fflush(stdout);  // else the child's exit flushes our buffered lines a second time
  for (int run = 0; run < kProcessRuns + 1; ++run) {  // the first is a warm-up
    const pid_t child = fork();
    if (child == 0) {
      std::freopen("/dev/null", "w", stdout);
      std::vector<char*> args;
      for (const std::string& a : argv) args.push_back(const_cast<char*>(a.c_str()));
      args.push_back(nullptr);
      execv(args[0], args.data());
      std::_Exit(127);
    }
    int status = 0;
    rusage usage{};
    wait4(child, &status, 0, &usage);
    if (!WIFEXITED(status) || WEXITSTATUS(status) != 0) {
      std::fprintf(stderr, "%s exited with %d\n", argv[0].c_str(), WEXITSTATUS(status));
      std::exit(1);
    }
    const double seconds = static_cast<double>(usage.ru_utime.tv_sec + usage.ru_stime.tv_sec) +
                           1e-6 * static_cast<double>(usage.ru_utime.tv_usec + usage.ru_stime.tv_usec);
    if (run > 0) best = std::min(best, seconds);
  }
  return best;
}

void sweep_row(int elements, const std::string& path, const std::string& tacet) {
  const std::string text = read_text(path);
  const tacet::Circuit circuit = tacet::load_circuit(path, {});
  const double bare = bare_klu_seconds(circuit);
  const double whole = process_cpu_seconds(
      {tacet, "ac", path, "--probe", output_node(text), "--from", "1", "--to", "100k", "--points",
       std::to_string(kPoints)});
  const double empty = process_cpu_seconds({tacet, "--version"});
  std::printf("%9d %12.2f %12.2f %12.2f %7.2f\n", elements, bare * 1e3, whole * 1e3, empty * 1e3,
              whole / bare);
  std::fflush(stdout);
}

std::vector<int> split_sizes(const std::string& list) {
  std::vector<int> out;
  std::stringstream in(list);
  for (std::string item; std::getline(in, item, ',');) out.push_back(std::stoi(item));
  return out;
}

}  // namespace

int main(int argc, char** argv) {
  std::string tacet;
  std::vector<int> sizes, sweep_sizes{1000};
  for (int k = 1; k < argc; ++k) {
    const std::string arg = argv[k];
    if (arg == "--tacet" && k + 1 < argc) tacet = argv[++k];
    else if (arg == "--sweep-sizes" && k + 1 < argc) sweep_sizes = split_sizes(argv[++k]);
    else sizes.push_back(std::atoi(argv[k]));
  }
  if (sizes.empty()) sizes = {1000, 10000, 100000};
  char folder_template[] = "/tmp/tacet_bench_frontend_XXXXXX";
  const std::string folder = mkdtemp(folder_template);

  std::printf("Front end on bench/gen_chain.py chains, CPU microseconds per element\n");
  std::printf("%9s %9s %9s %9s %10s %10s %10s %9s\n", "elements", "actual", "read", "parse",
              "elaborate", "front end", "total ms", "mna ms");
  for (int elements : sizes) front_end_row(elements, write_chain(elements, folder));

  if (!tacet.empty()) {
    std::printf("\n100-point AC sweep as a whole process against bare KLU, CPU ms\n");
    std::printf("%9s %12s %12s %12s %7s\n", "elements", "bare klu", "tacet ac", "--version",
                "ratio");
    for (int elements : sweep_sizes) sweep_row(elements, write_chain(elements, folder), tacet);
  }
  std::filesystem::remove_all(folder);
  return 0;
}
