// The step response's writers: the picture read back as XML against the
// result, and the JSON contract's fields.

#include "tacet/report/write_settle.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include <nlohmann/json.hpp>

#include "plot_queries.hpp"
#include "reference_circuits.hpp"
#include "xml_dom.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

SettleResult rlc_step() {
  SettleOptions options;
  options.probes = {"b", "i(R1)"};
  options.points = 51;
  options.band = 0.01;
  return run_settle(series_rlc(100, 10e-3, 100e-9), options);
}

ReportContext context() { return {"rlc.tacet", "Series RLC"}; }

}  // namespace

TEST_CASE("the settle picture shows each response, the settling band and the settling time",
          "[svg][settle]") {
  const SettleResult r = rlc_step();
  const auto root = xml::parse(settle_svg(r, context()));
  const auto panels = root->with_class("panel");
  REQUIRE(panels.size() == 2);  // the response, its deviation from final on a log axis
  const auto traces = panels[0]->with_class("trace");
  REQUIRE(traces.size() == 2);
  for (const auto* t : traces) CHECK(path_points(t->attribute("d")).points.size() == r.times.size());
  CHECK(panels[0]->with_class("band").size() == 1);  // the first probe's band about its final value
  // The voltage settles within the window; the current's final value is 0, so it has none.
  CHECK(panels[0]->with_class("marker").size() == 1);
  CHECK(root->with_class("x-tick").size() >= 3);
  const auto deviation = panels[1]->with_class("trace");
  REQUIRE(deviation.size() == 1);  // only the probe with a final value
  CHECK(panels[1]->with_class("marker").size() == 2);  // the band's line and the settling time
}

TEST_CASE("the settle JSON carries the contract's fields per trace", "[settle]") {
  const SettleResult r = rlc_step();
  const auto d = nlohmann::json::parse(settle_json(r, context()));
  CHECK(d["analysis"] == "settle");
  REQUIRE(d["traces"].size() == 2);
  const auto& t = d["traces"][0];
  CHECK(t["probe"] == "b");
  CHECK(t["points"].size() == r.times.size());
  CHECK(t["points"][0]["t"] == 0.0);
  CHECK(t["final"].get<double>() == r.traces[0].final);
  CHECK(t["peak"].get<double>() == r.traces[0].peak);
  CHECK(t["overshoot"].get<double>() == *r.traces[0].overshoot);
  CHECK(t["settling_time"].get<double>() == *r.traces[0].settling_time);
  CHECK(t["band"].get<double>() == 0.01);
  const auto& current = d["traces"][1];  // i(R1): final 0, no overshoot or settling
  CHECK(current["overshoot"].is_null());
  CHECK(current["settling_time"].is_null());
}
