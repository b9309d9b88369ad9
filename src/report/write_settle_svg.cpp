// The step response as a picture: the responses, the settling band about the
// first probe's final value, and each settling time marked.

#include <fmt/format.h>

#include <cmath>

#include "tacet/common/format.hpp"
#include "tacet/report/write_settle.hpp"

namespace tacet {
namespace {

std::string si(double value, const std::string& unit) {
  std::string text = format_si(value, 4);
  const auto u = text.find('u');
  if (u != std::string::npos) text.replace(u, 1, "\u00B5");
  return text + unit;
}

std::string response_unit(const SettleResult& r) {
  std::string unit = r.traces.empty() ? "V" : r.traces[0].unit;
  for (const auto& t : r.traces)
    if (unit != t.unit) return "V or A";
  return unit;
}

// A band of 0.01 % is a hair's breadth on the response's own scale: the second
// panel shows |v / final - 1| on a log axis, the band as a line across it.
plot::Panel deviation_panel(const SettleResult& r, std::vector<plot::VerticalLine> markers) {
  plot::Panel panel;
  panel.y = plot::Axis{"|v / final - 1|", "", plot::Scale::log};
  for (const auto& t : r.traces) {
    if (!t.overshoot) continue;  // final 0: no deviation relative to it
    std::vector<double> deviation;
    for (const double v : t.values) deviation.push_back(std::abs(v / t.final - 1));
    panel.traces.emplace_back(t.probe, r.times, std::move(deviation));
  }
  if (!r.traces.empty())
    panel.horizontals.push_back({r.traces[0].band, fmt::format("band {:.4g} %", 100 * r.traces[0].band)});
  panel.verticals = std::move(markers);
  return panel;
}

}  // namespace

plot::Figure settle_figure(const SettleResult& r, const ReportContext& context) {
  std::vector<plot::Trace> traces;
  std::vector<plot::VerticalLine> markers;
  for (const auto& t : r.traces) {
    traces.emplace_back(t.probe, r.times, t.values);
    if (t.settling_time && *t.settling_time > 0 && *t.settling_time <= r.to)
      markers.push_back({*t.settling_time, fmt::format("{} settled at {}", t.probe,
                                                       si(*t.settling_time, "s"))});
  }
  std::optional<plot::YBand> band;
  if (!r.traces.empty() && r.traces[0].overshoot) {
    const SettleTrace& t = r.traces[0];
    const double half = std::abs(t.final) * t.band;
    band = plot::YBand{t.final - half, t.final + half,
                       fmt::format("{} final {} \u00B1{:.4g} %", t.probe, si(t.final, t.unit),
                                   100 * t.band)};
  }
  plot::Figure figure = plot::time_response(
      context.title.empty() ? "Step response" : context.title,
      plot::Axis{"response", response_unit(r)}, std::move(traces), std::move(band),
      std::move(markers));
  figure.subtitle = fmt::format("{}: response to a 1 {} step of {}", context.file, r.input_unit,
                                r.input);
  figure.panels.push_back(deviation_panel(r, figure.panels.front().verticals));
  figure.id = "settle";
  return figure;
}

std::string settle_svg(const SettleResult& r, const ReportContext& context) {
  return plot::document(settle_figure(r, context));
}

}  // namespace tacet
