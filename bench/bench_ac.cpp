// AC sweep benchmark on a generated RC ladder (vibration-logger anti-alias
// chain stretched to N sections): series R, shunt C, a source at the input.
//
// For each size and backend it prints microseconds per frequency point for
//   bare:  numeric refactor + solve on values assembled beforehand (assembly
//          time subtracted), after a first untimed pass that does the full
//          factorisation
//   sweep: the whole run_ac (MNA build, analysis, assemble, factor, solve, probe)
// their ratio (each the fastest of three repeats), and heap allocations per
// point inside run_ac, from two sweeps of different lengths: operator new
// calls (replaced below) plus SuiteSparse's mallocs (through its
// SuiteSparse_config hooks). Eigen's own aligned mallocs are not counted.
//
// Noise section: the whole run_noise on the same ladder, points and probe
// (every resistor is a contributor, so contributors = sections), against
// run_ac: the ratio of the two sweeps, and the ratio per solved frequency
// (run_noise also solves at the band integral's points, over the same
// 1 Hz .. 100 MHz; their number is printed).
//
// SVG section: run_ac over 2000 points against ac_svg of its result, on
// ladders of 10 and 1000 sections, with one probe and with four.
//
// Netlist loop section (`--loop FILE...`, for bench/gen_chain.py's chains):
// T of a sample of the netlist's op amps (at most kLoopSample, spread evenly
// over the chain) at the 100 points, on one LoopGain (one factorisation a
// point, one solve per op amp), against run_ac of the same circuit at its
// first spec's probe; then a whole run_loop of the sample (sweep, the scan
// grid shared by the op amps, every crossover's bisection).
//
// Bare section (`bare FILE PER_DECADE`, for bench/threads.py): the bare KLU
// refactor + solve of the netlist's matrix, single thread, over the log sweep
// 1 Hz .. 100 MHz at PER_DECADE points a decade: total milliseconds, the
// yardstick whole-process `tacet ac --threads N` is measured against.
//
// Usage: tacet_bench [SIZE...]     (default 10 1000 100000; 100 log points 1 Hz..100 MHz)
//        tacet_bench bare FILE PER_DECADE
//        tacet_bench --loop FILE... (the netlist loop section alone)
//        tacet_bench sensitivity [ELEMENTS...]   (default 10000 100000)
// buffered RC chain, run_sensitivity at one frequency (every parameter by one
// adjoint solve) against run_ac at that one frequency, both whole (MNA build,
// symbolic analysis, factorisation, solves); then the per-frequency part
// alone, on a response already built: TransferDerivatives::at against
// FrequencyResponse::at, alternating two frequencies so each call refactors.
//


#include <SuiteSparse_config.h>
#include <dlfcn.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <new>
#include <string>
#include <vector>

#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/loop.hpp"
#include "tacet/solve/mna.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "tacet/analysis/sensitivity.hpp"
#include "tacet/solve/response.hpp"
#include "tacet/report/write_svg.hpp"

namespace {

std::size_t g_allocations = 0;

void* counted_malloc(std::size_t size) {
  ++g_allocations;
  return std::malloc(size);
}
void* counted_calloc(std::size_t count, std::size_t size) {
  ++g_allocations;
  return std::calloc(count, size);
}
void* counted_realloc(void* p, std::size_t size) {
  ++g_allocations;
  return std::realloc(p, size);
}

// SuiteSparse allocates through the hooks in its global SuiteSparse_config.
// It lives in libsuitesparseconfig, which the build links only indirectly
// (through libklu), so it is looked up at run time rather than named.
void count_suitesparse_allocations() {
  auto* config = static_cast<SuiteSparse_config_struct*>(dlsym(RTLD_DEFAULT, "SuiteSparse_config"));
  if (config == nullptr) {
    std::fprintf(stderr, "SuiteSparse_config not found: KLU's allocations are not counted\n");
    return;
  }
  config->malloc_func = counted_malloc;
  config->calloc_func = counted_calloc;
  config->realloc_func = counted_realloc;
}

}  // namespace

void* operator new(std::size_t size) {
  ++g_allocations;
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }

