// --threads: ac, noise and check write the same bytes for any number of
// worker threads, and a point's solution does not depend on the points solved
// before it (the property that makes the split safe).
//
// The expected values here are the single-thread run's own output, not
// outside figures: what is checked is that cutting the work changes nothing.
// The physics of each analysis is checked against its outside sources in
// ac_test.cpp, noise_test.cpp and check_test.cpp.

#include <catch2/catch.hpp>

#include <complex>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "tacet/analysis/ac.hpp"
#include "tacet/analysis/bias.hpp"
#include "tacet/analysis/check.hpp"
#include "tacet/analysis/headroom.hpp"
#include "tacet/analysis/noise.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/common/parallel.hpp"
#include "tacet/report/write_ac.hpp"
#include "tacet/report/write_bias.hpp"
#include "tacet/report/write_check.hpp"
#include "tacet/report/write_noise.hpp"
#include "tacet/solve/response.hpp"
#include "tacet/solve/sparse_solver.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using cplx = std::complex<double>;

namespace {

Circuit circuit_of(const std::string& text) {
  auto e = testing::elaborate_text(text);
  INFO(e.diagnostics);
  REQUIRE(e.circuit);
  return *e.circuit;
}

// An LC ladder of `sections` (series 1 uH, shunt 1..7 nF and 1k), ending in a
// load: the pivots KLU takes at 1 mHz, where each inductor's branch row has a
// vanishing diagonal, turn bad on the way to 1 THz, so a sweep over that range
// takes fresh pivots at some points (the test checks that it does).
std::string ladder(int sections) {
  std::string text = "title \"ladder\"\nvsrc Vin (n0, gnd) ac=1\n";
  for (int k = 0; k < sections; ++k) {
    text += fmt::format("ind L{} (n{}, n{}) 1u\n", k, k, k + 1);
    text += fmt::format("cap C{} (n{}, gnd) {}n\n", k, k + 1, 1 + k % 7);
    text += fmt::format("res R{} (n{}, gnd) 1k\n", k, k + 1);
  }
  text += fmt::format("res RL (n{}, gnd) 1M\n", sections);
  return text;
}

AcOptions wide_sweep(int threads) {
  AcOptions o;
  o.sweep.from = 1e-3;
  o.sweep.to = 1e12;
  o.sweep.per_decade = 20;
  o.probes = {"n40", "n3,n7", "i(L5)"};
  o.threads = threads;
  return o;
}

// A small chain of op-amp stages with one spec of many kinds.
std::string chain_with_budget() {
  std::string text = R"(title "chain"
supply +15V -15V
model amp opamp {
  gbw 20MHz  aol 120dB  rout 20ohm
  en 5nV/rtHz  fce 10Hz  in 0.4pA/rtHz  fci 100Hz
  vos 50uV  ib 20nA  ios 2nA  swing 1.5V  slew 10V/us
}
vsrc Vin (in, gnd) ac=1 level=100mVrms band_low=20Hz band_high=20kHz
)";
  std::string node = "in";
  for (int k = 0; k < 3; ++k) {
    text += fmt::format(R"(opamp UA{0} (+{1}, -fb{0}, a{0}) amp
res RF{0} (a{0}, fb{0}) 10k
res RG{0} (fb{0}, gnd) 10k
res RS{0} (a{0}, s{0}) 1k
res RT{0} (s{0}, t{0}) 1k
cap CS{0} (s{0}, o{0}) 200p
cap CT{0} (t{0}, gnd) 100p
opamp UB{0} (+t{0}, -o{0}, o{0}) amp
)",
                        k, node);
    node = fmt::format("o{}", k);
  }
  text += fmt::format(R"(res RL ({0}, gnd) 10k
spec g1k     gain         ({0}) at=1kHz min=17dB max=19dB
spec ph      phase        ({0}) at=10kHz min=-90deg max=0deg
spec flat    flatness     ({0}) from=20Hz to=2kHz ref=1kHz max=1dB
spec corner  upper_corner ({0}) ref=1kHz min=1kHz
spec hiss    noise        ({0}) from=20Hz to=20kHz max=10mV
spec snr     snr          ({0}) from=20Hz to=20kHz input=Vin level=100mV min=20dB
spec dc      offset       ({0}) max=10V
spec swing   rails        margin=0.5V
spec pm0     phase_margin opamp=UA0 min=45deg
spec gm0     gain_margin  opamp=UA0 min=6dB
spec pm2     phase_margin opamp=UB2 min=45deg
spec peak    peaking      ({0}) from=10Hz to=10MHz max=3dB
spec ring    overshoot    ({0}) max=50%
)",
                      node);
  return text;
}

}  // namespace

