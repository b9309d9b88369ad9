#include <catch2/catch.hpp>

#include <cmath>
#include <set>

#include "plot_queries.hpp"
#include "tacet/report/plot.hpp"
#include "xml_dom.hpp"

using namespace tacet;
using namespace tacet::plot;

namespace {

std::vector<std::string> labels_of(const std::vector<Tick>& ticks) {
  std::vector<std::string> out;
  for (const auto& t : ticks)
    if (!t.label.empty()) out.push_back(t.label);
  return out;
}

Axis log_axis() { return Axis{"frequency", "Hz", Scale::log}; }

// 1, 2 or 5 x 10^k (the nice steps).
bool is_nice_step(double step) {
  const double mantissa = step / std::pow(10.0, std::floor(std::log10(step) + 1e-9));
  for (double m : {1.0, 2.0, 5.0})
    if (std::abs(mantissa - m) < 1e-9) return true;
  return false;
}

Figure one_trace(std::vector<double> x, std::vector<double> y, Scale y_scale = Scale::linear) {
  Figure f;
  f.title = "test";
  f.x = log_axis();
  Panel p;
  p.y = Axis{"magnitude", "dB", y_scale};
  p.traces.push_back({"out", std::move(x), std::move(y)});
  f.panels.push_back(std::move(p));
  return f;
}

}  // namespace

TEST_CASE("a log axis labels every decade with SI prefixes and draws 2..9 as minor lines", "[plot]") {
  const auto t = ticks(log_axis(), {10, 100e3}, 620);
  CHECK(labels_of(t) == std::vector<std::string>{"10", "100", "1k", "10k", "100k"});
  CHECK(t.size() == 4 * 9 + 1);  // every m x 10^k from 10 to 100k
  for (const auto& tick : t)
    if (tick.label.empty()) CHECK(std::fmod(std::log10(tick.value), 1.0) != Approx(0).margin(1e-12));
}

TEST_CASE("a log axis under two decades long also labels 2 and 5 times each decade", "[plot]") {
  const auto t = ticks(log_axis(), {1e3, 20e3}, 620);
  CHECK(labels_of(t) == std::vector<std::string>{"1k", "2k", "5k", "10k", "20k"});
}

TEST_CASE("a log axis over many decades labels fewer decades and drops the minor lines", "[plot]") {
  Axis y{"density", "V/\u221AHz", Scale::log};
  const auto t = ticks(y, {1e-12, 1e0}, 230);  // 19 px per decade
  const auto labels = labels_of(t);
  CHECK(labels.size() == t.size());  // no minor lines
  CHECK(labels == std::vector<std::string>{"1p", "1n", "1\u00B5", "1m", "1"});
}

TEST_CASE("a linear axis ticks at 1, 2 or 5 times a power of ten and covers its range", "[plot]") {
  Axis time{"time", "s", Scale::linear};
  const Range r = axis_range(time, {0.0, 0.37e-3, 0.93e-3}, 620);
  CHECK(r.low == 0);
  CHECK(r.high == Approx(1e-3));
  const auto t = ticks(time, r, 620);
  REQUIRE(t.size() >= 4);
  const double step = t[1].value - t[0].value;
  CHECK(is_nice_step(step));
  for (std::size_t k = 1; k < t.size(); ++k) CHECK(t[k].value - t[k - 1].value == Approx(step));
  CHECK(t.front().value == 0);
  CHECK(t.back().value == Approx(1e-3));
  CHECK(t.front().label == "0");
  CHECK(t[1].label == "100\u00B5");
}

TEST_CASE("a phase axis ticks at one of its own steps", "[plot]") {
  Axis phase{"phase", "deg", Scale::linear};
  phase.si_labels = false;
  phase.steps = {15, 30, 45, 90, 180};
  const Range r = axis_range(phase, {-170.0, 5.0}, 230);
  CHECK(r.low == -180);
  CHECK(r.high == 45);
  CHECK(labels_of(ticks(phase, r, 230)) ==
        std::vector<std::string>{"-180", "-135", "-90", "-45", "0", "45"});
}

