// Figures of a fixed shape built on the plot primitives: a histogram and a
// response against time.

#include <algorithm>
#include <cmath>

#include "tacet/report/plot.hpp"

namespace tacet::plot {
namespace {

constexpr int kFewestBins = 5, kMostBins = 60;

// The q-quantile of sorted values, linear between order statistics
// (Hyndman and Fan 1996, definition 7).
double quantile(const std::vector<double>& sorted, double q) {
  const double h = (static_cast<double>(sorted.size()) - 1) * q;
  const auto lower = static_cast<std::size_t>(std::floor(h));
  const std::size_t upper = std::min(lower + 1, sorted.size() - 1);
  return sorted[lower] + (h - static_cast<double>(lower)) * (sorted[upper] - sorted[lower]);
}

int bin_count(const std::vector<double>& sorted) {
  const double n = static_cast<double>(sorted.size());
  const double span = sorted.back() - sorted.front();
  const double iqr = quantile(sorted, 0.75) - quantile(sorted, 0.25);
  double bins = 1 + std::ceil(std::log2(n));  // Sturges
  if (iqr > 0 && span > 0) bins = std::ceil(span / (2 * iqr * std::cbrt(1 / n)));
  return std::clamp(static_cast<int>(bins), kFewestBins, kMostBins);
}

// A fixed x range over the values and the limits with a little room at each
// end, so that a limit is never drawn on the frame.
void pad_to_cover(Axis& x, const std::vector<double>& sorted, const std::vector<VerticalLine>& limits) {
  double low = sorted.empty() ? INFINITY : sorted.front(), high = sorted.empty() ? -INFINITY : sorted.back();
  for (const auto& l : limits) {
    if (!std::isfinite(l.x)) continue;
    low = std::min(low, l.x);
    high = std::max(high, l.x);
  }
  if (!(low < high)) return;  // nothing, or one value: the axis's own widening
  const double room = 0.05 * (high - low);
  x.min = low - room;
  x.max = high + room;
}

}  // namespace

Figure histogram(std::string title, Axis x, const std::vector<double>& values,
                 std::vector<VerticalLine> limits) {
  std::vector<double> sorted;
  for (double v : values)
    if (std::isfinite(v)) sorted.push_back(v);
  std::sort(sorted.begin(), sorted.end());
  Panel panel;
  panel.y = Axis{"draws", "", Scale::linear};
  panel.y.min = 0;
  panel.verticals = std::move(limits);
  if (!sorted.empty()) {
    Bars bars;
    bars.label = "draws per bin";
    const int bins = bin_count(sorted);
    double low = sorted.front(), high = sorted.back();
    if (low == high) {
      const double d = low != 0 ? std::abs(low) * 1e-3 : 1e-3;
      low -= d;
      high += d;
    }
    const double width = (high - low) / bins;
    for (int k = 0; k <= bins; ++k) bars.edges.push_back(low + width * k);
    bars.counts.assign(static_cast<std::size_t>(bins), 0.0);
    for (double v : sorted) {
      const auto k = std::min(static_cast<std::size_t>((v - low) / width), bars.counts.size() - 1);
      bars.counts[k] += 1;
    }
    panel.bars = std::move(bars);
  }
  x.scale = Scale::linear;
  if (!x.min && !x.max) pad_to_cover(x, sorted, panel.verticals);
  Figure figure;
  figure.title = std::move(title);
  figure.x = std::move(x);
  figure.panels.push_back(std::move(panel));
  return figure;
}

Figure over_frequency(std::string title, std::string subtitle, std::string id) {
  Figure figure;
  figure.title = std::move(title);
  figure.subtitle = std::move(subtitle);
  figure.id = std::move(id);
  figure.x = Axis{"frequency", "Hz", Scale::log};
  figure.x.tight = true;
  return figure;
}

Figure time_response(std::string title, Axis y, std::vector<Trace> traces,
                     std::optional<YBand> band, std::vector<VerticalLine> markers) {
  Panel panel;
  panel.y = std::move(y);
  panel.traces = std::move(traces);
  if (band) panel.bands.push_back(std::move(*band));
  panel.verticals = std::move(markers);
  Figure figure;
  figure.title = std::move(title);
  figure.x = Axis{"time", "s", Scale::linear};
  figure.x.tight = true;
  figure.panels.push_back(std::move(panel));
  return figure;
}

}  // namespace tacet::plot