TEST_CASE("a point's solution does not depend on the points solved before it", "[threads]") {
  // Pivots chosen for A are bad for B (its (0,0) entry nearly vanishes): B gets
  // fresh pivots, and C (A scaled) must then come out as if B had never been.
  CscPattern pattern{2, {0, 2, 4}, {0, 1, 0, 1}};
  const std::vector<cplx> a{4.0, 1.0, 1.0, 3.0};
  const std::vector<cplx> b{1e-14, 1.0, 1.0, 3.0};
  std::vector<cplx> c = a;
  for (auto& v : c) v *= cplx(1.1, 0.3);
  auto solve = [&](const std::vector<std::vector<cplx>>& history) {
    auto lu = make_sparse_lu(SolverKind::klu);
    lu->analyse(pattern);
    for (const auto& values : history) REQUIRE(lu->factor(values.data()) == FactorStatus::ok);
    std::vector<cplx> x{cplx(1, 0.5), cplx(-2, 1)};
    lu->solve(x.data());
    return std::pair{x, lu->full_factorizations()};
  };
  const auto [after_b, fresh] = solve({a, b, c});
  const auto [direct, _] = solve({a, c});
  CHECK(fresh == 2);  // B did take fresh pivots
  CHECK(after_b == direct);  // bit for bit
}

TEST_CASE("a solver on a shared analysis factors and solves bit for bit as the original", "[threads]") {
  CscPattern pattern{3, {0, 2, 5, 7}, {0, 1, 0, 1, 2, 1, 2}};
  const std::vector<cplx> values{cplx(3, 1), 1.0, cplx(0.5, -2), cplx(4, 0.1), 2.0, 1.0, cplx(5, 5)};
  auto lu = make_sparse_lu(SolverKind::klu);
  lu->analyse(pattern);
  REQUIRE(lu->factor(values.data()) == FactorStatus::ok);
  auto twin = lu->share_analysis();
  REQUIRE(twin);
  REQUIRE(twin->factor(values.data()) == FactorStatus::ok);
  std::vector<cplx> x{1.0, cplx(0, 1), -2.0}, y = x;
  lu->solve(x.data());
  twin->solve(y.data());
  CHECK(x == y);
  lu->solve_transposed(x.data());
  twin->solve_transposed(y.data());
  CHECK(x == y);
}

TEST_CASE("ac writes the same bytes with 1, 2, 3 and 7 threads", "[threads][ac]") {
  const Circuit circuit = circuit_of(ladder(120));
  const ReportContext context{"ladder.tacet", "ladder"};
  FrequencyResponse probe_response(circuit);
  const AcResult one = run_ac(circuit, wide_sweep(1), probe_response);
  REQUIRE(one.frequencies.size() > 250);
  // The sweep crosses the fresh-pivot path: more than one full factorisation.
  CHECK(probe_response.lu().full_factorizations() > 1);
  for (int threads : {2, 3, 7}) {
    INFO(threads << " threads");
    const AcResult many = run_ac(circuit, wide_sweep(threads));
    for (std::size_t t = 0; t < one.traces.size(); ++t) CHECK(many.traces[t].values == one.traces[t].values);
    CHECK(ac_table(many, context) == ac_table(one, context));
    CHECK(ac_csv(many) == ac_csv(one));
    CHECK(ac_json(many, context) == ac_json(one, context));
    CHECK(ac_writers().write(OutputFormat::svg, many, context) ==
          ac_writers().write(OutputFormat::svg, one, context));
  }
}

TEST_CASE("ac with an input source writes the same bytes with 1 and 3 threads", "[threads][ac]") {
  const Circuit circuit = circuit_of(ladder(60));
  AcOptions o = wide_sweep(1);
  o.probes = {"n30"};
  o.input = "Vin";
  const AcResult one = run_ac(circuit, o);
  o.threads = 3;
  const AcResult three = run_ac(circuit, o);
  CHECK(three.traces[0].values == one.traces[0].values);
}

