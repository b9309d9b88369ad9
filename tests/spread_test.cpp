#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include "tacet/analysis/check.hpp"
#include "tacet/analysis/spread.hpp"
#include "tacet/analysis/spread_draw.hpp"
#include "tacet/analysis/spread_random.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_spread.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

Circuit circuit_of(const std::string& text) {
  auto e = elaborate_text(text);
  INFO(e.diagnostics);
  REQUIRE(e.circuit);
  return std::move(*e.circuit);
}

// A divider H = R2 / (R1 + R2) = 0.5, measured as a ratio at 1 kHz.
std::string divider(const std::string& r1_options, const std::string& r2_options,
                    const std::string& window = "min=0.4 max=0.6") {
  return "vsrc Vin (in, gnd) ac=1\n"
         "res R1 (in, out) 10k " + r1_options + "\n"
         "res R2 (out, gnd) 10k " + r2_options + "\n"
         "spec half gain (out) at=1kHz " + window + "\n";
}

SpreadOptions options(std::int64_t runs, std::uint64_t seed = 7, int threads = 1) {
  SpreadOptions o;
  o.runs = runs;
  o.seed = seed;
  o.threads = threads;
  return o;
}

}  // namespace

TEST_CASE("a divider's Monte Carlo mean and sd agree with first-order propagation", "[spread]") {
  // First-order propagation of independent uniform tolerances (e.g. Taylor, An
  // Introduction to Error Analysis, 1997, ch. 3): a uniform deviation on +-t
  // has sd t/sqrt(3); H = R2/(R1+R2) has sensitivities -1/2 and +1/2 to R1 and
  // R2, so sd(H)/H = sqrt(1/4 + 1/4) t / sqrt(3).
  const double t = 0.01;
  const Circuit c = circuit_of(divider("tol=1%", "tol=1%"));
  constexpr std::int64_t kRuns = 4000;
  const SpreadResult r = run_spread(c, options(kRuns));
  REQUIRE(r.specs.size() == 1);
  const SpreadSpecStats& s = r.specs[0];
  const double expected_sd = 0.5 * std::sqrt(0.5) * t / std::sqrt(3.0);
  // CLT bounds at 5 standard errors (fixed seed, so no flake; the bound only
  // sizes the test): the mean's SE is sd/sqrt(n); the sample sd's relative SE
  // is sqrt((2 + excess kurtosis)/(4 n)), excess kurtosis -0.6 for the sum of
  // two uniforms (triangular), about 0.94 % here. The second-order bias of the
  // mean, about H t^2/12 = 4e-6, is far below.
  CHECK(std::abs(s.mean - 0.5) < 5 * expected_sd / std::sqrt(double(kRuns)));
  CHECK(std::abs(s.sd / expected_sd - 1) < 5 * std::sqrt(1.4 / (4.0 * kRuns)));
  // Every draw lies inside the worst case: |dH| <= H t (1/2 + 1/2) / (1 - t).
  CHECK(s.min >= 0.5 * (1 - t / (1 - t)));
  CHECK(s.max <= 0.5 * (1 + t / (1 - t)));
  CHECK(s.yield == 1.0);
  CHECK(r.yield == 1.0);
  CHECK(s.spec.nominal.has_value());
  CHECK(std::abs(*s.spec.nominal - 0.5) < 1e-12);
}

