// Axis ranges, ticks and tick labels, and the line styles of traces.

#include <algorithm>
#include <array>
#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/plot.hpp"

namespace tacet::plot {
namespace {

constexpr double kMinTickSpacing = 45;  // px between labelled ticks
constexpr double kMinMinorSpacing = 6;  // px between minor grid lines on a log axis

bool usable(const Axis& axis, double v) {
  return std::isfinite(v) && (axis.scale == Scale::linear || v > 0);
}

// About one labelled tick per 50 px, at least 4 and at most 10.
int target_ticks(double length_px) { return std::clamp(static_cast<int>(length_px / 50), 4, 10); }

// The smallest step that cuts `span` into at most `intervals` parts: one of the
// axis's own steps, else a nice one, 1, 2 or 5 x 10^k (Heckbert's nice numbers).
double step_for(const Axis& axis, double span, double intervals) {
  for (double s : axis.steps)
    if (s > 0 && span / s <= intervals * (1 + 1e-9)) return s;
  const double decade = std::pow(10.0, std::floor(std::log10(span / intervals)));
  for (double m : {1.0, 2.0, 5.0, 10.0})
    if (span / (m * decade) <= intervals * (1 + 1e-9)) return m * decade;
  return 10 * decade;
}

// A range is widened to whole steps for about the target number of ticks; its
// ticks may then be up to two more (widening adds at most a step at each end),
// so the step the widening chose always fits.
double widening_step(const Axis& axis, double span, double length_px) {
  return step_for(axis, span, target_ticks(length_px));
}
double tick_step(const Axis& axis, double span, double length_px) {
  return step_for(axis, span, target_ticks(length_px) + 2);
}

std::string micro_sign(std::string text) {
  const auto u = text.find('u');
  return u == std::string::npos ? text : text.replace(u, 1, "\xC2\xB5");
}

std::string label(const Axis& axis, double v, double step) {
  if (axis.si_labels) return micro_sign(format_si(v, 3));
  if (axis.scale == Scale::log) return fmt::format("{:g}", v);
  const int decimals = std::max(0, -static_cast<int>(std::floor(std::log10(step) + 1e-9)));
  std::string text = fmt::format("{:.{}f}", v, decimals);
  return text.find_first_not_of("-0.") == std::string::npos ? "0" : text;
}

Range widen_linear(const Axis& axis, double low, double high, double length_px) {
  if (low == high) {
    const double d = low != 0 ? std::abs(low) * 0.1 : 1.0;
    low -= d;
    high += d;
  }
  if (axis.tight) return {low, high};
  const double step = widening_step(axis, high - low, length_px);
  return {std::floor(low / step + 1e-9) * step, std::ceil(high / step - 1e-9) * step};
}

Range widen_log(const Axis& axis, double low, double high) {
  if (low == high) {
    low /= std::sqrt(10.0);
    high *= std::sqrt(10.0);
  }
  if (axis.tight) return {low, high};
  return {std::pow(10.0, std::floor(std::log10(low) + 1e-9)),
          std::pow(10.0, std::ceil(std::log10(high) - 1e-9))};
}

std::vector<Tick> linear_ticks(const Axis& axis, Range range, double length_px) {
  const double step = tick_step(axis, range.high - range.low, length_px);
  std::vector<Tick> out;
  const double first = std::ceil(range.low / step - 1e-9);
  for (double k = first; k * step <= range.high + step * 1e-9; ++k) {
    const double v = std::abs(k) < 0.5 ? 0.0 : k * step;
    out.push_back({v, label(axis, v, step)});
  }
  return out;
}

std::vector<Tick> log_ticks(const Axis& axis, Range range, double length_px) {
  const double decades = std::log10(range.high / range.low);
  const double per_decade = length_px / std::max(decades, 1e-9);
  const bool minor = per_decade / 9 >= kMinMinorSpacing;
  const bool label_2_5 = decades <= 2 + 1e-9 && per_decade / 3 >= kMinTickSpacing;
  const int every = std::max(1, static_cast<int>(std::ceil(kMinTickSpacing / per_decade)));
  std::vector<Tick> out;
  const int d0 = static_cast<int>(std::floor(std::log10(range.low))) - 1;
  const int d1 = static_cast<int>(std::ceil(std::log10(range.high)));
  for (int d = d0; d <= d1; ++d) {
    for (int m = 1; m <= 9; ++m) {
      const double v = m * std::pow(10.0, d);
      if (v < range.low * (1 - 1e-9) || v > range.high * (1 + 1e-9)) continue;
      const bool labelled = (m == 1 && (d % every + every) % every == 0) || (label_2_5 && (m == 2 || m == 5));
      if (labelled || minor) out.push_back({v, labelled ? label(axis, v, v) : std::string()});
    }
  }
  const auto named = std::count_if(out.begin(), out.end(), [](const Tick& t) { return !t.label.empty(); });
  if (named < 2) {  // under a decade with no 1, 2 or 5 inside: label the ends
    out.insert(out.begin(), {range.low, label(axis, range.low, range.low)});
    out.push_back({range.high, label(axis, range.high, range.high)});
  }
  return out;
}

}  // namespace

std::string Axis::caption() const { return unit.empty() ? title : title + " [" + unit + "]"; }

Range axis_range(const Axis& axis, const std::vector<double>& data, double length_px) {
  double low = INFINITY, high = -INFINITY;
  for (double v : data) {
    if (!usable(axis, v)) continue;
    low = std::min(low, v);
    high = std::max(high, v);
  }
  const bool log = axis.scale == Scale::log;
  if (axis.min && usable(axis, *axis.min)) low = *axis.min;
  if (axis.max && usable(axis, *axis.max)) high = *axis.max;
  if (!(low <= high)) {  // no usable data
    if (std::isfinite(low)) high = log ? low * 10 : low + 1;
    else if (std::isfinite(high)) low = log ? high / 10 : high - 1;
    else return log ? Range{1, 10} : Range{0, 1};
  }
  Range range = log ? widen_log(axis, low, high) : widen_linear(axis, low, high, length_px);
  if (axis.min && usable(axis, *axis.min)) range.low = *axis.min;
  if (axis.max && usable(axis, *axis.max)) range.high = *axis.max;
  if (!(range.low < range.high)) range = log ? Range{range.low, range.low * 10} : Range{range.low, range.low + 1};
  return range;
}

std::vector<Tick> ticks(const Axis& axis, Range range, double length_px) {
  return axis.scale == Scale::log ? log_ticks(axis, range, length_px)
                                  : linear_ticks(axis, range, length_px);
}

LineStyle line_style(std::size_t k) {
  // Okabe and Ito (2008), in an order that alternates dark and light.
  static constexpr std::array<const char*, 7> kColours{"#0072B2", "#D55E00", "#009E73", "#CC79A7",
                                                       "#E69F00", "#56B4E9", "#000000"};
  static constexpr std::array<const char*, 7> kDashes{"", "7 3", "2 2.5", "9 3 2 3", "4 4",
                                                      "1.5 4", "12 3 2 3 2 3"};
  const std::size_t n = kColours.size();
  return {kColours[k % n], kDashes[(k + k / n) % n]};
}

}  // namespace tacet::plot
