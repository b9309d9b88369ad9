// The AC sweep as a picture: magnitude and phase panels, one trace per probe.

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "tacet/common/format.hpp"
#include "tacet/report/write_svg.hpp"

namespace tacet {
namespace {

std::string magnitude_unit(const AcResult& result) {
  const auto is_current = [](const AcTrace& t) { return t.probe.kind == ProbeKind::current; };
  const bool currents = std::any_of(result.traces.begin(), result.traces.end(), is_current);
  const bool voltages = !std::all_of(result.traces.begin(), result.traces.end(), is_current);
  if (currents && voltages) return "dB re 1 V or 1 A";
  return currents ? "dB re 1 A" : "dB re 1 V";
}

std::string sweep_subtitle(const AcResult& result, const ReportContext& context) {
  const auto& f = result.frequencies;
  if (f.empty()) return context.file;
  return fmt::format("{}: {} point{} from {}Hz to {}Hz", context.file, f.size(),
                     f.size() == 1 ? "" : "s", format_si(f.front()), format_si(f.back()));
}

}  // namespace

std::vector<double> unwrap_degrees(const std::vector<double>& degrees) {
  std::vector<double> out(degrees);
  double previous = NAN;
  for (double& d : out) {
    if (!std::isfinite(d)) continue;
    if (std::isfinite(previous)) d -= 360 * std::round((d - previous) / 360);
    previous = d;
  }
  return out;
}

plot::Figure ac_figure(const AcResult& result, const ReportContext& context) {
  plot::Figure figure =
      plot::over_frequency(context.title.empty() ? "AC response" : context.title, sweep_subtitle(result, context), "ac");
  plot::Panel magnitude, phase;
  magnitude.y = plot::Axis{"magnitude", magnitude_unit(result)};
  magnitude.y.si_labels = false;
  phase.y = plot::Axis{"phase", "deg"};
  phase.y.si_labels = false;
  phase.y.steps = {15, 30, 45, 90, 180, 360};
  for (const AcTrace& trace : result.traces) {
    std::vector<double> db, deg;
    db.reserve(trace.values.size());
    deg.reserve(trace.values.size());
    for (const auto& z : trace.values) {
      db.push_back(to_db(z));
      deg.push_back(z == 0.0 ? NAN : to_degrees(z));  // a zero response has no phase
    }
    magnitude.traces.push_back({trace.probe.text, result.frequencies, std::move(db)});
    phase.traces.push_back({trace.probe.text, result.frequencies, unwrap_degrees(deg)});
  }
  figure.panels.push_back(std::move(magnitude));
  figure.panels.push_back(std::move(phase));
  return figure;
}

std::string ac_svg(const AcResult& result, const ReportContext& context) {
  return plot::document(ac_figure(result, context));
}

}  // namespace tacet