namespace {

using Clock = std::chrono::steady_clock;
using tacet::ElementKind;

constexpr int kPoints = 100;
constexpr double kMinSeconds = 0.3;  // repeat small cases until the total is measurable
constexpr int kRepeats = 3;  // report the fastest of these, the least disturbed by other load

template <typename Measure>
double fastest_of_repeats(Measure measure) {
  double best = measure();
  for (int k = 1; k < kRepeats; ++k) best = std::min(best, measure());
  return best;
}

// Built by insert rather than operator+: GCC 12 gives a false -Wrestrict on "R" + to_string.
std::string numbered(const char* prefix, int k) {
  std::string name = std::to_string(k);
  name.insert(0, prefix);
  return name;
}

tacet::Circuit rc_ladder(int sections) {
  tacet::Circuit c;
  auto add = [&](ElementKind kind, std::string name, int a, int b, double value) {
    tacet::Element e;
    e.kind = kind;
    e.name = std::move(name);
    e.nodes = {a, b};
    e.value = value;
    c.elements.push_back(std::move(e));
    return c.elements.size() - 1;
  };
  int previous = c.node("n0");
  c.elements[add(ElementKind::vsource, "Vin", previous, 0, 0)].ac_magnitude = 1;
  for (int k = 1; k <= sections; ++k) {
    const int node = c.node(numbered("n", k));
    add(ElementKind::resistor, numbered("R", k), previous, node, 1e3);
    add(ElementKind::capacitor, numbered("C", k), node, 0, 1e-9);
    previous = node;
  }
  return c;
}

std::vector<double> sweep_frequencies() {
  // 100 log-spaced points over eight decades, ends included.
  tacet::Sweep sweep;
  sweep.kind = tacet::SweepKind::list;
  for (int k = 0; k < kPoints; ++k) sweep.at.push_back(std::pow(10.0, 8.0 * k / (kPoints - 1)));
  return sweep.at;
}

// Factor + solve alone: a timed loop of assemble + factor + solve minus a
// timed loop of assemble only (clock reads per point would cost more than
// the whole solve of a small circuit).
// Microseconds of wall time, or with `cpu` of the process's CPU time (the
// fairer figure on a machine other work shares).
double now_microseconds(bool cpu) {
  if (!cpu) return std::chrono::duration<double, std::micro>(Clock::now().time_since_epoch()).count();
  timespec t{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return 1e6 * static_cast<double>(t.tv_sec) + 1e-3 * static_cast<double>(t.tv_nsec);
}

double bare_microseconds_per_point(const tacet::Circuit& circuit, tacet::SolverKind kind,
                                   const std::vector<double>& frequencies = sweep_frequencies(),
                                   bool cpu = false) {
  const tacet::MnaSystem mna(circuit);
  auto lu = tacet::make_unchecked_sparse_lu(kind);  // the backend alone
  lu->analyse(mna.pattern());
  std::vector<std::complex<double>> values(static_cast<std::size_t>(mna.pattern().nonzeros()));
  std::vector<std::complex<double>> b(static_cast<std::size_t>(mna.size())), x(b.size());
  mna.excitation(b.data());
  auto timed_passes = [&](bool solve, long passes) {
    const double start = now_microseconds(cpu);
    for (long pass = 0; pass < passes; ++pass)
      for (double f : frequencies) {
        mna.assemble({0, 2 * 3.14159265358979323846 * f}, values.data());
        if (!solve) continue;
        x = b;
        lu->factor(values.data());
        lu->solve(x.data());
      }
    return now_microseconds(cpu) - start;
  };
  timed_passes(true, 1);  // first full factorisation and warm caches, not timed
  long passes = 1;
  double with_solve = timed_passes(true, passes);
  while (with_solve < kMinSeconds * 1e6) {
    passes *= 2;
    with_solve = timed_passes(true, passes);
  }
  const double assemble_only = timed_passes(false, passes);
  return (with_solve - assemble_only) / static_cast<double>(passes) /
         static_cast<double>(frequencies.size());
}

// The one-time work of a sweep: MNA build with its checks, symbolic analysis
// and the first, pivoting factorisation, in milliseconds.
double setup_milliseconds(const tacet::Circuit& circuit, tacet::SolverKind kind) {
  const auto start = Clock::now();
  const tacet::MnaSystem mna(circuit);
  auto lu = tacet::make_unchecked_sparse_lu(kind);  // the backend alone
  lu->analyse(mna.pattern());
  std::vector<std::complex<double>> values(static_cast<std::size_t>(mna.pattern().nonzeros()));
  mna.assemble({0, 2 * 3.14159265358979323846}, values.data());
  lu->factor(values.data());
  return std::chrono::duration<double, std::milli>(Clock::now() - start).count();
}

tacet::AcOptions options_for(int sections, tacet::SolverKind kind, int points) {
  tacet::AcOptions options;
  options.sweep.kind = tacet::SweepKind::list;
  options.sweep.at = sweep_frequencies();
  options.sweep.at.resize(static_cast<std::size_t>(points), 1e3);
  options.probes = {numbered("n", sections)};
  options.solver = kind;
  return options;
}

double sweep_microseconds_per_point(const tacet::Circuit& circuit, int sections,
                                    tacet::SolverKind kind) {
  const auto options = options_for(sections, kind, kPoints);
  long runs = 0;
  const auto start = Clock::now();
  while (std::chrono::duration<double>(Clock::now() - start).count() < kMinSeconds || runs == 0) {
    const auto result = tacet::run_ac(circuit, options);
    if (result.traces[0].values.size() != kPoints) std::abort();
    ++runs;
  }
  const double total = std::chrono::duration<double, std::micro>(Clock::now() - start).count();
  return total / static_cast<double>(runs * kPoints);
}

double allocations_per_point(const tacet::Circuit& circuit, int sections, tacet::SolverKind kind) {
  auto count = [&](int points) {
    const auto options = options_for(sections, kind, points);
    const std::size_t before = g_allocations;
    const auto result = tacet::run_ac(circuit, options);
    return static_cast<double>(g_allocations - before);
  };
  return (count(2 * kPoints) - count(kPoints)) / kPoints;
}

// Microseconds per call of `run` (repeated until kMinSeconds have passed).
template <typename Run>
double microseconds_per_call(Run run) {
  long runs = 0;
  const auto start = Clock::now();
  while (std::chrono::duration<double>(Clock::now() - start).count() < kMinSeconds || runs == 0) {
    run();
    ++runs;
  }
  return std::chrono::duration<double, std::micro>(Clock::now() - start).count() /
         static_cast<double>(runs);
}

tacet::NoiseOptions noise_options_for(int sections) {
  tacet::NoiseOptions options;
  options.sweep.kind = tacet::SweepKind::list;
  options.sweep.at = sweep_frequencies();
  options.probe = numbered("n", sections);
  return options;
}

void noise_section(const std::vector<int>& sizes) {
  std::printf("\nNoise on the same ladder and points (KLU), against the AC sweep\n");
  std::printf("%9s  %12s  %10s  %10s  %6s  %8s  %11s\n", "sections", "contributors", "ac ms",
              "noise ms", "ratio", "band pts", "ratio/solve");
  for (int sections : sizes) {
    const auto circuit = rc_ladder(sections);
    const auto ac = options_for(sections, tacet::SolverKind::klu, kPoints);
    const auto noise = noise_options_for(sections);
    const auto probe = tacet::run_noise(circuit, noise);
    const double ac_us =
        fastest_of_repeats([&] { return microseconds_per_call([&] { tacet::run_ac(circuit, ac); }); });
    const double noise_us = fastest_of_repeats(
        [&] { return microseconds_per_call([&] { tacet::run_noise(circuit, noise); }); });
    const double solves = kPoints + probe.band_evaluations;
    std::printf("%9d  %12zu  %10.3f  %10.3f  %6.2f  %8d  %11.2f\n", sections,
                probe.contributors.size(), ac_us / 1e3, noise_us / 1e3, noise_us / ac_us,
                probe.band_evaluations,
                (noise_us / solves) / (ac_us / kPoints));
    std::fflush(stdout);
  }
}

// The picture of a sweep against the sweep: run_ac over 2000 log points, then
// ac_svg of its result (figure, ticks, paths, text), each the fastest of three.
void svg_section() {
  constexpr int kSvgPoints = 2000;
  std::printf("\nSVG of a %d-point sweep (KLU) against the sweep itself\n", kSvgPoints);
  std::printf("%9s  %6s  %10s  %10s  %6s  %9s\n", "sections", "probes", "sweep ms", "svg ms",
              "ratio", "svg kB");
  for (int sections : {10, 1000}) {
    for (int probes : {1, 4}) {
      const auto circuit = rc_ladder(sections);
      tacet::AcOptions options;
      options.sweep.kind = tacet::SweepKind::list;  // 1 Hz .. 100 MHz, log-spaced
      for (int k = 0; k < kSvgPoints; ++k)
        options.sweep.at.push_back(std::pow(10.0, 8.0 * k / (kSvgPoints - 1)));
      for (int k = 0; k < probes; ++k) options.probes.push_back(numbered("n", sections - k));
      const auto result = tacet::run_ac(circuit, options);
      const tacet::ReportContext context{"ladder.tacet", "RC ladder"};
      const double sweep_us = fastest_of_repeats(
          [&] { return microseconds_per_call([&] { tacet::run_ac(circuit, options); }); });
      std::size_t bytes = 0;
      const double svg_us = fastest_of_repeats([&] {
        return microseconds_per_call([&] { bytes = tacet::ac_svg(result, context).size(); });
      });
      std::printf("%9d  %6d  %10.3f  %10.3f  %6.3f  %9.1f\n", sections, probes, sweep_us / 1e3,
                  svg_us / 1e3, svg_us / sweep_us, static_cast<double>(bytes) / 1e3);
      std::fflush(stdout);
    }
  }
}

// A chain of RC sections each buffered by a follower (single-pole op amp).
tacet::Circuit buffered_chain(int stages) {
  tacet::Circuit c;
  tacet::OpAmpModel model;
  model.name = "bench_amp";
  model.gbw = 1e6;
  model.rout = 50;
  c.models.push_back(model);
  auto add = [&](ElementKind kind, std::string name, std::vector<int> nodes, double value) {
    tacet::Element e;
    e.kind = kind;
    e.name = std::move(name);
    e.nodes = std::move(nodes);
    e.value = value;
    e.model = kind == ElementKind::opamp ? 0 : -1;
    c.elements.push_back(std::move(e));
    return c.elements.size() - 1;
  };
  int previous = c.node("b0");
  c.elements[add(ElementKind::vsource, "Vin", {previous, 0}, 0)].ac_magnitude = 1;
  for (int k = 1; k <= stages; ++k) {
    const int rc = c.node(numbered("r", k)), out = c.node(numbered("b", k));
    add(ElementKind::resistor, numbered("R", k), {previous, rc}, 1e3);
    add(ElementKind::capacitor, numbered("C", k), {rc, 0}, 1e-9);
    add(ElementKind::opamp, numbered("U", k), {rc, out, out}, 0);
    add(ElementKind::capacitor, numbered("CL", k), {out, 0}, 1e-9);
    previous = out;
  }
  return c;
}

// T of every op amp at the sweep's points (the sweep part of tacet loop,
// without the crossover searches) against the AC sweep of the same circuit.
void loop_section(const std::vector<int>& stages) {
  std::printf("\nLoop gain of every op amp on a buffered RC chain (KLU), %d points, against AC\n",
              kPoints);
  std::printf("%7s  %8s  %10s  %10s  %8s  %14s\n", "op amps", "unknowns", "ac ms", "loop ms",
              "ratio", "per op amp/pt");
  const auto frequencies = sweep_frequencies();
  for (int n : stages) {
    const auto circuit = buffered_chain(n);
    tacet::AcOptions ac;
    ac.sweep.kind = tacet::SweepKind::list;
    ac.sweep.at = frequencies;
    ac.probes = {numbered("b", n)};
    std::vector<std::size_t> opamps;
    for (std::size_t i = 0; i < circuit.elements.size(); ++i)
      if (circuit.elements[i].kind == ElementKind::opamp) opamps.push_back(i);
    const double ac_us =
        fastest_of_repeats([&] { return microseconds_per_call([&] { tacet::run_ac(circuit, ac); }); });
    const double loop_us = fastest_of_repeats([&] {
      return microseconds_per_call([&] {
        tacet::LoopGain gain(circuit);
        for (double f : frequencies)
          for (std::size_t u : opamps) (void)gain.at(u, f);
      });
    });
    std::printf("%7d  %8d  %10.3f  %10.3f  %8.2f  %14.3f\n", n, tacet::MnaSystem(circuit).size(),
                ac_us / 1e3, loop_us / 1e3, loop_us / ac_us,
                (loop_us - ac_us) / ac_us / static_cast<double>(n));
    std::fflush(stdout);
  }
}

constexpr std::size_t kLoopSample = 20;

// CPU seconds of this (single-threaded) process: on the shared build machine
// the wall clock also counts other people's builds.
double cpu_seconds() {
  timespec t{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return static_cast<double>(t.tv_sec) + 1e-9 * static_cast<double>(t.tv_nsec);
}

double seconds_of(const auto& work) {
  const double start = cpu_seconds();
  work();
  return cpu_seconds() - start;
}

void netlist_loop_section(const std::vector<std::string>& paths) {
  std::printf("Loop gain against AC on netlists, %d points 1 Hz .. 100 MHz (KLU), CPU seconds\n",
              kPoints);
  std::printf("%8s  %8s  %7s  %6s  %9s  %10s  %12s  %12s  %11s\n", "elements", "unknowns", "op amps",
              "sample", "ac s", "sweep s", "per op amp/pt", "all, est. s", "run_loop s");
  const auto frequencies = sweep_frequencies();
  for (const std::string& path : paths) {
    const tacet::Circuit circuit = tacet::load_circuit(path, {});
    std::vector<std::size_t> opamps, sample;
    for (std::size_t i = 0; i < circuit.elements.size(); ++i)
      if (circuit.elements[i].kind == ElementKind::opamp) opamps.push_back(i);
    const std::size_t step = std::max<std::size_t>(1, opamps.size() / kLoopSample);
    for (std::size_t k = 0; k < opamps.size() && sample.size() < kLoopSample; k += step)
      sample.push_back(opamps[k]);
    tacet::AcOptions ac;
    ac.sweep.kind = tacet::SweepKind::list;
    ac.sweep.at = frequencies;
    ac.probes = {circuit.specs.at(0).probe};
    const double ac_s = seconds_of([&] { tacet::run_ac(circuit, ac); });
    const double sweep_s = seconds_of([&] {
      tacet::LoopGain gain(circuit);
      for (double f : frequencies)
        for (std::size_t u : sample) (void)gain.at(u, f);
    });
    // One solve per op amp and point, in units of an AC point (assemble, refactor, solve).
    const double per = (sweep_s - ac_s) / ac_s / static_cast<double>(sample.size());
    const double all = ac_s * (1 + per * static_cast<double>(opamps.size()));
    tacet::LoopOptions options;
    options.sweep = ac.sweep;
    for (std::size_t u : sample) options.opamps.push_back(circuit.elements[u].name);
    const double loop_s = seconds_of([&] { tacet::run_loop(circuit, options); });
    std::printf("%8zu  %8d  %7zu  %6zu  %9.3f  %10.3f  %12.3f  %12.1f  %11.3f\n",
                circuit.elements.size(), tacet::MnaSystem(circuit).size(), opamps.size(),
                sample.size(), ac_s, sweep_s, per, all, loop_s);
  }
}

// run_sensitivity against run_ac at one frequency on the buffered chain of
// about `elements` elements (4 a stage: R, C, op amp, load C; 6 parameters a
// stage: three values, the op amp's gbw, aol and rout).
void sensitivity_section(const std::vector<int>& sizes) {
  std::printf("\nSensitivity at 1 kHz on a buffered RC chain (KLU), against AC at 1 kHz\n");
  std::printf("%9s  %10s  %8s  %10s  %10s  %6s  %12s  %12s  %6s\n", "elements", "parameters",
              "unknowns", "ac1 ms", "sens ms", "ratio", "ac/f ms", "sens/f ms", "ratio");
  for (int elements : sizes) {
    const auto circuit = buffered_chain(std::max(1, elements / 4));
    const std::string out = numbered("b", std::max(1, elements / 4));
    tacet::AcOptions ac;
    ac.sweep.kind = tacet::SweepKind::list;
    ac.sweep.at = {1e3};
    ac.probes = {out};
    tacet::SensitivityOptions sens;
    sens.probe = out;
    sens.at = 1e3;
    const double ac_us =
        fastest_of_repeats([&] { return microseconds_per_call([&] { tacet::run_ac(circuit, ac); }); });
    std::size_t parameters = 0;
    const double sens_us = fastest_of_repeats([&] {
      return microseconds_per_call(
          [&] { parameters = tacet::run_sensitivity(circuit, sens).elements.size(); });
    });
    // Per frequency on a built response: alternate 1 kHz and 2 kHz so each call refactors.
    tacet::FrequencyResponse response(circuit);
    const tacet::Probe probe = tacet::resolve_probe(out, circuit);
    tacet::TransferDerivatives transfer(response);
    std::vector<std::complex<double>> derivatives;
    double f = 1e3;
    const double ac_f_us = fastest_of_repeats([&] {
      return microseconds_per_call([&] { (void)response.at(probe, f = 3e3 - f); });
    });
    const double sens_f_us = fastest_of_repeats([&] {
      return microseconds_per_call(
          [&] { (void)transfer.at(probe, tacet::TransferDrive{}, f = 3e3 - f, derivatives); });
    });
    std::printf("%9zu  %10zu  %8d  %10.3f  %10.3f  %6.2f  %12.3f  %12.3f  %6.2f\n",
                circuit.elements.size(), parameters, response.mna().size(), ac_us / 1e3,
                sens_us / 1e3, sens_us / ac_us, ac_f_us / 1e3, sens_f_us / 1e3,
                sens_f_us / ac_f_us);
    std::fflush(stdout);
  }
}

}  // namespace


// The bare single-thread KLU time of the netlist's sweep, for bench/threads.py.
void bare_section(const std::string& path, int per_decade) {
  const tacet::Circuit circuit = tacet::load_circuit(path, {});
  tacet::Sweep sweep;
  sweep.from = 1;
  sweep.to = 1e8;
  sweep.per_decade = per_decade;
  const auto frequencies = sweep.frequencies();
  const double us = fastest_of_repeats(
      [&] { return bare_microseconds_per_point(circuit, tacet::SolverKind::klu, frequencies); });
  const double cpu_us = fastest_of_repeats(
      [&] { return bare_microseconds_per_point(circuit, tacet::SolverKind::klu, frequencies, true); });
  const auto points = static_cast<double>(frequencies.size());
  std::printf("bare KLU refactor+solve: %zu points, %d unknowns, %.3f us/point, %.3f ms total, "
              "%.3f ms cpu\n",
              frequencies.size(), tacet::MnaSystem(circuit).size(), us, us * points / 1e3,
              cpu_us * points / 1e3);
}

int main(int argc, char** argv) {
  if (argc == 4 && std::string(argv[1]) == "bare") {
    bare_section(argv[2], std::atoi(argv[3]));
    return 0;
  }
  if (argc > 1 && std::string(argv[1]) == "--loop") {
    netlist_loop_section(std::vector<std::string>(argv + 2, argv + argc));
    return 0;
  }
  if (argc > 1 && std::string(argv[1]) == "sensitivity") {
    std::vector<int> elements;
    for (int k = 2; k < argc; ++k) elements.push_back(std::atoi(argv[k]));
    sensitivity_section(elements.empty() ? std::vector<int>{10000, 100000} : elements);
    return 0;
  }
  std::vector<int> sizes;
  for (int k = 1; k < argc; ++k) sizes.push_back(std::atoi(argv[k]));
  if (sizes.empty()) sizes = {10, 1000, 100000};
  count_suitesparse_allocations();
  std::printf("RC ladder, %d log-spaced points 1 Hz .. 100 MHz, microseconds per point\n", kPoints);
  std::printf("%9s  %-6s  %8s  %12s  %12s  %6s  %9s  %9s\n", "sections", "solver", "unknowns",
              "bare us/pt", "sweep us/pt", "ratio", "setup ms", "allocs/pt");
  for (int sections : sizes) {
    const auto circuit = rc_ladder(sections);
    const int unknowns = tacet::MnaSystem(circuit).size();
    for (auto kind : {tacet::SolverKind::klu, tacet::SolverKind::eigen}) {
      const double bare =
          fastest_of_repeats([&] { return bare_microseconds_per_point(circuit, kind); });
      const double sweep =
          fastest_of_repeats([&] { return sweep_microseconds_per_point(circuit, sections, kind); });
      const double setup = fastest_of_repeats([&] { return setup_milliseconds(circuit, kind); });
      std::printf("%9d  %-6s  %8d  %12.2f  %12.2f  %6.2f  %9.3f  %9.1f\n", sections,
                  tacet::to_string(kind), unknowns, bare, sweep, sweep / bare, setup,
                  allocations_per_point(circuit, sections, kind));
      std::fflush(stdout);
    }
  }
  std::vector<int> noise_sizes;
  for (int sections : sizes)
    if (sections <= 10000) noise_sizes.push_back(sections);
  noise_section(noise_sizes);
  svg_section();
  loop_section({1, 10, 100});
  return 0;
}
