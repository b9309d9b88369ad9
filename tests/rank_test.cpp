#include <catch2/catch.hpp>

#include <cmath>
#include <complex>
#include <string>

#include "tacet/analysis/rank.hpp"
#include "tacet/common/errors.hpp"
#include "tacet/report/write_rank.hpp"
#include "text_circuit.hpp"

using namespace tacet;
using tacet::testing::elaborate_text;

namespace {

// A non-inverting gain of 10 (Rf = 9k, Rg = 1k). With a single-pole op amp the
// closed loop is 10 / (1 + j f 10 / gbw) (Black's feedback formula with
// A = gbw / (j f), aol large): at 100 kHz a 1 MHz part is 3 dB down (17.0 dB),
// a 10 MHz part 0.043 dB (19.957 dB), a 100 MHz part 0.0004 dB.
const std::string kStage =
    "model slow opamp { gbw 1M aol 140dB }\n"
    "model mid opamp { gbw 10M aol 140dB }\n"
    "model fast opamp { gbw 100M aol 140dB }\n"
    "vsrc Vin (in, gnd) ac=1\n"
    "opamp U1 (+in, -fb, out) slow\n"
    "res Rf (out, fb) 9k\n"
    "res Rg (fb, gnd) 1k\n"
    "spec g100k gain (out) at=100kHz min=19.5dB\n";

Circuit stage() {
  auto e = elaborate_text(kStage);
  INFO(e.diagnostics);
  REQUIRE(e.circuit);
  return std::move(*e.circuit);
}

}  // namespace

TEST_CASE("rank orders the models by failing specs, then by relative margin", "[rank]") {
  RankOptions options;
  options.slots = {"U1"};
  const RankResult r = run_rank(stage(), options);
  REQUIRE(r.rows.size() == 3);
  CHECK(r.rows[0].slots[0].second == "fast");
  CHECK(r.rows[1].slots[0].second == "mid");
  CHECK(r.rows[2].slots[0].second == "slow");
  CHECK(r.rows[0].pass);
  CHECK(!r.rows[2].pass);
  CHECK(r.rows[2].failed == 1);
  CHECK(r.rows[1].worst_spec == "g100k");
  // mid: Black's formula H = A / (1 + A/10), A = aol / (1 + j f aol / gbw), at
  // 100 kHz about 19.957 dB; the margin over 19.5 dB relative to 19.5 dB.
  const std::complex<double> a = 1e7 / (1.0 + std::complex<double>(0, 1e5 * 1e7 / 10e6));
  const double mid_db = 20 * std::log10(std::abs(a / (1.0 + a / 10.0)));
  CHECK(*r.rows[1].worst_margin == Approx((mid_db - 19.5) / 19.5).epsilon(1e-6));
}

TEST_CASE("rank tries only the named models", "[rank]") {
  RankOptions options;
  options.slots = {"U1"};
  options.models = {"slow", "mid"};
  const RankResult r = run_rank(stage(), options);
  REQUIRE(r.rows.size() == 2);
  CHECK(r.rows[0].slots[0].second == "mid");
  const std::string json = rank_json(r, {"stage.tacet", ""});
  CHECK(json.find("\"slots\": {\n    \"U1\": \"mid\"\n   }") != std::string::npos);
}

TEST_CASE("a slot that is not an op amp is refused with the nearest op amp", "[rank]") {
  RankOptions options;
  options.slots = {"Rf"};
  CHECK_THROWS_WITH(run_rank(stage(), options),
                    "error: --slot 'Rf' is a res, not an op amp\nhint: the op amps are U1\n");
  options.slots = {"U2"};
  CHECK_THROWS_WITH(run_rank(stage(), options),
                    "error: --slot 'U2' is no element of the netlist\nhint: did you mean 'U1'?\n");
  options.slots = {"U1"};
  options.models = {"fastt"};
  CHECK_THROWS_WITH(run_rank(stage(), options),
                    "error: unknown model 'fastt' in --models\nhint: did you mean 'fast'?\n");
}

TEST_CASE("a margin is relative to the limit it nears", "[rank]") {
  CHECK(relative_margin(1, 21, 20.0, std::nullopt) == Approx(0.05));
  CHECK(relative_margin(0.5, 0.5, std::nullopt, 1.0) == Approx(0.5));
  CHECK(relative_margin(-0.2, 1.2, 0.0, 1.0) == Approx(-0.2));
  CHECK(relative_margin(0.3, -0.3, std::nullopt, 0.0) == Approx(0.3));  // a 0 limit: the margin itself
}