TEST_CASE("a range with no usable data or a single value still has a span", "[plot]") {
  Axis lin{"y", "", Scale::linear};
  const Range empty = axis_range(lin, {NAN, INFINITY}, 230);
  CHECK(empty.low < empty.high);
  const Range single = axis_range(lin, {5.0}, 230);
  CHECK(single.low < 5);
  CHECK(single.high > 5);
  Axis log{"y", "", Scale::log};
  const Range negative = axis_range(log, {-1.0, 0.0}, 230);
  CHECK(negative.low == 1);
  CHECK(negative.high == 10);
  const Range decade = axis_range(log, {100.0}, 230);
  CHECK(decade.low == Approx(10));
  CHECK(decade.high == Approx(1000));
}

TEST_CASE("a fixed or tight range is kept as given", "[plot]") {
  Axis x = log_axis();
  x.tight = true;
  const Range tight = axis_range(x, {12.0, 34e3}, 620);
  CHECK(tight.low == 12);
  CHECK(tight.high == 34e3);
  Axis y{"y", "", Scale::linear};
  y.min = -100;
  y.max = 20;
  const Range fixed = axis_range(y, {-300.0, 50.0}, 230);
  CHECK(fixed.low == -100);
  CHECK(fixed.high == 20);
}

TEST_CASE("traces get distinct colour and dash pairs, without yellow", "[plot]") {
  std::set<std::pair<std::string, std::string>> pairs;
  std::set<std::string> colours, dashes;
  for (std::size_t k = 0; k < 49; ++k) {
    const auto s = line_style(k);
    pairs.insert({s.colour, s.dashes});
    if (k < 7) {
      colours.insert(s.colour);
      dashes.insert(s.dashes);
    }
    CHECK(s.colour != "#F0E442");
  }
  CHECK(pairs.size() == 49);
  CHECK(colours.size() == 7);
  CHECK(dashes.size() == 7);
  CHECK(line_style(0).dashes.empty());  // the first trace is solid
}

TEST_CASE("a NaN or an infinite point breaks the line and every finite point is drawn", "[plot]") {
  const auto f = one_trace({10, 20, 30, 40, 50, 60}, {1, 2, NAN, 4, -INFINITY, 6});
  const std::string text = document(f);
  const auto root = xml::parse(text);
  const auto traces = root->with_class("trace");
  REQUIRE(traces.size() == 1);
  const auto path = path_points(traces[0]->attribute("d"));
  CHECK(path.subpaths == 3);
  CHECK(path.points.size() == 4);
  CHECK(root->with_class("trace-dot").size() == 2);  // 40 and 60 stand alone: drawn as dots
  CHECK(text.find("nan") == std::string::npos);
  CHECK(text.find("inf") == std::string::npos);
}

TEST_CASE("on a log axis a value of zero or below breaks the line", "[plot]") {
  const auto f = one_trace({10, 20, 30, 40}, {1e-9, 0, -1e-9, 2e-9}, Scale::log);
  const auto root = xml::parse(document(f));
  const auto path = path_points(root->with_class("trace")[0]->attribute("d"));
  CHECK(path.subpaths == 2);
  CHECK(path.points.size() == 2);
}

TEST_CASE("trace points land where the axes put their values", "[plot]") {
  const auto f = one_trace({10, 100, 1000}, {-20, 0, 20});
  const auto root = xml::parse(document(f));
  const auto pts = path_points(root->with_class("trace")[0]->attribute("d")).points;
  REQUIRE(pts.size() == 3);
  // Equal steps in log10 f and in dB: equally spaced, the middle one halfway.
  CHECK(pts[1].first - pts[0].first == Approx(pts[2].first - pts[1].first).margin(0.02));
  CHECK(pts[1].second - pts[0].second == Approx(pts[2].second - pts[1].second).margin(0.02));
  CHECK(pts[0].second > pts[2].second);  // -20 dB is lower on the page (larger y)
  // The x tick "100" is drawn at the middle point's x.
  for (const auto* t : root->with_class("x-tick"))
    if (t->text == "100") CHECK(std::stod(t->attribute("x")) == Approx(pts[1].first).margin(0.02));
}