TEST_CASE("a matched pair's ratio spreads by its ratio tolerance, not its absolute one", "[spread]") {
  // Both parts share the set's draw c: R = 10k (1 + 1% c)(1 + 0.1% u_k), so in
  // H = R2/(R1+R2) the common factor cancels and only the ratio draws remain:
  // sd(H) = 0.5 sqrt(1/2) 0.1% / sqrt(3) (first-order propagation as above).
  const double ratio = 0.001;
  const Circuit c = circuit_of(divider("tol=1% match=RA ratio=0.1%", "tol=1% match=RA ratio=0.1%"));
  constexpr std::int64_t kRuns = 4000;
  const SpreadResult r = run_spread(c, options(kRuns));
  const SpreadSpecStats& s = r.specs[0];
  const double expected_sd = 0.5 * std::sqrt(0.5) * ratio / std::sqrt(3.0);
  CHECK(std::abs(s.sd / expected_sd - 1) < 5 * std::sqrt(1.4 / (4.0 * kRuns)));
  // H - 1/2 = (b - a) / (2 (2 + a + b)) for ratio draws a, b in +-0.1%.
  const double bound = 2 * ratio / (2 * (2 - 2 * ratio));
  CHECK(s.max - 0.5 <= bound);
  CHECK(0.5 - s.min <= bound);

  // Each part alone still spreads by its whole tolerance (its common draw).
  const SpreadPlan plan = plan_spread(c);
  REQUIRE(plan.parameters.size() == 2);
  CHECK(plan.sets == std::vector<std::string>{"RA"});
  double largest = 0, largest_difference = 0;
  std::vector<double> d;
  for (std::uint64_t i = 0; i < 2000; ++i) {
    draw_deviations(plan, 7, i, d);
    largest = std::max(largest, std::abs(d[0]));
    largest_difference = std::max(largest_difference, std::abs(d[0] - d[1]));
  }
  CHECK(largest > 0.009);          // reaches near its 1 % limit
  CHECK(largest <= 1.01 * 1.001 - 1 + 1e-15);
  CHECK(largest_difference <= 2 * 0.01 * 0.001 + 2 * 0.001 + 1e-12);
}

TEST_CASE("matched sets inside block instances are one set per instance", "[spread]") {
  const Circuit c = circuit_of(
      "block half (a, b, o) {\n"
      "  res R1 (a, o) 10k tol=1% match=RA ratio=0.1%\n"
      "  res R2 (o, b) 10k tol=1% match=RA ratio=0.1%\n"
      "}\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "use F1 (in, gnd, x) half\n"
      "use F2 (in, gnd, y) half\n");
  CHECK(plan_spread(c).sets == std::vector<std::string>{"F1.RA", "F2.RA"});
}

TEST_CASE("the Wilson interval matches its published formula and worked values", "[spread]") {
  // Wilson (1927), "Probable inference, the law of succession, and statistical
  // inference", JASA 22: 209-212; worked values of Newcombe (1998), Statistics
  // in Medicine 17: 857-872, Table I, method 3 (from memory): 81/263 gives
  // 0.2553 .. 0.3662, 15/148 gives 0.0624 .. 0.1605, 0/20 gives 0 .. 0.1611.
  auto w = wilson_interval(81, 263);
  CHECK(std::abs(w.low - 0.2553) < 5e-5);
  CHECK(std::abs(w.high - 0.3662) < 5e-5);
  w = wilson_interval(15, 148);
  CHECK(std::abs(w.low - 0.0624) < 5e-5);
  CHECK(std::abs(w.high - 0.1605) < 5e-5);
  w = wilson_interval(0, 20);
  CHECK(w.low == 0);
  CHECK(std::abs(w.high - 0.1611) < 5e-5);
  // All passed: the upper end is 1 and the lower n / (n + z^2).
  w = wilson_interval(1000, 1000);
  CHECK(w.high == 1);
  const double z = 1.959963984540054;
  CHECK(std::abs(w.low - 1000 / (1000 + z * z)) < 1e-12);
}

TEST_CASE("quantiles interpolate between order statistics as NumPy's default does", "[spread]") {
  // Hyndman and Fan (1996), type 7: numpy.quantile([1, 2, 3, 4], 0.25) = 1.75.
  const std::vector<double> v{1, 2, 3, 4};
  CHECK(quantile_of_sorted(v, 0.25) == Approx(1.75));
  CHECK(quantile_of_sorted(v, 0.5) == Approx(2.5));
  CHECK(quantile_of_sorted(v, 1.0) == 4);
  CHECK(quantile_of_sorted(v, 0.0) == 1);
}

