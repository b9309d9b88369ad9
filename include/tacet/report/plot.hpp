#pragma once
// Plots: one or more panels stacked on a shared x axis, each with its own y
// axis, traces, markers and (for histograms) bars; rendered as one SVG.
//
// Axes. A log axis has a grid line at every decade (labelled with SI
// prefixes: 1, 10, 100, 1k, 10k) and lighter ones at 2..9 x each decade;
// spanning at most two decades it labels 2 and 5 x as well. A linear axis
// has ticks at "nice" steps, 1, 2 or 5 x 10^k, about one per 50 px (Heckbert,
// "Nice numbers for graph labels", Graphics Gems, 1990), or at one of the
// axis's own `steps` (45 and 90 for degrees). A panel's y range comes from its
// finite data, widened to whole ticks (a log axis: to whole decades); the x
// range is the data's own unless given.
//
// Traces. One path per trace; a point whose x or y is not finite (or not
// above 0 on a log axis) ends the line there and the next finite point starts
// a new one, so a NaN or -inf dB shows as a gap, never as a number. Trace k
// gets colour k of the Okabe-Ito palette (Okabe and Ito, "Color Universal
// Design", 2008: distinguishable with the common colour-vision deficiencies;
// yellow left out, it vanishes on white) and dash pattern k, so traces stay
// apart in greyscale print too. The legend, above the panels, shows both.
//
// Markers. Vertical lines (a crossover frequency, a settling time, a limit on
// a histogram), horizontal lines (0 dB, -180 deg, a spec limit), shaded y
// bands (a settling band) and labelled points (a margin at its crossover;
// the label on the side of the dot towards the panel's middle, every other
// label below its dot).

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace tacet::plot {

enum class Scale { linear, log };

struct Axis {
  Axis() = default;
  Axis(std::string title_, std::string unit_, Scale scale_ = Scale::linear)
      : title(std::move(title_)), unit(std::move(unit_)), scale(scale_) {}
  std::string title;                ///< "frequency", "magnitude"
  std::string unit;                 ///< "Hz", "dB", "V/√Hz"; shown as "title [unit]"
  Scale scale = Scale::linear;
  std::optional<double> min, max;   ///< a fixed range; default: from the data
  bool tight = false;               ///< range exactly the data's, not widened to ticks
  bool si_labels = true;            ///< tick labels with SI prefixes (1k, 200µ); else plain (-20, 45)
  std::vector<double> steps;        ///< linear: allowed tick steps; empty: 1, 2, 5 x 10^k
  /// "title [unit]", or the title alone without a unit.
  std::string caption() const;
};

struct Trace {
  Trace() = default;
  Trace(std::string label_, std::vector<double> x_, std::vector<double> y_, int style_ = -1)
      : label(std::move(label_)), x(std::move(x_)), y(std::move(y_)), style(style_) {}
  std::string label;         ///< the legend entry
  std::vector<double> x, y;  ///< the same length
  /// Which line_style; -1: the trace's place in its panel. Traces with the
  /// same label and style in several panels share one legend entry.
  int style = -1;
};

struct VerticalLine {
  double x = 0;
  std::string label;
};

struct HorizontalLine {
  double y = 0;
  std::string label;
};

/// A shaded band between two y values across the panel.
struct YBand {
  double low = 0, high = 0;
  std::string label;
};

/// A labelled dot.
struct Point {
  double x = 0, y = 0;
  std::string label;
};

/// Histogram bars: bar k spans edges[k]..edges[k+1] with height counts[k].
struct Bars {
  std::string label;
  std::vector<double> edges;
  std::vector<double> counts;
};

struct Panel {
  Axis y;
  std::vector<Trace> traces;
  std::optional<Bars> bars;
  std::vector<VerticalLine> verticals;
  std::vector<HorizontalLine> horizontals;
  std::vector<YBand> bands;
  std::vector<Point> points;
};

/// Panels stacked top to bottom on one x axis; x tick labels under the last.
struct Figure {
  std::string title;      ///< first line above the plot
  std::string subtitle;   ///< second line (the file, a total)
  Axis x;
  std::vector<Panel> panels;
  double width = 720;          ///< px
  double panel_height = 230;   ///< px, the plotting area of one panel
  /// Prefix of the element ids (clip paths); pages that hold several
  /// figures give each its own.
  std::string id = "plot";
};

/// The figure as an <svg> element (for inline use in HTML).
std::string render(const Figure& figure);
/// The figure as a standalone .svg document (XML declaration first).
std::string document(const Figure& figure);

/// A tick on an axis: where, its label (empty: a minor grid line).
struct Tick {
  double value = 0;
  std::string label;
};

/// The axis's range: fixed, else from the finite values in `data` (on a log
/// axis, those above 0), widened unless tight. Never empty: no usable data
/// gives 0..1 (log: 1..10), a single value a span around it. `length_px`:
/// the axis's length on the page, which sets how many ticks fit.
struct Range {
  double low = 0, high = 1;
};
Range axis_range(const Axis& axis, const std::vector<double>& data, double length_px);
/// The ticks of an axis over a range, low to high, spaced for `length_px`.
std::vector<Tick> ticks(const Axis& axis, Range range, double length_px);

/// The colour (#rrggbb) and dash pattern ("" for solid, else an SVG
/// stroke-dasharray) of trace `k`; every pair differs for k below 49.
struct LineStyle {
  std::string colour;
  std::string dashes;
};
LineStyle line_style(std::size_t k);

/// An empty figure over frequency: a log axis in Hz spanning exactly the
/// data (a sweep's first to last point), for Bode, noise and loop plots.
Figure over_frequency(std::string title, std::string subtitle, std::string id);

/// A histogram of `values` in one panel: Freedman-Diaconis bins (bin width
/// 2 IQR n^(-1/3); Freedman and Diaconis, 1981) between 5 and 60 of them,
/// Sturges' rule (1 + log2 n; Sturges, 1926) when the IQR is 0; the x range
/// covers the values and every limit, each limit drawn as a vertical line.
Figure histogram(std::string title, Axis x, const std::vector<double>& values,
                 std::vector<VerticalLine> limits);

/// A response against time (linear axes, seconds): the traces, an optional
/// band (a settling band about the final value) and vertical markers (the
/// settling time).
Figure time_response(std::string title, Axis y, std::vector<Trace> traces,
                     std::optional<YBand> band, std::vector<VerticalLine> markers);

}  // namespace tacet::plot