TEST_CASE("the legend has one entry per trace label with the trace's colour and dash", "[plot]") {
  Figure f = one_trace({1, 2}, {1, 2});
  f.panels[0].traces.push_back({"in", {1, 2}, {2, 3}});
  Panel phase;
  phase.y = Axis{"phase", "deg"};
  phase.traces = f.panels[0].traces;  // the same probes again: no new entries
  f.panels.push_back(phase);
  const auto root = xml::parse(render(f));
  const auto legend = root->with_class("legend");
  REQUIRE(legend.size() == 1);
  const auto texts = legend[0]->named("text");
  REQUIRE(texts.size() == 2);
  CHECK(texts[0]->text == "out");
  CHECK(texts[1]->text == "in");
  const auto lines = legend[0]->named("line");
  REQUIRE(lines.size() == 2);
  const auto traces = root->with_class("trace");
  REQUIRE(traces.size() == 4);
  CHECK(lines[1]->attribute("stroke") == traces[1]->attribute("stroke"));
  CHECK(lines[1]->attribute("stroke-dasharray") == traces[1]->attribute("stroke-dasharray"));
  CHECK(traces[3]->attribute("stroke") == traces[1]->attribute("stroke"));
}

TEST_CASE("stacked panels share the x axis and only the last one carries x labels", "[plot]") {
  Figure f = one_trace({10, 1e5}, {0, -40});
  Panel phase;
  phase.y = Axis{"phase", "deg"};
  phase.traces.push_back({"out", {10, 1e5}, {0, -90}});
  f.panels.push_back(phase);
  const auto root = xml::parse(render(f));
  const auto panels = root->with_class("panel");
  REQUIRE(panels.size() == 2);
  auto vertical_grid = [](const xml::Element* panel) {
    std::vector<std::string> xs;
    for (const auto* l : panel->with_class("grid-major"))
      if (l->attribute("x1") == l->attribute("x2")) xs.push_back(l->attribute("x1"));
    return xs;
  };
  CHECK(vertical_grid(panels[0]).size() == 5);
  CHECK(vertical_grid(panels[0]) == vertical_grid(panels[1]));
  CHECK(root->with_class("x-tick").size() == 5);
  CHECK(panels[0]->with_class("x-tick").empty());
  const auto titles = root->with_class("axis-title");
  REQUIRE(titles.size() == 3);
  CHECK(titles[0]->text == "magnitude [dB]");
  CHECK(titles[1]->text == "phase [deg]");
  CHECK(titles[2]->text == "frequency [Hz]");
}

TEST_CASE("every clip path id in a figure is unique and starts with the figure's id", "[plot]") {
  Figure f = one_trace({1, 2}, {1, 2});
  f.panels.push_back(f.panels[0]);
  f.id = "ac-3";
  const auto root = xml::parse(render(f));
  const auto clips = root->named("clipPath");
  REQUIRE(clips.size() == 2);
  CHECK(clips[0]->attribute("id") == "ac-3-clip-0");
  CHECK(clips[1]->attribute("id") == "ac-3-clip-1");
}

TEST_CASE("markers inside the range are drawn with their labels, those outside left out", "[plot]") {
  Figure f = one_trace({10, 1e4}, {0, -60});
  f.x.max = 1e4;  // a fixed range: a marker beyond it is not drawn (else it widens the range)
  f.panels[0].verticals = {{1e3, "crossover 1kHz"}, {1e6, "beyond"}};
  f.panels[0].horizontals = {{-3, "-3 dB"}};
  f.panels[0].points = {{1e3, -20, "PM 60\u00B0"}};
  const auto root = xml::parse(render(f));
  const auto markers = root->with_class("markers")[0];
  std::vector<std::string> texts;
  for (const auto* t : markers->named("text")) texts.push_back(t->text);
  CHECK(texts == std::vector<std::string>{"-3 dB", "crossover 1kHz", "PM 60\u00B0"});
  CHECK(markers->named("line").size() == 2);
  CHECK(markers->named("circle").size() == 1);
}