TEST_CASE("normal draws stay within the tolerance with the truncated normal's spread", "[spread]") {
  // dist=normal: sigma = tol/3, drawn again beyond +-tol (common practice).
  // A normal truncated at +-3 sigma has variance sigma^2 (1 - 2 a phi(a) /
  // (2 Phi(a) - 1)), a = 3 (Johnson, Kotz and Balakrishnan, Continuous
  // Univariate Distributions vol. 1, 1994, ch. 13): sd = 0.98658 sigma.
  SpreadPlan plan;
  plan.parameters.push_back({"R1", "value", 0.05, Distribution::normal, -1, 0});
  constexpr int kDraws = 100000;
  std::vector<double> d;
  double sum = 0, squares = 0, largest = 0;
  int beyond_two_sigma = 0;
  for (int i = 0; i < kDraws; ++i) {
    draw_deviations(plan, 11, static_cast<std::uint64_t>(i), d);
    sum += d[0], squares += d[0] * d[0];
    largest = std::max(largest, std::abs(d[0]));
    if (std::abs(d[0]) > 2 * 0.05 / 3) ++beyond_two_sigma;
  }
  const double mean = sum / kDraws;
  const double sd = std::sqrt(squares / kDraws - mean * mean);
  const double phi3 = std::exp(-4.5) / std::sqrt(2 * M_PI);
  const double mass = std::erf(3 / std::sqrt(2.0));
  const double expected_sd = 0.05 / 3 * std::sqrt(1 - 2 * 3 * phi3 / mass);
  CHECK(largest <= 0.05);
  CHECK(largest > 0.04);  // the tails are reached
  // Relative SE of a normal's sample sd: 1/sqrt(2n) = 0.22 %; 5 SE.
  CHECK(std::abs(sd / expected_sd - 1) < 5 / std::sqrt(2.0 * kDraws));
  // P(|z| > 2 | |z| <= 3) = (erf(3/sqrt2) - erf(2/sqrt2)) / erf(3/sqrt2) = 0.04292.
  const double p2 = (mass - std::erf(2 / std::sqrt(2.0))) / mass;
  CHECK(std::abs(beyond_two_sigma / double(kDraws) - p2) < 5 * std::sqrt(p2 * (1 - p2) / kDraws));
}

TEST_CASE("a part's draws depend on the seed, the draw and its name, nothing else", "[spread]") {
  SpreadPlan one, two;
  one.parameters.push_back({"R1", "value", 0.01, Distribution::uniform, -1, 0});
  two.parameters.push_back({"C9", "value", 0.05, Distribution::normal, -1, 0});
  two.parameters.push_back({"R1", "value", 0.01, Distribution::uniform, -1, 0});
  std::vector<double> a, b;
  draw_deviations(one, 3, 42, a);
  draw_deviations(two, 3, 42, b);
  CHECK(a[0] == b[1]);
  draw_deviations(one, 4, 42, b);
  CHECK(a[0] != b[0]);
  draw_deviations(one, 3, 43, b);
  CHECK(a[0] != b[0]);
}

TEST_CASE("the output is byte-identical for one and two threads", "[spread]") {
  const Circuit c = circuit_of(divider("tol=5%", "tol=5% dist=normal", "min=0.49 max=0.51"));
  const ReportContext context{"divider.tacet", ""};
  const SpreadResult one = run_spread(c, options(500, 9, 1));
  const SpreadResult two = run_spread(c, options(500, 9, 2));
  CHECK(spread_json(one, context) == spread_json(two, context));
  CHECK(spread_table(one, context) == spread_table(two, context));
  CHECK(one.yield < 1);  // the window is narrow enough to fail sometimes
}

TEST_CASE("shards merged give the whole run byte for byte", "[spread]") {
  const Circuit c = circuit_of(divider("tol=5%", "tol=5%", "min=0.49 max=0.51"));
  const ReportContext context{"divider.tacet", "a divider"};
  SpreadOptions whole = options(301, 5, 2);
  const SpreadResult reference = run_spread(c, whole);
  std::vector<SpreadSamples> shards;
  std::vector<std::string> names;
  for (int i : {3, 1, 2}) {  // any order
    SpreadOptions o = whole;
    o.shard = i, o.shards = 3;
    ReportContext read_context;
    shards.push_back(read_spread_shard(spread_shard_json(sample_spread(c, o), context), "s.json", read_context));
    CHECK(read_context.title == "a divider");
    names.push_back(std::to_string(i) + ".json");
  }
  const SpreadResult merged = summarise_spread(merge_spread_samples(shards, names));
  CHECK(spread_json(merged, context) == spread_json(reference, context));
  CHECK(spread_table(merged, context) == spread_table(reference, context));
  CHECK(spread_csv(merged) == spread_csv(reference));
  CHECK(spread_svg(merged, context) == spread_svg(reference, context));

  SECTION("a shard given twice is refused") {
    auto twice = shards;
    twice[0] = shards[1];
    CHECK_THROWS_WITH(merge_spread_samples(twice, names),
                      Catch::Contains("shard 1/3 is given twice: '3.json' and '1.json'"));
  }
  SECTION("a missing shard is refused") {
    auto two = shards;
    two.pop_back();
    CHECK_THROWS_WITH(merge_spread_samples(two, names), Catch::Contains("shard 2/3 is missing"));
  }
  SECTION("a shard of another seed is refused") {
    auto other = shards;
    other[1].seed = 6;
    CHECK_THROWS_WITH(merge_spread_samples(other, names),
                      Catch::Contains("'3.json' and '1.json' are shards of different runs: seed 5 and 6"));
  }
  SECTION("a shard that holds other draws than its block is refused") {
    auto shifted = shards;
    shifted[1].first = 1;  // shard 1/3 must start at draw 0
    CHECK_THROWS_WITH(merge_spread_samples(shifted, names),
                      Catch::Contains("shard 1/3 holds draws 1 to 100, not 0 to 99 of the 301"));
  }
  SECTION("a shard of another netlist is refused") {
    SpreadOptions o = whole;
    o.shard = 2, o.shards = 3;
    const Circuit changed = circuit_of(divider("tol=5%", "tol=4%", "min=0.49 max=0.51"));
    auto other = shards;
    other[2] = sample_spread(changed, o);
    CHECK_THROWS_WITH(merge_spread_samples(other, names), Catch::Contains("netlist hash"));
  }
}