TEST_CASE("noise writes the same bytes with 1, 2, 3 and 7 threads", "[threads][noise]") {
  // Large enough (600 unknowns) that a batch of the band integral is cut into blocks.
  const Circuit circuit = circuit_of(ladder(600));
  const ReportContext context{"ladder.tacet", "ladder"};
  auto options = [](int threads) {
    NoiseOptions o;
    o.sweep.from = 1;
    o.sweep.to = 1e9;
    o.sweep.per_decade = 10;
    o.probe = "n400";
    o.input = "Vin";
    o.level = 1.0;
    o.source = "R0";
    o.threads = threads;
    return o;
  };
  const NoiseResult one = run_noise(circuit, options(1));
  REQUIRE(one.band_evaluations > 100);
  for (int threads : {2, 3, 7}) {
    INFO(threads << " threads");
    const NoiseResult many = run_noise(circuit, options(threads));
    CHECK(many.total_rms == one.total_rms);
    CHECK(many.band_evaluations == one.band_evaluations);
    CHECK(noise_table(many, context) == noise_table(one, context));
    CHECK(noise_csv(many) == noise_csv(one));
    CHECK(noise_json(many, context) == noise_json(one, context));
    CHECK(noise_writers().write(OutputFormat::svg, many, context) ==
          noise_writers().write(OutputFormat::svg, one, context));
  }
}

TEST_CASE("check writes the same bytes with 1, 2, 3 and 7 threads, in the file's spec order",
          "[threads][check]") {
  const Circuit circuit = circuit_of(chain_with_budget());
  const ReportContext context{"chain.tacet", "chain"};
  CheckOptions o;
  const CheckResult one = run_check(circuit, o);
  REQUIRE(one.specs.size() == circuit.specs.size());
  CHECK(one.unsolved() == 0);
  for (int threads : {2, 3, 7}) {
    INFO(threads << " threads");
    o.threads = threads;
    const CheckResult many = run_check(circuit, o);
    REQUIRE(many.specs.size() == one.specs.size());
    for (std::size_t i = 0; i < one.specs.size(); ++i) {
      INFO(one.specs[i].spec.name);
      CHECK(many.specs[i].spec.name == circuit.specs[i].name);
      CHECK(many.specs[i].value == one.specs[i].value);
    }
    CHECK(check_table(many, context) == check_table(one, context));
    CHECK(check_json(many, context) == check_json(one, context));
  }
}

TEST_CASE("a check's spec value does not depend on the specs measured before it", "[threads][check]") {
  // The last spec alone against the last spec after all the others.
  const Circuit whole = circuit_of(chain_with_budget());
  Circuit alone = whole;
  alone.specs = {whole.specs.front(), whole.specs[4]};  // the anchor comes from the first spec
  const CheckResult all = run_check(whole, CheckOptions{});
  const CheckResult two = run_check(alone, CheckOptions{});
  CHECK(two.specs[1].value == all.specs[4].value);
}

TEST_CASE("a thread count from 0 (one per core) to 256 is valid, others are refused", "[threads]") {
  CHECK(threads_problem(0).empty());
  CHECK(threads_problem(256).empty());
  CHECK(threads_problem(-1) == "--threads must be from 0 (one per core) to 256, not -1");
  CHECK(threads_problem(257) == "--threads must be from 0 (one per core) to 256, not 257");
  CHECK(resolve_threads(3) == 3);
  CHECK(resolve_threads(0) >= 1);
}

TEST_CASE("blocks cut the indices in order, and the lowest block's failure is the one thrown",
          "[threads]") {
  CHECK(block_count(100, 4, 16) == 4);
  CHECK(block_count(40, 4, 16) == 2);
  CHECK(block_count(5, 4, 16) == 1);
  std::vector<int> owner(103, -1);
  for_blocks(owner.size(), 4, [&](int block, std::size_t begin, std::size_t end) {
    for (std::size_t k = begin; k < end; ++k) owner[k] = block;
  });
  for (std::size_t k = 1; k < owner.size(); ++k) CHECK(owner[k] >= owner[k - 1]);
  CHECK(owner.front() == 0);
  CHECK(owner.back() == 3);
  CHECK_THROWS_WITH(for_blocks(100, 4,
                               [](int block, std::size_t, std::size_t) {
                                 if (block >= 1) throw std::runtime_error(fmt::format("block {}", block));
                               }),
                    "block 1");
  CHECK_THROWS_WITH(for_items(10, 3,
                              [](int, std::size_t item) {
                                if (item % 4 == 3) throw std::runtime_error(fmt::format("item {}", item));
                              }),
                    "item 3");
}

