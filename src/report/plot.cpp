// Rendering a figure: layout, grid, axes, legend, traces and markers.

#include "tacet/report/plot.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "tacet/language/source.hpp"
#include "tacet/report/svg.hpp"

namespace tacet::plot {
namespace {

using svg::number;

constexpr double kLeft = 74, kRight = 22;  // px beside the plotting area
constexpr double kPanelGap = 14;           // px between stacked panels
constexpr double kBottom = 50;             // px for x tick labels and title
constexpr double kLegendRow = 18;
constexpr double kCharWidth = 6.6;         // px, an average 12 px sans-serif character
constexpr const char* kFont = "DejaVu Sans, Helvetica, Arial, sans-serif";
constexpr const char* kInk = "#222222";
constexpr const char* kMarkerInk = "#444444";

// How a value on an axis maps to a pixel: p0 at range.low, p1 at range.high.
// Called for every point of every trace, so the logarithms of the range are taken once.
class Mapping {
 public:
  Mapping(Scale scale_, Range range_, double p0, double p1)
      : scale(scale_), range(range_), p0_(p0),
        origin_(scale_ == Scale::log ? std::log10(range_.low) : range_.low) {
    const double span = scale == Scale::log ? std::log10(range.high) - origin_ : range.high - range.low;
    per_unit_ = (p1 - p0) / span;
  }
  double operator()(double v) const {
    return p0_ + per_unit_ * ((scale == Scale::log ? std::log10(v) : v) - origin_);
  }
  bool usable(double v) const { return std::isfinite(v) && (scale == Scale::linear || v > 0); }
  bool inside(double v) const {
    const double tolerance = 1e-9 * std::abs(range.high - range.low);
    return usable(v) && v >= range.low - tolerance && v <= range.high + tolerance;
  }
  const Scale scale;
  const Range range;

