// The pictures of the analyses, read back as XML and checked against the results.

#include "tacet/report/write_svg.hpp"

#include <catch2/catch.hpp>
#include <cmath>

#include "plot_queries.hpp"
#include "reference_circuits.hpp"
#include "xml_dom.hpp"

using namespace tacet;
using namespace tacet::testing;

namespace {

AcResult lowpass_sweep() {
  AcOptions options;
  options.sweep.from = 10;
  options.sweep.to = 100e3;
  options.sweep.per_decade = 20;
  options.probes = {"out", "in"};
  return run_ac(rc_lowpass(1e3, 100e-9), options);  // corner 1.59 kHz
}

std::vector<std::string> texts(const std::vector<const xml::Element*>& elements) {
  std::vector<std::string> out;
  for (const auto* e : elements) out.push_back(e->text);
  return out;
}

// The value at page y on a linear y axis, from two labelled ticks of a panel.
double value_at(const xml::Element& panel, double y) {
  const auto ticks = panel.with_class("y-tick");
  REQUIRE(ticks.size() >= 2);
  const double v0 = std::stod(ticks.front()->text), v1 = std::stod(ticks.back()->text);
  // A label's baseline is 4 px below its tick (the writer centres 11 px text).
  const double y0 = std::stod(ticks.front()->attribute("y")) - 4;
  const double y1 = std::stod(ticks.back()->attribute("y")) - 4;
  return v0 + (v1 - v0) * (y - y0) / (y1 - y0);
}

ReportContext context() { return {"lowpass.tacet", "RC low-pass"}; }

}  // namespace

TEST_CASE("the ac picture has magnitude and phase panels with a trace per probe and a point per frequency",
          "[svg]") {
  const AcResult result = lowpass_sweep();
  const std::string text = ac_svg(result, context());
  CHECK(text.rfind("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\"", 0) == 0);
  const auto root = xml::parse(text);
  CHECK(texts(root->with_class("title")) == std::vector<std::string>{"RC low-pass"});
  const auto panels = root->with_class("panel");
  REQUIRE(panels.size() == 2);
  for (const auto* panel : panels) {
    const auto traces = panel->with_class("trace");
    REQUIRE(traces.size() == 2);
    for (const auto* t : traces) {
      const auto path = path_points(t->attribute("d"));
      CHECK(path.subpaths == 1);
      CHECK(path.points.size() == result.frequencies.size());
    }
  }
  CHECK(texts(root->with_class("x-tick")) == std::vector<std::string>{"10", "100", "1k", "10k", "100k"});
  CHECK(texts(root->with_class("axis-title")) ==
        std::vector<std::string>{"magnitude [dB re 1 V]", "phase [deg]", "frequency [Hz]"});
  CHECK(texts(root->with_class("legend")[0]->named("text")) == std::vector<std::string>{"out", "in"});
}

TEST_CASE("the ac picture's magnitude and phase read back as the sweep's values", "[svg]") {
  const AcResult result = lowpass_sweep();
  const auto root = xml::parse(ac_svg(result, context()));
  const auto panels = root->with_class("panel");
  const auto magnitude = path_points(panels[0]->with_class("trace")[0]->attribute("d")).points;
  const auto phase = path_points(panels[1]->with_class("trace")[0]->attribute("d")).points;
  for (std::size_t k = 0; k < result.frequencies.size(); k += 10) {
    const auto h = result.traces[0].values[k];
    // Two decimals of a pixel on a panel of some 100 dB over 230 px: within 0.02 dB.
    CHECK(value_at(*panels[0], magnitude[k].second) == Approx(20 * std::log10(std::abs(h))).margin(0.02));
    CHECK(value_at(*panels[1], phase[k].second) == Approx(std::arg(h) * 180 / kPi).margin(0.01));
  }
}

TEST_CASE("phase unwrapping moves each value to within 180 degrees of the one before", "[svg]") {
  const auto out = unwrap_degrees({170, -170, -150, NAN, 175, -179});
  CHECK(out[0] == 170);
  CHECK(out[1] == 190);
  CHECK(out[2] == 210);
  CHECK(std::isnan(out[3]));
  CHECK(out[4] == 175);
  CHECK(out[5] == 181);
}

TEST_CASE("the noise picture shows the total density and the largest contributors", "[svg]") {
  OpAmpModel m = single_pole(10e6, 1e5);
  m.en = 4e-9;
  m.in = 1e-12;
  m.fce = 100;
  CircuitBuilder b;
  b.vsrc("Vin", "src", "gnd", 1.0);
  b.add(ElementKind::resistor, "Rs", {"src", "p"}, 2.2e3);
  b.opamp("U1", "p", "fb", "out", m);
  b.add(ElementKind::resistor, "Rf", {"out", "fb"}, 9e3);
  b.add(ElementKind::resistor, "Rg", {"fb", "gnd"}, 1e3);
  NoiseOptions options;
  options.sweep.from = 1;
  options.sweep.to = 1e6;
  options.sweep.per_decade = 10;
  options.probe = "out";
  options.band = Band{20, 20e3};
  options.input = "Vin";
  options.curves = 3;
  const NoiseResult r = run_noise(b.circuit, options);
  const auto root = xml::parse(noise_svg(r, context()));
  const auto panels = root->with_class("panel");
  REQUIRE(panels.size() == 2);  // output density, input-referred
  const auto traces = panels[0]->with_class("trace");
  REQUIRE(traces.size() == 4);  // the total and three contributors
  for (const auto* t : traces) CHECK(path_points(t->attribute("d")).points.size() == r.frequencies.size());
  CHECK(panels[1]->with_class("trace").size() == 1);
  const auto legend = texts(root->with_class("legend")[0]->named("text"));
  REQUIRE(legend.size() == 5);
  CHECK(legend[0] == "total at out");
  CHECK(legend[1].rfind(r.contributors[0].source + " " + to_string(r.contributors[0].mechanism), 0) == 0);
  CHECK(legend[4] == "referred to Vin");
  CHECK(texts(root->with_class("axis-title")) ==
        std::vector<std::string>{"output density [V/\u221AHz]", "input-referred [V/\u221AHz]",
                                 "frequency [Hz]"});
  // Decade labels on the log density axis (SI prefixes), and the band's two edges marked.
  for (const auto& label : texts(panels[0]->with_class("y-tick")))
    CHECK((label.back() == 'n' || label.back() == 'p' || label == "1\u00B5" || label == "10\u00B5"));
  CHECK(panels[0]->with_class("marker").size() == 2);
}
