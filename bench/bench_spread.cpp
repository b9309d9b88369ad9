// Spread benchmark: the cost of one Monte Carlo draw against one nominal
// evaluation of the same specs (tacet check's run_check), the allocations per
// draw, and the speed-up of two threads over one, in wall and CPU time.
//
// Usage: tacet_bench_spread NETLIST [RUNS]   (make one with bench/gen_chain.py N FILE --tol)

#include <sys/resource.h>

// The counting operator new below is malloc and its delete free; GCC 12 sees
// the inlined std::map node allocation pair them and warns falsely.
#pragma GCC diagnostic ignored "-Wmismatched-new-delete"

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <map>
#include <new>
#include <string>
#include <vector>

#include "tacet/analysis/check.hpp"
#include "tacet/analysis/spread.hpp"
#include "tacet/elaborate/elaborate.hpp"
#include "tacet/solve/response.hpp"

namespace {

std::size_t g_allocations = 0;  // counted on one thread only (the measurements that read it run one)

using Clock = std::chrono::steady_clock;

double cpu_seconds() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return static_cast<double>(usage.ru_utime.tv_sec + usage.ru_stime.tv_sec) +
         1e-6 * static_cast<double>(usage.ru_utime.tv_usec + usage.ru_stime.tv_usec);
}

struct Timing {
  double wall = 0, cpu = 0;  // seconds
};

template <typename Run>
Timing timed(Run run) {
  const auto start = Clock::now();
  const double cpu = cpu_seconds();
  run();
  return {std::chrono::duration<double>(Clock::now() - start).count(), cpu_seconds() - cpu};
}

// The least disturbed of three by CPU time: the machine is shared.
template <typename Run>
Timing fastest(Run run) {
  Timing best = timed(run);
  for (int k = 1; k < 3; ++k) {
    const Timing t = timed(run);
    if (t.cpu < best.cpu) best = t;
  }
  return best;
}

// The circuit at draw `index`'s values, built as a netlist of them would be:
// what "one nominal evaluation of the same specs" costs at those values.
tacet::Circuit drawn_circuit(const tacet::Circuit& circuit, const tacet::SpreadPlan& plan, std::uint64_t index) {
  tacet::Circuit c = circuit;
  std::vector<double> d;
  tacet::draw_deviations(plan, 1, index, d);
  std::map<std::string, std::size_t> element_of;
  for (std::size_t e = 0; e < c.elements.size(); ++e) element_of[c.elements[e].name] = e;
  std::map<std::string, int> own_model;
  for (std::size_t k = 0; k < plan.parameters.size(); ++k) {
    const auto& p = plan.parameters[k];
    tacet::Element& e = c.elements[element_of.at(p.name)];
    if (p.param == "value") {
      e.value *= 1 + d[k];
      continue;
    }
    if (own_model.try_emplace(p.name, static_cast<int>(c.models.size())).second) {
      c.models.push_back(c.model_of(e));
      e.model = static_cast<int>(c.models.size()) - 1;
    }
    *tacet::model_parameter(c.models[static_cast<std::size_t>(e.model)], p.param) *= 1 + d[k];
  }
  return c;
}

tacet::SpreadOptions spread_options(std::int64_t runs, int threads) {
  tacet::SpreadOptions o;
  o.runs = runs;
  o.seed = 1;
  o.threads = threads;
  return o;
}

}  // namespace

void* operator new(std::size_t size) {
  __atomic_add_fetch(&g_allocations, 1, __ATOMIC_RELAXED);
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }

int main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: tacet_bench_spread NETLIST [RUNS]\n");
    return 2;
  }
  const std::int64_t runs = argc > 2 ? std::atoll(argv[2]) : 200;
  const tacet::Circuit circuit = tacet::load_circuit(argv[1], {});
  const auto plan = tacet::plan_spread(circuit);
  std::printf("%s: %zu elements, %zu specs, %zu values spread, %lld draws\n", argv[1],
              circuit.elements.size(), circuit.specs.size(), plan.parameters.size(),
              static_cast<long long>(runs));

  // Nominal: what tacet check does after elaboration (builds the pattern too),
  // and the same measurement on a response built beforehand.
  const Timing check = fastest([&] { (void)tacet::run_check(circuit); });
  tacet::FrequencyResponse response(circuit);
  tacet::SharedAnalyses shared;
  shared.response = &response;
  const Timing check_shared = fastest([&] {
    response.restamp();
    (void)tacet::run_check(circuit, shared);
  });
  const tacet::Circuit drawn = drawn_circuit(circuit, plan, 0);
  const Timing check_drawn = fastest([&] { (void)tacet::run_check(drawn); });
  // One thread, N and 2N draws: the difference is N draws without the setup
  // (a copy of the circuit, its pattern, the nominal check).
  const std::size_t before = g_allocations;
  (void)tacet::sample_spread(circuit, spread_options(runs, 1));
  const std::size_t middle = g_allocations;
  (void)tacet::sample_spread(circuit, spread_options(2 * runs, 1));
  const std::size_t after = g_allocations;
  const Timing n_draws = fastest([&] { (void)tacet::sample_spread(circuit, spread_options(runs, 1)); });
  const Timing two_n = fastest([&] { (void)tacet::sample_spread(circuit, spread_options(2 * runs, 1)); });
  const double allocations_per_draw =
      static_cast<double>((after - middle) - (middle - before)) / static_cast<double>(runs);
  const double draw_cpu = (two_n.cpu - n_draws.cpu) / static_cast<double>(runs);
  const double draw_wall = (two_n.wall - n_draws.wall) / static_cast<double>(runs);
  // Threads: the same 2N draws on two workers.
  const Timing two_threads = fastest([&] { (void)tacet::sample_spread(circuit, spread_options(2 * runs, 2)); });

  std::printf("nominal check (with pattern build)  %10.3f ms wall %10.3f ms cpu\n", 1e3 * check.wall,
              1e3 * check.cpu);
  std::printf("nominal check (pattern built)       %10.3f ms wall %10.3f ms cpu\n", 1e3 * check_shared.wall,
              1e3 * check_shared.cpu);
  std::printf("check at draw 0's values (new build) %10.3f ms wall %10.3f ms cpu\n", 1e3 * check_drawn.wall,
              1e3 * check_drawn.cpu);
  std::printf("one draw, 1 thread                  %10.3f ms wall %10.3f ms cpu  (cpu: %.2fx the check, "
              "%.2fx the check on a built pattern, %.2fx the check at draw 0's values)\n",
              1e3 * draw_wall, 1e3 * draw_cpu, draw_cpu / check.cpu, draw_cpu / check_shared.cpu,
              draw_cpu / check_drawn.cpu);
  std::printf("%lld draws: 1 thread %.3f s wall %.3f s cpu; 2 threads %.3f s wall %.3f s cpu; wall speed-up "
              "%.2fx, cpu-time ratio %.2f\n",
              static_cast<long long>(2 * runs), two_n.wall, two_n.cpu, two_threads.wall, two_threads.cpu,
              two_n.wall / two_threads.wall, two_threads.cpu / two_n.cpu);
  std::printf("allocations per draw: %.1f\n", allocations_per_draw);
  return 0;
}