TEST_CASE("a shard document that is not one is refused with its name", "[spread]") {
  ReportContext context;
  CHECK_THROWS_WITH(read_spread_shard("{\"analysis\":\"check\"}", "x.json", context),
                    Catch::Contains("'x.json' is not a shard of tacet spread"));
  CHECK_THROWS_WITH(read_spread_shard("not json", "y.json", context), Catch::Contains("it is not JSON"));
}

TEST_CASE("spread options refuse no runs and shards that do not exist", "[spread]") {
  SpreadOptions o;
  o.runs = 0;
  CHECK(o.validate() == "--runs must be at least 1, not 0");
  o.runs = 10;
  o.shard = 3, o.shards = 2;
  CHECK(o.validate() == "--shard 3/2 does not exist: shards are numbered 1/N to N/N");
  o.shard = 1, o.shards = 11;
  CHECK(o.validate() == "--shard 1/11 cuts 10 draws into more shards than draws");
  o.shards = 1;
  o.threads = 257;
  CHECK(o.validate() == "--threads must be from 0 (one per core) to 256, not 257");
}

TEST_CASE("shards cut the draws into contiguous blocks that tile the run", "[spread]") {
  SpreadOptions o;
  o.runs = 10;
  o.shards = 3;
  std::int64_t next = 0;
  for (int i = 1; i <= 3; ++i) {
    o.shard = i;
    CHECK(o.first() == next);
    next += o.count();
  }
  CHECK(next == 10);
}

TEST_CASE("op-amp model tolerances spread per instance", "[spread]") {
  const Circuit c = circuit_of(
      "model wide opamp { gbw 10M gbw_tol 30% aol 100dB aol_tol 50% dist normal }\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "opamp U1 (+in, -a, a) wide\n"
      "opamp U2 (+a, -b, b) wide\n"
      "spec g gain (b) at=1MHz min=-3dB\n");
  const SpreadPlan plan = plan_spread(c);
  REQUIRE(plan.parameters.size() == 4);
  CHECK(plan.parameters[0].name == "U1");
  CHECK(plan.parameters[0].param == "gbw");
  CHECK(plan.parameters[0].dist == Distribution::normal);
  CHECK(plan.parameters[3].name == "U2");
  CHECK(plan.parameters[3].param == "aol");
  // Two followers at 1 MHz with gbw 10 MHz: each |1/(1 + j f/gbw)| (single
  // pole, aol large); a spread gbw moves the gain, and only down to 7 MHz.
  const SpreadResult r = run_spread(c, options(200));
  const double at_7M = -20 * std::log10(1 + 1.0 / 49);  // two stages, |.|^2 = 1/(1 + (1/7)^2)
  CHECK(r.specs[0].sd > 0);
  CHECK(r.specs[0].min >= at_7M - 0.01);
}

