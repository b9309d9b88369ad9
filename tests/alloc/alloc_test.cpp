// Heap allocations of the analyses that run many times on one structure:
// a spread draw restamps the values and measures again, and what it builds
// per draw should not grow with the circuit. This binary replaces the global
// operator new to count calls, so it is a program of its own (and is not
// built under the sanitizers, which replace operator new themselves).

// The counting operator new below is malloc and its delete free; GCC 12 sees
// inlined allocation pairs through them and warns falsely.
#pragma GCC diagnostic ignored "-Wmismatched-new-delete"

#include <catch2/catch.hpp>

#include <atomic>
#include <cstdlib>
#include <new>
#include <string>
#include <vector>

#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/spread.hpp"
#include "tacet/analysis/spread_draw.hpp"
#include "text_circuit.hpp"

namespace {
std::atomic<long> g_allocations{0};
}  // namespace

void* operator new(std::size_t size) {
  g_allocations.fetch_add(1, std::memory_order_relaxed);
  if (void* p = std::malloc(size == 0 ? 1 : size)) return p;
  throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }

using namespace tacet;

namespace {

template <typename Run>
long allocations_of(Run&& run) {
  const long before = g_allocations.load();
  run();
  return g_allocations.load() - before;
}

// `sections` non-inverting stages in a row, every resistor 1 %, the model's
// gbw spread by 30 %, with a gain, an offset and a rails spec.
Circuit chain(int sections) {
  std::string text =
      "supply +15V -15V\n"
      "model amp opamp { gbw 10MHz aol 110dB vos 100uV ib 10nA ios 1nA swing 1V gbw_tol 30% }\n"
      "vsrc Vin (n0, gnd) ac=1\n";
  for (int k = 0; k < sections; ++k) {
    const std::string i = std::to_string(k), next = std::to_string(k + 1);
    text += "opamp U" + i + " (+n" + i + ", -f" + i + ", n" + next + ") amp\n";
    text += "res RF" + i + " (n" + next + ", f" + i + ") 10k tol=1%\n";
    text += "res RG" + i + " (f" + i + ", gnd) 100k tol=1%\n";
  }
  const std::string last = "n" + std::to_string(sections);
  text += "spec g gain (" + last + ") at=1kHz min=-10dB max=30dB\n";
  text += "spec dc offset (" + last + ") max=10V\n";
  text += "spec swing rails margin=0.5V\n";
  auto e = testing::elaborate_text(text);
  INFO(e.diagnostics);
  REQUIRE(e.circuit);
  return std::move(*e.circuit);
}

long allocations_per_draw(const Circuit& circuit) {
  const SpreadPlan plan = plan_spread(circuit);
  SpreadEvaluator evaluator(circuit, plan);
  std::vector<double> values(circuit.specs.size());
  std::vector<std::uint8_t> pass(circuit.specs.size());
  for (std::uint64_t draw = 0; draw < 2; ++draw) evaluator.evaluate(1, draw, values.data(), pass.data());
  const long eight = allocations_of([&] {
    for (std::uint64_t draw = 2; draw < 10; ++draw) evaluator.evaluate(1, draw, values.data(), pass.data());
  });
  return eight / 8;
}

}  // namespace

TEST_CASE("a bias run into the tables of an earlier run on the same system allocates nothing", "[alloc]") {
  Circuit circuit = chain(40);
  DcSystem dc(circuit);
  BiasResult result;
  run_bias(dc, 1, result);
  for (auto& e : circuit.elements)
    if (e.kind == ElementKind::resistor) e.value *= 1.01;
  dc.restamp();
  CHECK(allocations_of([&] { run_bias(dc, 1, result); }) == 0);
}

TEST_CASE("a spread draw's allocations do not grow with the circuit", "[alloc][spread]") {
  // Names of one length at both sizes (U16 .. U63), so that a short string's
  // inline buffer holds the same notes.
  const long small = allocations_per_draw(chain(16));
  const long large = allocations_per_draw(chain(64));
  INFO("allocations per draw: " << small << " at 16 sections, " << large << " at 64");
  CHECK(large == small);
  CHECK(small <= 4);  // the check's own result: its list of specs and a note per spec
}