 private:
  double p0_, origin_, per_unit_ = 0;
};

struct LegendEntry {
  std::string label;
  LineStyle style;
  bool bar = false;
};

LineStyle style_of(const Panel& panel, std::size_t k) {
  const int chosen = panel.traces[k].style;
  return line_style(chosen >= 0 ? static_cast<std::size_t>(chosen) : k);
}

double text_width(const std::string& text) {
  return kCharWidth * static_cast<double>(code_points(text));
}

std::vector<LegendEntry> legend_entries(const Figure& figure) {
  std::vector<LegendEntry> entries;
  for (const Panel& panel : figure.panels) {
    if (panel.bars && !panel.bars->label.empty())
      entries.push_back({panel.bars->label, line_style(0), true});
    for (std::size_t k = 0; k < panel.traces.size(); ++k) {
      const LineStyle style = style_of(panel, k);
      const bool seen = std::any_of(entries.begin(), entries.end(), [&](const LegendEntry& e) {
        return e.label == panel.traces[k].label && e.style.colour == style.colour &&
               e.style.dashes == style.dashes && !e.bar;
      });
      if (!seen && !panel.traces[k].label.empty())
        entries.push_back({panel.traces[k].label, style, false});
    }
  }
  return entries;
}

// Entry positions, flowing left to right in rows across the plotting width.
struct LegendLayout {
  std::vector<std::pair<double, int>> at;  // x offset, row
  int rows = 0;
};

double entry_width(const LegendEntry& e) { return 30 + text_width(e.label) + 18; }

LegendLayout layout_legend(const std::vector<LegendEntry>& entries, double width) {
  LegendLayout layout;
  double x = 0;
  int row = 0;
  for (const auto& e : entries) {
    if (x > 0 && x + entry_width(e) > width) {
      x = 0;
      ++row;
    }
    layout.at.push_back({x, row});
    x += entry_width(e);
  }
  layout.rows = entries.empty() ? 0 : row + 1;
  return layout;
}

void draw_legend(svg::Writer& w, const std::vector<LegendEntry>& entries, const LegendLayout& layout,
                 double left, double top) {
  w.open("g", {{"class", "legend"}, {"font-size", "12"}});
  for (std::size_t k = 0; k < entries.size(); ++k) {
    const auto& e = entries[k];
    const double x = left + layout.at[k].first;
    const double y = top + kLegendRow * layout.at[k].second + kLegendRow / 2;
    if (e.bar)
      w.empty("rect", {{"x", number(x)}, {"y", number(y - 5)}, {"width", "24"}, {"height", "10"},
                       {"fill", e.style.colour}, {"fill-opacity", "0.35"}, {"stroke", e.style.colour}});
    else
      w.empty("line", {{"x1", number(x)}, {"y1", number(y)}, {"x2", number(x + 24)}, {"y2", number(y)},
                       {"stroke", e.style.colour}, {"stroke-width", "2"},
                       {"stroke-dasharray", e.style.dashes.empty() ? "none" : e.style.dashes}});
    w.element("text", {{"x", number(x + 30)}, {"y", number(y + 4)}, {"fill", kInk}}, e.label);
  }
  w.close();
}

// The finite x or y values a panel shows, markers included, so that they are in range.
std::vector<double> x_data(const Figure& figure) {
  std::vector<double> data;
  for (const Panel& panel : figure.panels) {
    for (const Trace& t : panel.traces) data.insert(data.end(), t.x.begin(), t.x.end());
    if (panel.bars) data.insert(data.end(), panel.bars->edges.begin(), panel.bars->edges.end());
    for (const auto& v : panel.verticals) data.push_back(v.x);
    for (const auto& p : panel.points) data.push_back(p.x);
  }
  return data;
}

std::vector<double> y_data(const Panel& panel) {
  std::vector<double> data;
  for (const Trace& t : panel.traces) data.insert(data.end(), t.y.begin(), t.y.end());
  if (panel.bars) {
    data.insert(data.end(), panel.bars->counts.begin(), panel.bars->counts.end());
    data.push_back(0);
  }
  for (const auto& h : panel.horizontals) data.push_back(h.y);
  for (const auto& b : panel.bands) {
    data.push_back(b.low);
    data.push_back(b.high);
  }
  for (const auto& p : panel.points) data.push_back(p.y);
  return data;
}

// The path of a trace: a new subpath after every point that cannot be drawn.
// A subpath of one point draws nothing, so those points are also returned, as dots.
struct TracePath {
  std::string d;
  std::vector<std::pair<double, double>> lone;
};

TracePath trace_path(const Trace& trace, const Mapping& x, const Mapping& y) {
  TracePath path;
  path.d.reserve(trace.x.size() * 16);
  std::size_t run = 0;
  std::pair<double, double> first{};
  const std::size_t n = std::min(trace.x.size(), trace.y.size());
  for (std::size_t i = 0; i <= n; ++i) {
    if (i == n || !x.usable(trace.x[i]) || !y.usable(trace.y[i])) {
      if (run == 1) path.lone.push_back(first);
      run = 0;
      continue;
    }
    const double px = x(trace.x[i]), py = y(trace.y[i]);
    if (run == 0) first = {px, py};
    path.d += run == 0 ? 'M' : 'L';
    svg::append_number(path.d, px);
    path.d += ' ';
    svg::append_number(path.d, py);
    ++run;
  }
  return path;
}

struct Box {
  double left, top, right, bottom;
};

void draw_grid(svg::Writer& w, const std::vector<Tick>& xt, const std::vector<Tick>& yt,
               const Mapping& x, const Mapping& y, const Box& box) {
  w.open("g", {{"class", "grid"}, {"stroke-width", "1"}});
  for (const Tick& t : xt) {
    const std::string px = number(x(t.value));
    w.empty("line", {{"class", t.label.empty() ? "grid-minor" : "grid-major"}, {"x1", px},
                     {"y1", number(box.top)}, {"x2", px}, {"y2", number(box.bottom)},
                     {"stroke", t.label.empty() ? "#ebebeb" : "#c8c8c8"}});
  }
  for (const Tick& t : yt) {
    const std::string py = number(y(t.value));
    w.empty("line", {{"class", t.label.empty() ? "grid-minor" : "grid-major"},
                     {"x1", number(box.left)}, {"y1", py}, {"x2", number(box.right)}, {"y2", py},
                     {"stroke", t.label.empty() ? "#ebebeb" : "#c8c8c8"}});
  }
  w.close();
}

void draw_y_axis(svg::Writer& w, const Axis& axis, const std::vector<Tick>& yt, const Mapping& y,
                 const Box& box) {
  w.open("g", {{"class", "y-axis"}, {"font-size", "11"}, {"fill", kInk}, {"text-anchor", "end"}});
  for (const Tick& t : yt)
    if (!t.label.empty())
      w.element("text", {{"class", "y-tick"}, {"x", number(box.left - 6)}, {"y", number(y(t.value) + 4)}},
                t.label);
  const double middle = (box.top + box.bottom) / 2;
  w.element("text", {{"class", "axis-title"}, {"text-anchor", "middle"}, {"font-size", "12"},
                     {"transform", fmt::format("translate(16 {}) rotate(-90)", number(middle))}},
            axis.caption());
  w.close();
}

void draw_x_axis(svg::Writer& w, const Axis& axis, const std::vector<Tick>& xt, const Mapping& x,
                 const Box& box) {
  w.open("g", {{"class", "x-axis"}, {"font-size", "11"}, {"fill", kInk}, {"text-anchor", "middle"}});
  for (const Tick& t : xt)
    if (!t.label.empty())
      w.element("text", {{"class", "x-tick"}, {"x", number(x(t.value))}, {"y", number(box.bottom + 16)}},
                t.label);
  w.element("text", {{"class", "axis-title"}, {"font-size", "12"},
                     {"x", number((box.left + box.right) / 2)}, {"y", number(box.bottom + 38)}},
            axis.caption());
  w.close();
}

// A label that stays readable over grid and traces: a white outline under the glyphs.
void halo_text(svg::Writer& w, double x, double y, const char* anchor, const std::string& text) {
  w.element("text", {{"x", number(x)}, {"y", number(y)}, {"text-anchor", anchor},
                     {"stroke", "#ffffff"}, {"stroke-width", "3"}, {"paint-order", "stroke"},
                     {"stroke-linejoin", "round"}},
            text);
}

void draw_bands_and_bars(svg::Writer& w, const Panel& panel, const Mapping& x, const Mapping& y,
                         const Box& box) {
  for (const YBand& b : panel.bands) {
    if (!y.usable(b.low) || !y.usable(b.high)) continue;
    const double top = std::max(box.top, std::min(y(b.low), y(b.high)));
    const double bottom = std::min(box.bottom, std::max(y(b.low), y(b.high)));
    w.empty("rect", {{"class", "band"}, {"x", number(box.left)}, {"y", number(top)},
                     {"width", number(box.right - box.left)}, {"height", number(std::max(0.0, bottom - top))},
                     {"fill", "#999999"}, {"fill-opacity", "0.22"}});
  }
  if (!panel.bars) return;
  const Bars& bars = *panel.bars;
  const LineStyle style = line_style(0);
  w.open("g", {{"class", "bars"}, {"fill", style.colour}, {"fill-opacity", "0.35"},
               {"stroke", style.colour}, {"stroke-width", "1"}});
  for (std::size_t k = 0; k < bars.counts.size() && k + 1 < bars.edges.size(); ++k) {
    if (!x.usable(bars.edges[k]) || !x.usable(bars.edges[k + 1]) || !y.usable(bars.counts[k])) continue;
    const double left = x(bars.edges[k]), right = x(bars.edges[k + 1]), top = y(bars.counts[k]);
    w.empty("rect", {{"x", number(left)}, {"y", number(top)}, {"width", number(right - left)},
                     {"height", number(y(0) - top)}});
  }
  w.close();
}

void draw_traces(svg::Writer& w, const Panel& panel, const Mapping& x, const Mapping& y) {
  for (std::size_t k = 0; k < panel.traces.size(); ++k) {
    const LineStyle style = style_of(panel, k);
    const TracePath path = trace_path(panel.traces[k], x, y);
    w.open("path", {{"class", "trace"}, {"d", path.d}, {"fill", "none"},
                    {"stroke", style.colour}, {"stroke-width", "1.8"}, {"stroke-linejoin", "round"},
                    {"stroke-dasharray", style.dashes.empty() ? "none" : style.dashes}});
    w.element("title", {}, panel.traces[k].label);
    w.close();
    for (const auto& [px, py] : path.lone)
      w.empty("circle", {{"class", "trace-dot"}, {"cx", number(px)}, {"cy", number(py)}, {"r", "2.5"},
                         {"fill", style.colour}});
  }
}

void draw_markers(svg::Writer& w, const Panel& panel, const Mapping& x, const Mapping& y,
                  const Box& box) {
  w.open("g", {{"class", "markers"}, {"font-size", "11"}, {"fill", kInk}});
  for (const YBand& b : panel.bands)
    if (y.inside(b.high) && !b.label.empty()) halo_text(w, box.right - 4, y(b.high) - 4, "end", b.label);
  for (const HorizontalLine& h : panel.horizontals) {
    if (!y.inside(h.y)) continue;
    w.empty("line", {{"class", "marker"}, {"x1", number(box.left)}, {"y1", number(y(h.y))},
                     {"x2", number(box.right)}, {"y2", number(y(h.y))}, {"stroke", kMarkerInk},
                     {"stroke-width", "1.2"}, {"stroke-dasharray", "5 3"}});
    if (!h.label.empty()) halo_text(w, box.right - 4, y(h.y) - 4, "end", h.label);
  }
  for (std::size_t k = 0; k < panel.verticals.size(); ++k) {
    const VerticalLine& v = panel.verticals[k];
    if (!x.inside(v.x)) continue;
    const double px = x(v.x);
    w.empty("line", {{"class", "marker"}, {"x1", number(px)}, {"y1", number(box.top)}, {"x2", number(px)},
                     {"y2", number(box.bottom)}, {"stroke", kMarkerInk}, {"stroke-width", "1.2"},
                     {"stroke-dasharray", "5 3"}});
    // Labels step down so that neighbouring lines do not print over each other.
    const bool right_half = px > (box.left + box.right) / 2;
    if (!v.label.empty())
      halo_text(w, right_half ? px - 4 : px + 4, box.top + 14 + 14 * static_cast<double>(k % 4),
                right_half ? "end" : "start", v.label);
  }
  std::size_t labelled = 0;
  for (const Point& p : panel.points) {
    if (!x.inside(p.x) || !y.inside(p.y)) continue;
    const double px = x(p.x), py = y(p.y);
    w.empty("circle", {{"class", "marker"}, {"cx", number(px)}, {"cy", number(py)}, {"r", "3.5"},
                       {"fill", kInk}});
    if (p.label.empty()) continue;
    // Towards the middle of the panel, so a label near the right edge is not
    // cut off; every other one below its dot, so neighbours do not overprint.
    const bool right_half = px > (box.left + box.right) / 2;
    halo_text(w, right_half ? px - 7 : px + 7, py + (labelled++ % 2 == 0 ? -7 : 16),
              right_half ? "end" : "start", p.label);
  }
  w.close();
}

void draw_panel(svg::Writer& w, const Figure& figure, std::size_t index, const Mapping& x,
                const std::vector<Tick>& xt, const Box& box) {
  const Panel& panel = figure.panels[index];
  const double height = box.bottom - box.top;
  Mapping y{panel.y.scale, axis_range(panel.y, y_data(panel), height), box.bottom, box.top};
  const auto yt = ticks(panel.y, y.range, height);
  const std::string clip = fmt::format("{}-clip-{}", figure.id, index);
  w.open("g", {{"class", "panel"}});
  w.open("clipPath", {{"id", clip}});
  w.empty("rect", {{"x", number(box.left)}, {"y", number(box.top)}, {"width", number(box.right - box.left)},
                   {"height", number(height)}});
  w.close();
  draw_grid(w, xt, yt, x, y, box);
  w.open("g", {{"clip-path", fmt::format("url(#{})", clip)}});
  draw_bands_and_bars(w, panel, x, y, box);
  draw_traces(w, panel, x, y);
  w.close();
  draw_markers(w, panel, x, y, box);
  w.empty("rect", {{"class", "frame"}, {"x", number(box.left)}, {"y", number(box.top)},
                   {"width", number(box.right - box.left)}, {"height", number(height)}, {"fill", "none"},
                   {"stroke", kMarkerInk}, {"stroke-width", "1"}});
  draw_y_axis(w, panel.y, yt, y, box);
  w.close();
}

}  // namespace

std::string render(const Figure& figure) {
  const double right = figure.width - kRight;
  const auto entries = legend_entries(figure);
  const auto legend = layout_legend(entries, right - kLeft);
  const double title_bottom = figure.subtitle.empty() ? 30 : 46;
  const double panels_top = title_bottom + kLegendRow * legend.rows + 10;
  const std::size_t n = std::max<std::size_t>(1, figure.panels.size());
  const double height = panels_top + static_cast<double>(n) * figure.panel_height +
                        static_cast<double>(n - 1) * kPanelGap + kBottom;
  const Mapping x{figure.x.scale, axis_range(figure.x, x_data(figure), right - kLeft), kLeft, right};
  const auto xt = ticks(figure.x, x.range, right - kLeft);

  svg::Writer w;
  const std::string size = fmt::format("0 0 {} {}", number(figure.width), number(height));
  w.open("svg", {{"xmlns", std::string(svg::kNamespace)}, {"version", "1.1"}, {"viewBox", size},
                 {"width", number(figure.width)}, {"height", number(height)}, {"role", "img"},
                 {"aria-label", figure.title}, {"font-family", kFont}});
  w.element("title", {}, figure.title);
  w.empty("rect", {{"width", "100%"}, {"height", "100%"}, {"fill", "#ffffff"}});
  w.element("text", {{"class", "title"}, {"x", number(kLeft)}, {"y", "20"}, {"font-size", "14"},
                     {"font-weight", "bold"}, {"fill", kInk}},
            figure.title);
  if (!figure.subtitle.empty())
    w.element("text", {{"class", "subtitle"}, {"x", number(kLeft)}, {"y", "38"}, {"font-size", "12"},
                       {"fill", "#555555"}},
              figure.subtitle);
  draw_legend(w, entries, legend, kLeft, title_bottom);
  Box box{kLeft, panels_top, right, panels_top + figure.panel_height};
  for (std::size_t k = 0; k < figure.panels.size(); ++k) {
    draw_panel(w, figure, k, x, xt, box);
    if (k + 1 < figure.panels.size()) box = {kLeft, box.bottom + kPanelGap, right, box.bottom + kPanelGap + figure.panel_height};
  }
  draw_x_axis(w, figure.x, xt, x, box);
  return w.finish();
}

std::string document(const Figure& figure) { return std::string(svg::kXmlDeclaration) + render(figure); }

}  // namespace tacet::plot