TEST_CASE("a histogram counts every finite value once in Freedman-Diaconis bins", "[plot]") {
  std::vector<double> values;
  for (int k = 0; k < 1000; ++k) values.push_back(k);
  values.push_back(NAN);
  // IQR of 0..999 (Hyndman-Fan type 7) is 499.5: width 2 x 499.5 / 1000^(1/3) = 99.9, 10 bins.
  const Figure f = histogram("spread", Axis{"gain", "dB"}, values, {{-100, "min"}, {1100, "max"}});
  REQUIRE(f.panels.size() == 1);
  REQUIRE(f.panels[0].bars);
  const auto& bars = *f.panels[0].bars;
  CHECK(bars.counts.size() == 10);
  CHECK(bars.edges.size() == 11);
  double total = 0;
  for (double c : bars.counts) total += c;
  CHECK(total == 1000);
  const auto root = xml::parse(render(f));
  CHECK(root->with_class("bars")[0]->named("rect").size() == 10);
  // Both limits are inside the x range, with room to spare, so both are drawn off the frame.
  REQUIRE(f.x.min);
  REQUIRE(f.x.max);
  CHECK(*f.x.min < -100);
  CHECK(*f.x.max > 1100);
  CHECK(root->with_class("markers")[0]->named("line").size() == 2);
}

TEST_CASE("a histogram of identical values falls back to Sturges and still draws", "[plot]") {
  const Figure f = histogram("spread", Axis{"offset", "V"}, std::vector<double>(64, 1e-3), {});
  REQUIRE(f.panels[0].bars);
  CHECK(f.panels[0].bars->counts.size() == 7);  // 1 + log2 64
  CHECK_NOTHROW(xml::parse(render(f)));
}

TEST_CASE("a time response shows its settling band and settling time", "[plot]") {
  std::vector<double> t, v;
  for (int k = 0; k <= 200; ++k) {
    t.push_back(k * 1e-6);
    v.push_back(1 - std::exp(-k / 20.0));
  }
  const Figure f = time_response("step", Axis{"output", "V"}, {{"out", t, v}},
                                 YBand{0.99, 1.01, "\u00B11 %"}, {{92e-6, "settled 92\u00B5s"}});
  const auto root = xml::parse(render(f));
  CHECK(root->with_class("band").size() == 1);
  CHECK(path_points(root->with_class("trace")[0]->attribute("d")).points.size() == 201);
  CHECK(root->with_class("axis-title").back()->text == "time [s]");
  const auto ticks = root->with_class("x-tick");
  REQUIRE(!ticks.empty());
  CHECK(ticks.front()->text == "0");
  CHECK(ticks.back()->text == "200\u00B5");
}

TEST_CASE("a widened linear range starts and ends on labelled ticks", "[plot]") {
  Axis y{"magnitude", "dB"};
  y.si_labels = false;
  for (const auto& data : std::vector<std::vector<double>>{
           {-17.5, 26}, {0, 0.93}, {3, 7.1}, {-1234, 5678}, {-0.004, -0.001}, {99, 101}}) {
    for (double length : {230.0, 620.0}) {
      const Range r = axis_range(y, data, length);
      const auto t = ticks(y, r, length);
      INFO(data[0] << ".." << data[1] << " on " << length << " px");
      REQUIRE(t.size() >= 3);
      CHECK(t.front().value == Approx(r.low));
      CHECK(t.back().value == Approx(r.high));
      CHECK(labels_of(t).size() == t.size());
    }
  }
}