namespace {

// `stages` non-inverting stages in cascade, each with vos, ib, ios and an
// ib_max over an ambient range: four DC errors and three right-hand sides per
// op amp, so the errors fill many blocks of solves. `hot` names a stage whose
// vos overflows a double at the last output.
std::string dc_chain(int stages, int hot = -1) {
  std::string text = R"(title "dc chain"
supply +15V -15V
ambient 0C..70C
model amp opamp {
  gbw 10MHz  aol 110dB  vos 200uV  vos_drift 2uV/C  ib 20nA  ib_max 40nA  ios 2nA
  ib_double 10C  swing 1.5V
}
model wild opamp { gbw 10MHz  aol 110dB  vos 1e308V }
vsrc Vin (n0, gnd) dc=1mV ac=1
)";
  for (int k = 0; k < stages; ++k)
    text += fmt::format(R"(res RS{0} (n{0}, p{0}) {2}k
opamp U{0} (+p{0}, -f{0}, n{1}) {3}
res RF{0} (n{1}, f{0}) 10k
res RG{0} (f{0}, gnd) {4}k
)",
                        k, k + 1, 1 + k % 5, k == hot ? "wild" : "amp", 10 + k % 3);
  return text;
}

BiasReport bias_report(const Circuit& circuit, int threads) {
  BiasOptions o;
  o.threads = threads;
  return BiasReport{run_bias(circuit, o), HeadroomResult{}};
}

}  // namespace

TEST_CASE("bias writes the same bytes with 1, 2, 3 and 7 threads", "[threads][bias]") {
  // 60 op amps: 180 right-hand sides, 12 blocks of solves, so every count
  // above cuts the errors across workers and waves.
  const Circuit circuit = circuit_of(dc_chain(60));
  const ReportContext context{"chain.tacet", "dc chain"};
  const BiasReport one = bias_report(circuit, 1);
  REQUIRE(one.bias.opamps.size() == 60);
  REQUIRE(one.bias.opamps.back().largest.size() == 3);
  for (int threads : {2, 3, 7}) {
    INFO(threads << " threads");
    const BiasReport many = bias_report(circuit, threads);
    for (std::size_t k = 0; k < one.bias.nodes.size(); ++k) {
      CHECK(many.bias.nodes[k].worst == one.bias.nodes[k].worst);
      CHECK(many.bias.nodes[k].rss == one.bias.nodes[k].rss);
    }
    CHECK(bias_json(many, context) == bias_json(one, context));
    CHECK(bias_table(many, context) == bias_table(one, context));
    CHECK(bias_csv(many) == bias_csv(one));
  }
}

TEST_CASE("the headroom sweep writes the same bytes with 1, 2, 3 and 7 threads", "[threads][bias][headroom]") {
  // 150 frequencies (20 Hz .. 20 kHz at 50 a decade): every count cuts them
  // into several waves, so each pin's worst frequency is found across workers.
  const Circuit circuit = circuit_of(chain_with_budget());
  const ReportContext context{"chain.tacet", "chain"};
  const BiasResult bias = run_bias(circuit);
  auto report = [&](int threads) {
    HeadroomOptions o;
    o.threads = threads;
    return BiasReport{bias, run_headroom(circuit, bias, o)};
  };
  const BiasReport one = report(1);
  REQUIRE(one.headroom.opamps.size() == 6);
  for (int threads : {2, 3, 7}) {
    INFO(threads << " threads");
    const BiasReport many = report(threads);
    CHECK(bias_json(many, context) == bias_json(one, context));
    CHECK(bias_table(many, context) == bias_table(one, context));
  }
}

TEST_CASE("bias on threads names the same overflowing error as on one", "[threads][bias][errors]") {
  const Circuit circuit = circuit_of(dc_chain(40, 23));
  std::string single;
  try {
    bias_report(circuit, 1);
  } catch (const SolveError& e) {
    single = e.what();
  }
  REQUIRE_THAT(single, Catch::Matchers::Contains("vos of 'U23'"));
  for (int threads : {2, 3}) {
    INFO(threads << " threads");
    CHECK_THROWS_WITH(bias_report(circuit, threads), single);
  }
}