TEST_CASE("a draw's DC specs on the restamped DC system equal check on a circuit built at its values",
          "[spread]") {
  // The evaluator restamps one DC system per worker; a circuit elaborated
  // anew at the draw's values (each part nominal x (1 + d)) must measure the
  // same offset and rails, to rounding.
  const std::string text =
      "model drifty opamp { gbw 1MHz aol 100dB vos 1mV ib 10nA ios 1nA swing 1V }\n"
      "supply +5V -5V\n"
      "vsrc Vin (in, gnd) ac=1\n"
      "res Rs (in, p) 10k tol=5%\n"
      "res Rg (fb, gnd) 1k tol=1%\n"
      "res Rf (out, fb) 99k tol=1%\n"
      "opamp U1 (+p, -fb, out) drifty\n"
      "spec dc offset (out) max=200mV\n"
      "spec swing rails margin=0.5V\n";
  const Circuit c = circuit_of(text);
  const SpreadSamples samples = sample_spread(c, options(5));
  for (std::uint64_t draw = 0; draw < 5; ++draw) {
    std::vector<double> d;
    draw_deviations(samples.plan, samples.seed, draw, d);
    Circuit at = c;
    for (std::size_t k = 0; k < samples.plan.parameters.size(); ++k)
      at.elements[*at.find_element(samples.plan.parameters[k].name)].value *= 1 + d[k];
    const CheckResult direct = run_check(at);
    for (std::size_t s = 0; s < 2; ++s) {
      REQUIRE(direct.specs[s].value);
      CHECK(samples.values[s][draw] == Approx(*direct.specs[s].value).epsilon(1e-12));
    }
  }
}

TEST_CASE("a draw's values do not depend on the draws its worker evaluated before it", "[spread]") {
  // An LC ladder whose inductor branch rows have |s L| close to KLU's pivot
  // tolerance (1e-3 of the column's largest entry) at the spec frequency:
  // 2 pi 160 Hz x 1 uH = 1.0e-3. With 30 % on every inductor a draw's own
  // values may pivot differently from another draw's, so pivots taken at
  // whichever draw a worker happened to start with would leak into the draws
  // after it. The samples must be the same bits as a fresh evaluator's and
  // as any number of threads gives.
  std::string text = "vsrc Vin (n0, gnd) ac=1\n";
  for (int k = 0; k < 12; ++k) {
    text += "ind L" + std::to_string(k) + " (n" + std::to_string(k) + ", n" + std::to_string(k + 1) +
            ") 1u tol=30%\n";
    text += "res R" + std::to_string(k) + " (n" + std::to_string(k + 1) + ", gnd) 1k tol=20%\n";
  }
  text += "spec far gain (n12) at=160Hz min=0.5 max=2\n"
          "spec mid phase (n6) at=160Hz min=-10deg max=10deg\n";
  const Circuit c = circuit_of(text);
  const SpreadSamples one = sample_spread(c, options(24, 3, 1));
  const SpreadSamples two = sample_spread(c, options(24, 3, 2));
  const SpreadSamples three = sample_spread(c, options(24, 3, 3));
  for (std::size_t s = 0; s < one.values.size(); ++s) {
    CHECK(two.values[s] == one.values[s]);
    CHECK(three.values[s] == one.values[s]);
  }
  for (std::uint64_t draw : {5u, 11u, 23u}) {
    INFO("draw " << draw);
    SpreadEvaluator fresh(c, one.plan);
    double value[2];
    std::uint8_t pass[2];
    fresh.evaluate(one.seed, draw, value, pass);
    for (std::size_t s = 0; s < 2; ++s) CHECK(value[s] == one.values[s][draw]);
  }
}

TEST_CASE("draws are claimed in pieces small enough to keep every worker busy to the end", "[spread]") {
  // A worker that claims a last piece while the others have nothing left idles
  // the rest: 40 draws in claims of 8 on two workers end 24 to 16. At least
  // eight claims per worker bound that tail to an eighth of a worker's share.
  for (std::int64_t count : {1, 7, 40, 100, 1000, 100000})
    for (int threads : {1, 2, 3, 8}) {
      INFO(count << " draws on " << threads << " threads");
      const std::int64_t claim = spread_claim_size(count, threads);
      CHECK(claim >= 1);
      CHECK(claim <= 8);
      if (claim > 1) CHECK(count / claim >= 8 * threads);
    }
  CHECK(spread_claim_size(100000, 2) == 8);  // long runs keep the atomic counter cold
}
