// The loop-gain picture read back as XML: each crossover's and phase
// crossover's mark sits where the loop's data puts it, labelled with its margin.

#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include <fmt/format.h>

#include "is_close.hpp"
#include "plot_queries.hpp"
#include "reference_circuits.hpp"
#include "tacet/report/write_svg.hpp"
#include "xml_dom.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

// Follower whose feedback passes a 1 MHz RC low-pass through a unity buffer:
// three poles (10 Hz, 1 MHz, 3 MHz), so the loop has a crossover and a phase crossover.
LoopResult three_pole_loop() {
  OpAmpModel m = single_pole(1e6, 1e5);
  m.fp2 = 3e6;
  CircuitBuilder b;
  b.vsrc("Vin", "in", "gnd", 1.0);
  b.opamp("U1", "in", "fb", "out", m);
  b.add(ElementKind::resistor, "R3", {"out", "n"}, 1e3);
  b.add(ElementKind::capacitor, "C3", {"n", "gnd"}, 1e-9 / (2 * kPi));
  b.add(ElementKind::vcvs, "E1", {"fb", "gnd", "n", "gnd"}, 1.0);
  static Circuit circuit = b.circuit;
  return run_loop(circuit, LoopOptions{});
}

// The page's linear map of a panel's axis read from its first and last
// labelled ticks: value = v0 + (v1 - v0) (p - p0) / (p1 - p0).
struct AxisMap {
  double p0, v0, p1, v1;
  double value(double p) const { return v0 + (v1 - v0) * (p - p0) / (p1 - p0); }
};

AxisMap y_map(const xml::Element& panel) {
  const auto ticks = panel.with_class("y-tick");
  REQUIRE(ticks.size() >= 2);
  // A label's baseline is 4 px below its tick.
  return {std::stod(ticks.front()->attribute("y")) - 4, std::stod(ticks.front()->text),
          std::stod(ticks.back()->attribute("y")) - 4, std::stod(ticks.back()->text)};
}

double si_label(const std::string& text) {
  const char last = text.back();
  const double scale = last == 'k' ? 1e3 : last == 'M' ? 1e6 : last == 'G' ? 1e9 : 1;
  return std::stod(scale == 1 ? text : text.substr(0, text.size() - 1)) * scale;
}

// x is log10 f, linear on the page.
AxisMap x_map(const xml::Element& root) {
  const auto ticks = root.with_class("x-tick");
  REQUIRE(ticks.size() >= 2);
  return {std::stod(ticks.front()->attribute("x")), std::log10(si_label(ticks.front()->text)),
          std::stod(ticks.back()->attribute("x")), std::log10(si_label(ticks.back()->text))};
}

std::vector<const xml::Element*> dots(const xml::Element& panel) {
  return panel.with_class("markers")[0]->named("circle");
}

std::vector<std::string> labels(const xml::Element& panel) {
  std::vector<std::string> out;
  for (const auto* t : panel.with_class("markers")[0]->named("text")) out.push_back(t->text);
  return out;
}

}  // namespace

TEST_CASE("the loop picture marks each crossover and phase crossover where the data puts them",
          "[svg][loop]") {
  const LoopResult result = three_pole_loop();
  const LoopTrace& loop = result.loops[0];
  REQUIRE(loop.crossovers.size() == 1);
  REQUIRE(loop.phase_crossovers.size() == 1);
  const auto root = xml::parse(loop_svg(result, {"three.tacet", "Three poles"}));
  const auto panels = root->with_class("panel");
  REQUIRE(panels.size() == 2);
  for (const auto* panel : panels) {
    const auto traces = panel->with_class("trace");
    REQUIRE(traces.size() == 1);
    CHECK(path_points(traces[0]->attribute("d")).points.size() == result.frequencies.size());
  }
  const AxisMap x = x_map(*root);
  const AxisMap db = y_map(*panels[0]), deg = y_map(*panels[1]);
  const LoopCrossover& c = loop.crossovers[0];
  const LoopPhaseCrossover& p = loop.phase_crossovers[0];
  // |T| panel: the crossover's dot on 0 dB, the phase crossover's at -GM, labelled.
  CHECK(labels(*panels[0]) == std::vector<std::string>{"|T| = 1", loop_margin_label("U1", p)});
  const auto magnitude_dots = dots(*panels[0]);
  REQUIRE(magnitude_dots.size() == 2);
  // Pixel coordinates carry two decimals: within 0.01 decade and 0.2 dB or degree.
  CHECK(x.value(std::stod(magnitude_dots[0]->attribute("cx"))) == Approx(std::log10(c.f)).margin(0.01));
  CHECK(db.value(std::stod(magnitude_dots[0]->attribute("cy"))) == Approx(0).margin(0.2));
  CHECK(x.value(std::stod(magnitude_dots[1]->attribute("cx"))) == Approx(std::log10(p.f)).margin(0.01));
  CHECK(db.value(std::stod(magnitude_dots[1]->attribute("cy"))) == Approx(-p.gain_margin).margin(0.2));
  // Phase panel: the crossover at its phase, PM - 180, the phase crossover on -180.
  CHECK(labels(*panels[1]) == std::vector<std::string>{"-180\u00B0", loop_margin_label("U1", c)});
  const auto phase_dots = dots(*panels[1]);
  REQUIRE(phase_dots.size() == 2);
  CHECK(x.value(std::stod(phase_dots[0]->attribute("cx"))) == Approx(std::log10(c.f)).margin(0.01));
  CHECK(deg.value(std::stod(phase_dots[0]->attribute("cy"))) ==
        Approx(c.phase_margin - 180).margin(0.5));
  CHECK(deg.value(std::stod(phase_dots[1]->attribute("cy"))) == Approx(-180).margin(0.5));
  // The labels carry the analysis's numbers, to one decimal.
  CHECK(loop_margin_label("U1", c).find(fmt::format("PM {:.1f}\u00B0", c.phase_margin)) !=
        std::string::npos);
  CHECK(loop_margin_label("U1", p).find(fmt::format("GM {:.1f} dB", p.gain_margin)) !=
        std::string::npos);
  CHECK(root->with_class("legend")[0]->named("text").size() == 1);
}
